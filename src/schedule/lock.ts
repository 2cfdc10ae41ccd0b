/**
 * A lock row per scheduled job, shared by every instance that uses the same database. It is
 * taken by one conditional UPDATE (free, or expired), which both engines run atomically: on
 * PostgreSQL a second instance's UPDATE waits for the first to commit and then re-checks the
 * condition, so exactly one of them sees its row changed. The expiry frees the lock of an
 * instance that died while holding it.
 */
import type { Executor } from '../db/executor.js';

async function ensureJobRow(db: Executor, jobName: string): Promise<void> {
  await db
    .insertInto('scheduled_jobs')
    .values({ job_name: jobName, last_run_at: null, lock_holder: null, lock_expires_at: null })
    .onConflict((conflict) => conflict.column('job_name').doNothing())
    .execute();
}

/**
 * Takes the job's lock for `holder` until `now + ttlMs`, if no one holds it or the holder's
 * time has run out. Returns whether this call got the lock.
 * @example
 * if (await acquireLock(db, 'weekly-refresh', 'instance-1', new Date(), 30 * 60_000)) { … }
 */
export async function acquireLock(db: Executor, jobName: string, holder: string, now: Date, ttlMs: number): Promise<boolean> {
  await ensureJobRow(db, jobName);
  const result = await db
    .updateTable('scheduled_jobs')
    .set({ lock_holder: holder, lock_expires_at: new Date(now.getTime() + ttlMs).toISOString() })
    .where('job_name', '=', jobName)
    .where((eb) => eb.or([eb('lock_holder', 'is', null), eb('lock_expires_at', '<', now.toISOString())]))
    .executeTakeFirst();
  return Number(result.numUpdatedRows) === 1;
}

/** Extends a held lock; false when `holder` no longer holds it (it expired and was taken). */
export async function renewLock(db: Executor, jobName: string, holder: string, now: Date, ttlMs: number): Promise<boolean> {
  const result = await db
    .updateTable('scheduled_jobs')
    .set({ lock_expires_at: new Date(now.getTime() + ttlMs).toISOString() })
    .where('job_name', '=', jobName)
    .where('lock_holder', '=', holder)
    .executeTakeFirst();
  return Number(result.numUpdatedRows) === 1;
}

/** Frees the lock if `holder` still holds it, recording `lastRunAt` when given. */
export async function releaseLock(db: Executor, jobName: string, holder: string, lastRunAt: string | null): Promise<void> {
  await db
    .updateTable('scheduled_jobs')
    .set({ lock_holder: null, lock_expires_at: null, ...(lastRunAt === null ? {} : { last_run_at: lastRunAt }) })
    .where('job_name', '=', jobName)
    .where('lock_holder', '=', holder)
    .execute();
}

/** When the job last completed, or null if it never has. */
export async function lastRunAt(db: Executor, jobName: string): Promise<string | null> {
  const row = await db.selectFrom('scheduled_jobs').select('last_run_at').where('job_name', '=', jobName).executeTakeFirst();
  return row?.last_run_at ?? null;
}
