/**
 * Regression: migrating a PostgreSQL schema failed with `schema "…" does not exist` when another
 * schema on the same server was dropped while the migrator looked for its own tables (kysely's
 * introspection reads every schema). Parallel test suites, or several tenants on one server, do that.
 */
import pg from 'pg';
import { afterAll, describe, expect, test } from 'vitest';
import { openDatabase } from '../../src/db/connect.js';
import { migrateToLatest } from '../../src/db/migrate.js';
import { TEST_DIALECTS, dropTestDatabase, testDatabaseSettings } from '../support/database.js';

const runs = TEST_DIALECTS.includes('postgres') ? describe : describe.skip;

runs('migrations on a PostgreSQL server where other schemas come and go', () => {
  const made: Array<ReturnType<typeof testDatabaseSettings>> = [];
  afterAll(async () => {
    for (const settings of made) await dropTestDatabase(settings);
  });

  test('every migration succeeds while another client creates and drops schemas without pause', async () => {
    const first = testDatabaseSettings('postgres');
    if (first.dialect !== 'postgres') throw new Error('expected PostgreSQL settings');
    const churner = new pg.Client({ connectionString: first.connectionString });
    await churner.connect();
    let churning = true;
    const churn = (async () => {
      for (let index = 0; churning; index++) {
        const name = `churn_${process.pid}_${index}`;
        await churner.query(`create schema "${name}"; create table "${name}".t (a int)`);
        await churner.query(`drop schema "${name}" cascade`);
      }
    })();
    try {
      for (let round = 0; round < 4; round++) {
        const settings = round === 0 ? first : testDatabaseSettings('postgres');
        made.push(settings);
        const handle = await openDatabase(settings);
        try {
          const applied = await migrateToLatest(handle.db, settings);
          expect(applied.length).toBeGreaterThan(0);
        } finally {
          await handle.close();
        }
      }
    } finally {
      churning = false;
      await churn;
      await churner.end();
    }
  }, 60_000);
});
