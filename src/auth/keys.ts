/**
 * API keys with roles. A key reads `sgr_<key id>_<secret>`: the id finds the stored row, the
 * secret is checked against its SHA-256 in constant time. A fast hash is enough here because
 * secrets are 256 random bits, not passwords a person chose; nothing stored can be replayed.
 */
import { createHash, randomBytes, timingSafeEqual } from 'node:crypto';
import type { Kysely } from 'kysely';
import type { ApiKeysTable, Database } from '../db/tables.js';

export const ROLES = ['ingest', 'read', 'admin'] as const;
export type Role = (typeof ROLES)[number];

const KEY_PATTERN = /^sgr_([0-9a-f]{16})_([A-Za-z0-9_-]{43})$/;

export interface IssuedKey {
  keyId: string;
  /** The whole key, to hand to the client; never stored. */
  key: string;
  role: Role;
  name: string;
}

function sha256(text: string): string {
  return createHash('sha256').update(text).digest('hex');
}

export function isRole(value: string): value is Role {
  return (ROLES as readonly string[]).includes(value);
}

export async function createKey(db: Kysely<Database>, role: Role, name: string, now: Date = new Date()): Promise<IssuedKey> {
  const keyId = randomBytes(8).toString('hex');
  const secret = randomBytes(32).toString('base64url');
  await db
    .insertInto('api_keys')
    .values({ key_id: keyId, name, role, secret_sha256: sha256(secret), created_at: now.toISOString(), revoked_at: null })
    .execute();
  return { keyId, key: `sgr_${keyId}_${secret}`, role, name };
}

export async function listKeys(db: Kysely<Database>): Promise<Array<Omit<ApiKeysTable, 'secret_sha256'>>> {
  return db.selectFrom('api_keys').select(['key_id', 'name', 'role', 'created_at', 'revoked_at']).orderBy('created_at').execute();
}

export async function countActiveKeys(db: Kysely<Database>): Promise<number> {
  const row = await db.selectFrom('api_keys').select((eb) => eb.fn.countAll<number>().as('count')).where('revoked_at', 'is', null).executeTakeFirstOrThrow();
  return Number(row.count);
}

/** The key id of a whole key (`sgr_<id>_<secret>`), or the text itself when it is not one. */
export function keyIdOf(keyIdOrKey: string): string {
  return KEY_PATTERN.exec(keyIdOrKey)?.[1] ?? keyIdOrKey;
}

/** Revokes by key id (or the whole key); returns false when no active key matched. */
export async function revokeKey(db: Kysely<Database>, keyIdOrKey: string, now: Date = new Date()): Promise<boolean> {
  const keyId = keyIdOf(keyIdOrKey);
  const result = await db.updateTable('api_keys').set({ revoked_at: now.toISOString() }).where('key_id', '=', keyId).where('revoked_at', 'is', null).executeTakeFirst();
  return Number(result.numUpdatedRows) > 0;
}

/** A key's stored row as verification needs it. */
export interface StoredKey {
  role: string;
  secret_sha256: string;
  revoked_at: string | null;
}

/** The stored row of a key id, or undefined when there is none. */
export async function readStoredKey(db: Kysely<Database>, keyId: string): Promise<StoredKey | undefined> {
  return db.selectFrom('api_keys').select(['role', 'secret_sha256', 'revoked_at']).where('key_id', '=', keyId).executeTakeFirst();
}

/** The key id and secret of a well-formed key, or null. */
export function splitKey(presented: string): { keyId: string; secret: string } | null {
  const match = KEY_PATTERN.exec(presented);
  return match ? { keyId: match[1] as string, secret: match[2] as string } : null;
}

/** The role the stored row grants to this secret, or null when it is unknown, revoked or the secret is wrong. */
export function roleGranted(keyId: string, stored: StoredKey | undefined, secret: string): { keyId: string; role: Role } | null {
  const expected = Buffer.from(stored?.secret_sha256 ?? '0'.repeat(64), 'hex');
  const actual = Buffer.from(sha256(secret), 'hex');
  // Compare even when the id is unknown, so timing does not tell which ids exist.
  const secretMatches = timingSafeEqual(expected, actual);
  if (!stored || !secretMatches || stored.revoked_at !== null || !isRole(stored.role)) return null;
  return { keyId, role: stored.role };
}

/** The role of a presented key, or null when it is malformed, unknown, revoked or wrong. */
export async function verifyKey(db: Kysely<Database>, presented: string): Promise<{ keyId: string; role: Role } | null> {
  const parts = splitKey(presented);
  if (!parts) return null;
  return roleGranted(parts.keyId, await readStoredKey(db, parts.keyId), parts.secret);
}
