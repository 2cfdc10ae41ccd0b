import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { acquireLock, lastRunAt, releaseLock, renewLock } from '../../src/schedule/lock.js';
import { TEST_DIALECTS, createTestDatabase, type TestDatabase } from '../support/database.js';

const MINUTE = 60_000;
const T0 = new Date('2026-06-15T06:00:00.000Z');
const later = (minutes: number) => new Date(T0.getTime() + minutes * MINUTE);

describe.each(TEST_DIALECTS)('the job lock row (%s)', (dialect) => {
  let database: TestDatabase;
  beforeAll(async () => {
    database = await createTestDatabase(dialect);
  });
  afterAll(async () => {
    await database.destroy();
  });

  test('a job that never ran has no last run', async () => {
    expect(await lastRunAt(database.handle.db, 'fresh-job')).toBeNull();
  });

  test('only one holder gets a free lock; a second is refused while it is held', async () => {
    const db = database.handle.db;
    expect(await acquireLock(db, 'job-a', 'first', T0, 30 * MINUTE)).toBe(true);
    expect(await acquireLock(db, 'job-a', 'second', later(5), 30 * MINUTE)).toBe(false);
    expect(await acquireLock(db, 'job-a', 'first', later(5), 30 * MINUTE)).toBe(false);
  });

  test('concurrent attempts on a free lock let exactly one through', async () => {
    const attempts = await Promise.all(Array.from({ length: 8 }, (_unused, index) => acquireLock(database.handle.db, 'job-race', `holder-${index}`, T0, 30 * MINUTE)));
    expect(attempts.filter(Boolean)).toHaveLength(1);
  });

  test('an expired lock can be taken over, and the old holder can then neither renew nor release it', async () => {
    const db = database.handle.db;
    expect(await acquireLock(db, 'job-b', 'crashed', T0, 30 * MINUTE)).toBe(true);
    expect(await acquireLock(db, 'job-b', 'successor', later(31), 30 * MINUTE)).toBe(true);
    expect(await renewLock(db, 'job-b', 'crashed', later(32), 30 * MINUTE)).toBe(false);
    await releaseLock(db, 'job-b', 'crashed', later(33).toISOString());
    expect(await lastRunAt(db, 'job-b')).toBeNull();
    expect(await acquireLock(db, 'job-b', 'third', later(40), 30 * MINUTE)).toBe(false);
  });

  test('renewing pushes the expiry forward so a long run keeps its lock', async () => {
    const db = database.handle.db;
    expect(await acquireLock(db, 'job-c', 'worker', T0, 30 * MINUTE)).toBe(true);
    expect(await renewLock(db, 'job-c', 'worker', later(25), 30 * MINUTE)).toBe(true);
    expect(await acquireLock(db, 'job-c', 'other', later(40), 30 * MINUTE)).toBe(false);
  });

  test('releasing frees the lock and records the last run', async () => {
    const db = database.handle.db;
    expect(await acquireLock(db, 'job-d', 'worker', T0, 30 * MINUTE)).toBe(true);
    await releaseLock(db, 'job-d', 'worker', T0.toISOString());
    expect(await lastRunAt(db, 'job-d')).toBe(T0.toISOString());
    expect(await acquireLock(db, 'job-d', 'next', later(1), 30 * MINUTE)).toBe(true);
  });
});
