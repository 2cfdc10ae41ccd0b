/**
 * Serialises erasure with uploads, so that nothing of an erased customer is stored after the
 * erasure answers. On SQLite every write transaction already runs on the one writer connection,
 * one after another. On PostgreSQL each upload transaction takes a shared advisory lock and an
 * erasure the exclusive one: uploads still run side by side, an erasure waits for the uploads in
 * flight to commit (and then removes what they stored) and uploads that start later wait for it.
 * The lock is named after the schema, so services on other schemas of one database are not held.
 */
import { sql, type Transaction } from 'kysely';
import type { Database } from './tables.js';

export type WriteLockMode = 'upload' | 'erasure';

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
