/**
 * Serialises erasure with uploads, so that nothing of an erased customer is stored after the
 * erasure answers, and customer changes with uploads of contacts, so that a contact is never
 * stored with a customer's old region while the customer's change moves the others (and the
 * contact value counts follow every move). On SQLite every write transaction already runs on the one writer connection,
 * one after another. On PostgreSQL each upload transaction takes a shared advisory lock and an
 * erasure the exclusive one: uploads still run side by side, an erasure waits for the uploads in
 * flight to commit (and then removes what they stored) and uploads that start later wait for it.
 * The lock is named after the schema, so services on other schemas of one database are not held.
 */
import { sql, type Transaction } from 'kysely';
import type { Database } from './tables.js';

/**
 * Uploads of contacts and sales share the lock; a customers upload (it may move contacts between
 * cells), an erasure and a rebuild of the contact value counts hold it alone.
 */
export type WriteLockMode = 'upload' | 'customers' | 'erasure' | 'rebuild';

/**
 * Takes the lock for the rest of the transaction `trx` (released at commit or rollback).
 * Does nothing on SQLite (`sqlite` true), whose single writer already serialises.
 */
export async function takeWriteLock(trx: Transaction<Database>, sqlite: boolean, mode: WriteLockMode): Promise<void> {
  if (sqlite) return;
  const key = sql`hashtext(${'segrank customer writes '} || current_schema())`;
  if (mode === 'upload') await sql`select pg_advisory_xact_lock_shared(${key})`.execute(trx);
  else await sql`select pg_advisory_xact_lock(${key})`.execute(trx);
}

/**
 * On PostgreSQL, makes the writes of concurrent uploads to `contact_value_counts` take turns,
 * from the first write of an upload's transaction to its commit (on SQLite the single writer
 * already does). An upload writes its changes to the counts once, at its end, in one fixed key
 * order, which alone would keep two uploads from deadlocking; but an upload whose pending changes
 * grow past their limit writes them early too, and its later keys may then precede keys it
 * already holds. Taking this lock first makes a deadlock between uploads impossible whatever
 * their keys; it is held only for the upload's last writes unless the upload wrote early.
 */
export async function takeCellCountsLock(trx: Transaction<Database>, sqlite: boolean): Promise<void> {
  if (sqlite) return;
  await sql`select pg_advisory_xact_lock(hashtext(${'segrank contact value counts '} || current_schema()))`.execute(trx);
}
