/**
 * Key verification with the stored rows of active keys kept in memory for a short while, so a
 * BI tool polling many times a second costs one hash per request instead of a database read.
 * Keys are revoked from the command line, another process, so a revocation reaches a running
 * service within `validityMs` (the SHARED_STATE_CACHE_MS setting); 0 reads the row every time.
 * Only active rows are kept: an unknown id or a wrong secret always goes to the database, so a
 * key created a moment ago works at once and a guess is never answered from memory.
 */
import type { Kysely } from 'kysely';
import { LRUCache } from 'lru-cache';
import type { Database } from '../db/tables.js';
import { readStoredKey, roleGranted, splitKey, type Role, type StoredKey } from './keys.js';

/** Distinct active keys kept at once; the least recently used go first. */
const KEPT_KEYS = 10_000;

export class KeyVerifier {
  private readonly active: LRUCache<string, StoredKey> | null;

  constructor(
    private readonly db: Kysely<Database>,
    validityMs: number,
  ) {
    this.active = validityMs > 0 ? new LRUCache({ max: KEPT_KEYS, ttl: validityMs, ttlAutopurge: false, updateAgeOnGet: false }) : null;
  }

  /** The role of a presented key, or null when it is malformed, unknown, revoked or wrong. */
  async verify(presented: string): Promise<{ keyId: string; role: Role } | null> {
    const parts = splitKey(presented);
    if (!parts) return null;
    const kept = this.active?.get(parts.keyId);
    if (kept !== undefined) {
      const granted = roleGranted(parts.keyId, kept, parts.secret);
      if (granted) return granted;
    }
    const stored = await readStoredKey(this.db, parts.keyId);
    const granted = roleGranted(parts.keyId, stored, parts.secret);
    if (granted && stored) this.active?.set(parts.keyId, stored);
    return granted;
  }

  /** Forgets every kept row, so the next request of each key reads the database. */
  forgetAll(): void {
    this.active?.clear();
  }
}
