/**
 * Erasing one customer on request: every row about them goes, in one transaction, serialised
 * with uploads (`takeWriteLock`) so that an upload in flight cannot store a row about them
 * after the erasure has answered.
 */
import type { Kysely } from 'kysely';
import { sqliteConnectionOf } from '../db/connect.js';
import type { Database } from '../db/tables.js';
import { takeWriteLock } from '../db/write-lock.js';
import { readIdentifier } from './fields.js';
import * as repository from './repository.js';

/**
 * Erases the customer and every row about them; false when there was no such customer. An id
 * the upload checks would refuse (control characters, over 200 characters) names no customer,
 * and PostgreSQL could not even compare one holding a NUL, so the database is not asked.
 */
export async function eraseCustomer(db: Kysely<Database>, customerId: string): Promise<boolean> {
  if (!readIdentifier(customerId).ok) return false;
  return db.transaction().execute(async (trx) => {
    await takeWriteLock(trx, sqliteConnectionOf(db) !== null, 'erasure');
    return repository.eraseCustomer(trx, customerId);
  });
}
