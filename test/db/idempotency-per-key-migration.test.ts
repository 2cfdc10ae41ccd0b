/**
 * Migration 0006 scopes Idempotency-Keys to the API key that sent them. Uploads stored before
 * it keep their receipts and rejected rows (SQLite rebuilds both tables), and their keys are
 * never replayed to anyone, since who sent them was not recorded.
 */
import { sql } from 'kysely';
import { afterEach, describe, expect, it } from 'vitest';
import { openDatabase } from '../../src/db/connect.js';
import { migrateTo, migrateToLatest } from '../../src/db/migrate.js';
import { TEST_DIALECTS, dropTestDatabase, testDatabaseSettings } from '../support/database.js';

const NOW = '2026-06-01T00:00:00.000Z';

describe.each(TEST_DIALECTS)('migration 0006 on stored uploads (%s)', (dialect) => {
  let cleanUp: (() => Promise<void>) | undefined;
  afterEach(async () => {
    await cleanUp?.();
    cleanUp = undefined;
  });

  it('keeps every receipt and rejected row, scopes the old keys to no one, and lets two API keys share a value', async () => {
    const settings = testDatabaseSettings(dialect);
    const handle = await openDatabase(settings);
    cleanUp = async () => {
      await handle.close();
      await dropTestDatabase(settings);
    };
    await migrateTo(handle.db, settings, '0004_contact_dimensions');
    // Rows as the schema before 0006 held them, written in SQL since the table types describe the schema after it.
    for (const [id, key] of [['00000000-0000-4000-8000-000000000001', 'weekly-1'], ['00000000-0000-4000-8000-000000000002', null]] as const) {
      await sql`insert into ingests (ingest_id, kind, campaign_id, on_error, content_type, rows_received, inserted, updated, unchanged, rejected, sha256, idempotency_key, received_at, duration_ms)
        values (${id}, ${'customers'}, ${null}, ${'skip'}, ${'text/csv'}, ${3}, ${2}, ${0}, ${0}, ${1}, ${'ab'.repeat(32)}, ${key}, ${NOW}, ${12})`.execute(handle.db);
      await sql`insert into rejected_rows (ingest_id, ordinal, row_number, line, customer_id, column_name, value, reason)
        values (${id}, ${1}, ${3}, ${4}, ${'C9'}, ${'customer_type'}, ${'nobody'}, ${'is not a customer type'})`.execute(handle.db);
    }

    expect(await migrateToLatest(handle.db, settings)).toContain('0006_idempotency_per_key');
    const ingests = await handle.db.selectFrom('ingests').select(['ingest_id', 'idempotency_key', 'idempotency_scope', 'rejected']).orderBy('ingest_id').execute();
    expect(ingests.map((row) => ({ ...row, rejected: Number(row.rejected) }))).toEqual([
      { ingest_id: '00000000-0000-4000-8000-000000000001', idempotency_key: 'weekly-1', idempotency_scope: 'unscoped', rejected: 1 },
      { ingest_id: '00000000-0000-4000-8000-000000000002', idempotency_key: null, idempotency_scope: null, rejected: 1 },
    ]);
    expect(await handle.db.selectFrom('rejected_rows').select(['ingest_id', 'reason']).orderBy('ingest_id').execute()).toHaveLength(2);

    // The same value under two scopes is two uploads; twice under one scope is refused.
    const row = (id: string, scope: string) => ({
      ingest_id: id, kind: 'customers' as const, campaign_id: null, on_error: 'reject' as const, content_type: 'text/csv', rows_received: 1, inserted: 1, updated: 0,
      unchanged: 0, rejected: 0, holdout_rows: 0, sha256: 'cd'.repeat(32), idempotency_key: 'weekly-1', idempotency_scope: scope, received_at: NOW, duration_ms: 1,
      extra_attributes: '[]', warnings: '[]',
    });
    await handle.db.insertInto('ingests').values(row('00000000-0000-4000-8000-000000000003', '0123456789abcdef')).execute();
    await handle.db.insertInto('ingests').values(row('00000000-0000-4000-8000-000000000004', 'fedcba9876543210')).execute();
    await expect(handle.db.insertInto('ingests').values(row('00000000-0000-4000-8000-000000000005', '0123456789abcdef')).execute()).rejects.toThrow();

    // Rejected rows still belong to their upload: erasing the upload takes them along.
    await handle.db.deleteFrom('ingests').where('ingest_id', '=', '00000000-0000-4000-8000-000000000001').execute();
    expect(await handle.db.selectFrom('rejected_rows').select('ingest_id').execute()).toEqual([{ ingest_id: '00000000-0000-4000-8000-000000000002' }]);
    await expect(
      sql`insert into rejected_rows (ingest_id, ordinal, row_number, line, reason) values (${'00000000-0000-4000-8000-00000000ffff'}, ${1}, ${1}, ${2}, ${'x'})`.execute(handle.db),
    ).rejects.toThrow();
  });
});
