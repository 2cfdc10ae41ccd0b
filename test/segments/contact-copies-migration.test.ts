/**
 * Migration 0004 copies each customer's region, channel and type onto the contacts already
 * stored, and a campaign report over those rows then counts every contact in its customer's
 * cell, as it would for contacts uploaded afterwards.
 */
import { sql } from 'kysely';
import { afterEach, describe, expect, it } from 'vitest';
import { openDatabase, type DatabaseHandle } from '../../src/db/connect.js';
import { migrateTo, migrateToLatest } from '../../src/db/migrate.js';
import { shiftsAndCellAggregates } from '../../src/segments/index.js';
import { TEST_DIALECTS, dropTestDatabase, testDatabaseSettings } from '../support/database.js';

const NOW = '2026-06-01T00:00:00.000Z';

describe.each(TEST_DIALECTS)('migration 0004 on stored contacts (%s)', (dialect) => {
  let cleanUp: (() => Promise<void>) | undefined;
  afterEach(async () => {
    await cleanUp?.();
    cleanUp = undefined;
  });

  it('fills the copied columns from the customers and keeps every contact in its cell', async () => {
    const settings = testDatabaseSettings(dialect);
    const handle: DatabaseHandle = await openDatabase(settings);
    cleanUp = async () => {
      await handle.close();
      await dropTestDatabase(settings);
    };
    await migrateTo(handle.db, settings, '0003_api_keys');
    // Rows as the schema before 0004 held them, written in SQL since the table types describe the schema after it.
    const customers = [
      ['m1', 'Saltmere', 'web shop', 'individual'],
      ['m2', 'Saltmere', 'catalogue', 'company'],
      ['m3', 'Fennwick', 'web shop', 'individual'],
    ];
    for (const [id, region, channel, type] of customers) {
      await sql`insert into customers (customer_id, birth_date, region, channel, customer_type, created_at, updated_at) values (${id}, ${'1980-01-01'}, ${region}, ${channel}, ${type}, ${NOW}, ${NOW})`.execute(handle.db);
    }
    await sql`insert into campaigns (campaign_id, created_at) values (${'spring'}, ${NOW})`.execute(handle.db);
    for (const [id] of customers) {
      await sql`insert into campaign_contacts (campaign_id, customer_id, contacted_at, converted, revenue_cents, age_at_contact) values (${'spring'}, ${id}, ${'2026-03-01'}, ${1}, ${1500}, ${46})`.execute(handle.db);
    }

    expect(await migrateToLatest(handle.db, settings)).toContain('0004_contact_dimensions');
    const copies = await handle.db.selectFrom('campaign_contacts').select(['customer_id', 'region', 'channel', 'customer_type']).orderBy('customer_id').execute();
    expect(copies).toEqual([
      { customer_id: 'm1', region: 'Saltmere', channel: 'web shop', customer_type: 'individual' },
      { customer_id: 'm2', region: 'Saltmere', channel: 'catalogue', customer_type: 'company' },
      { customer_id: 'm3', region: 'Fennwick', channel: 'web shop', customer_type: 'individual' },
    ]);
    const { cells } = await shiftsAndCellAggregates(handle.db, {
      source: { kind: 'campaigns', campaignIds: ['spring'] },
      dimensions: ['region', 'channel'],
      ageEdges: [18, 65],
      valueBasis: 'per_unit',
    });
    expect(cells.map((cell) => [...cell.labels, cell.n])).toEqual([
      ['Fennwick', 'web shop', 1],
      ['Saltmere', 'catalogue', 1],
      ['Saltmere', 'web shop', 1],
    ]);

    // And back: the copies and the report index go, the contacts stay.
    // Later migrations are undone first, newest first; 0004 is the last one undone.
    const undone = await migrateTo(handle.db, settings, '0003_api_keys');
    expect(undone.at(-1)).toBe('0004_contact_dimensions');
    expect(undone).toEqual([...undone].sort().reverse());
    await expect(sql`select region from campaign_contacts`.execute(handle.db)).rejects.toThrow(/region/);
    expect(Number((await sql<{ n: unknown }>`select count(*) as n from campaign_contacts`.execute(handle.db)).rows[0]?.n)).toBe(3);
  });
});
