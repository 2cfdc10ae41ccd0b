/**
 * Erasing one customer on request: every row about them goes, in one transaction, serialised
 * with uploads (`takeWriteLock`) so that an upload in flight cannot store a row about them
 * after the erasure has answered.
 */
import type { Kysely } from 'kysely';
import type { Executor } from '../db/executor.js';
import { sqliteConnectionOf } from '../db/connect.js';
import type { Database } from '../db/tables.js';
import { takeWriteLock } from '../db/write-lock.js';
import { readIdentifier } from './fields.js';
import * as repository from './repository.js';

/** What stored reports may hold about an erased customer: their labels per dimension and their campaigns. */
export interface ErasedCustomer {
  labels: Record<string, string>;
  campaignIds: string[];
}

/**
 * Removes from stored snapshots what they hold about the erased customer, inside the erasure's
 * transaction (src/report/snapshot/redaction.ts); returns how many snapshots it rewrote.
 */
export type SnapshotRedaction = (trx: Executor, customer: ErasedCustomer) => Promise<number>;

/**
 * Erases the customer and every row about them, and redacts the stored snapshots that may
 * describe them, all in one transaction; false when there was no such customer. An id the
 * upload checks would refuse (control characters, over 200 characters) names no customer,
 * and PostgreSQL could not even compare one holding a NUL, so the database is not asked.
 */
export async function eraseCustomer(db: Kysely<Database>, customerId: string, redactSnapshots?: SnapshotRedaction): Promise<{ erased: boolean; snapshotsRedacted: number }> {
  if (!readIdentifier(customerId).ok) return { erased: false, snapshotsRedacted: 0 };
  return db.transaction().execute(async (trx) => {
    await takeWriteLock(trx, sqliteConnectionOf(db) !== null, 'erasure');
    const customer = await repository.customerLabels(trx, customerId);
    if (customer === undefined) return { erased: false, snapshotsRedacted: 0 };
    const erased = await repository.eraseCustomer(trx, customerId);
    const snapshotsRedacted = redactSnapshots === undefined ? 0 : await redactSnapshots(trx, customer);
    return { erased, snapshotsRedacted };
  });
}
