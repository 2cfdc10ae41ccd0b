/**
 * After an upload that grew a table by a tenth or more, PostgreSQL's statistics of it are fresh
 * (so a refresh right after plans for the rows it will read); a small upload onto a large table
 * leaves them to autovacuum.
 */
import { sql } from 'kysely';
import { afterEach, describe, expect, it } from 'vitest';
import { refreshStatisticsAfterUpload } from '../../src/db/pg-statistics.js';
import { createTestDatabase, type TestDatabase } from '../support/database.js';

const NOW = '2026-06-01T00:00:00.000Z';
const hasPostgres = process.env['DATABASE_URL']?.startsWith('postgres') === true;
if (!hasPostgres) console.warn('pg-statistics.test.ts: DATABASE_URL names no PostgreSQL server; skipped');

describe.skipIf(!hasPostgres)('statistics after an upload (postgres)', () => {
  let database: TestDatabase | undefined;
  afterEach(async () => {
    await database?.destroy();
    database = undefined;
  });

  it('analyses the tables an upload grew by a tenth, and not those it barely grew', async () => {
    database = await createTestDatabase('postgres');
    const db = database.handle.db;
    const estimatedCustomers = async () =>
      Number((await sql<{ n: number }>`select reltuples as n from pg_class where relnamespace = current_schema()::regnamespace and relname = 'customers'`.execute(db)).rows[0]?.n);
    const insertCustomers = (from: number, count: number) =>
      sql`insert into customers (customer_id, region, channel, customer_type, created_at, updated_at)
        select 'C' || g, 'north', 'web', 'individual', ${NOW}, ${NOW} from generate_series(cast(${from} as integer), cast(${from + count - 1} as integer)) g`.execute(db);

    expect(await estimatedCustomers()).toBe(-1);
    await insertCustomers(1, 1000);
    await refreshStatisticsAfterUpload(db, false, 'customers', 1000);
    expect(await estimatedCustomers()).toBe(1000);

    await insertCustomers(1001, 50);
    await refreshStatisticsAfterUpload(db, false, 'customers', 50);
    expect(await estimatedCustomers()).toBe(1000);

    await insertCustomers(1051, 200);
    await refreshStatisticsAfterUpload(db, false, 'customers', 200);
    expect(await estimatedCustomers()).toBe(1250);
  });
});
