/**
 * Migration 0011: on PostgreSQL the contact keys compare by bytes and campaign_contacts has no
 * foreign keys (the upload's look-ups under the write lock keep it consistent); SQLite keeps its
 * schema. Stored rows survive the migration both ways, and their order by key is unchanged.
 */
import { sql } from 'kysely';
import { afterEach, describe, expect, it } from 'vitest';
import { openDatabase } from '../../src/db/connect.js';
import { migrateTo, migrateToLatest } from '../../src/db/migrate.js';
import { TEST_DIALECTS, dropTestDatabase, testDatabaseSettings } from '../support/database.js';

const NOW = '2026-06-01T00:00:00.000Z';
// Upper before lower case, digits before letters, a non-ASCII id last: byte order.
const CUSTOMER_IDS = ['C-10', 'C-9', 'c-1', 'Ä-1', 'B-2'];

describe.each(TEST_DIALECTS)('migration 0011 (%s)', (dialect) => {
  let cleanUp: (() => Promise<void>) | undefined;
  afterEach(async () => {
    await cleanUp?.();
    cleanUp = undefined;
  });

  it('drops the contact foreign keys and orders the keys by bytes on PostgreSQL only, keeping stored rows', async () => {
    const settings = testDatabaseSettings(dialect);
    const handle = await openDatabase(settings);
    cleanUp = async () => {
      await handle.close();
      await dropTestDatabase(settings);
    };
    await migrateTo(handle.db, settings, '0010_drop_contact_cell_index');
    await sql`insert into campaigns (campaign_id, created_at) values (${'spring'}, ${NOW})`.execute(handle.db);
    for (const id of CUSTOMER_IDS) {
      await sql`insert into customers (customer_id, birth_date, region, channel, customer_type, created_at, updated_at)
        values (${id}, ${null}, ${'north'}, ${'web'}, ${'individual'}, ${NOW}, ${NOW})`.execute(handle.db);
      await sql`insert into campaign_contacts (campaign_id, customer_id, contacted_at, converted, revenue_cents, region, channel, customer_type)
        values (${'spring'}, ${id}, ${'2026-05-01'}, ${0}, ${0}, ${'north'}, ${'web'}, ${'individual'})`.execute(handle.db);
    }

    expect(await migrateToLatest(handle.db, settings)).toEqual(['0011_postgres_contact_keys']);
    const ordered = await handle.db.selectFrom('campaign_contacts').select('customer_id').orderBy('customer_id').execute();
    expect(ordered.map((row) => row.customer_id)).toEqual([...CUSTOMER_IDS].sort((a, b) => Buffer.compare(Buffer.from(a), Buffer.from(b))));

    const orphan = sql`insert into campaign_contacts (campaign_id, customer_id, contacted_at, converted, revenue_cents, region, channel, customer_type)
      values (${'autumn'}, ${'nobody'}, ${'2026-05-01'}, ${0}, ${0}, ${'north'}, ${'web'}, ${'individual'})`;
    if (dialect === 'sqlite') {
      await expect(orphan.execute(handle.db)).rejects.toThrow(/FOREIGN KEY/);
      return;
    }
    const { rows: collations } = await sql<{ table_name: string; column_name: string; collation_name: string | null }>`
      select table_name, column_name, collation_name from information_schema.columns
      where table_schema = current_schema() and table_name in ('customers', 'campaigns', 'campaign_contacts', 'contact_value_counts')
        and column_name in ('customer_id', 'campaign_id', 'region', 'channel', 'customer_type')
      order by table_name, column_name`.execute(handle.db);
    const byteOrdered = collations.filter((row) => row.collation_name === 'C').map((row) => `${row.table_name}.${row.column_name}`);
    expect(byteOrdered).toEqual([
      'campaign_contacts.campaign_id',
      'campaign_contacts.customer_id',
      'campaigns.campaign_id',
      'contact_value_counts.campaign_id',
      'contact_value_counts.channel',
      'contact_value_counts.customer_type',
      'contact_value_counts.region',
      'customers.customer_id',
    ]);
    await orphan.execute(handle.db);
    await handle.db.deleteFrom('campaign_contacts').where('campaign_id', '=', 'autumn').execute();

    // Down restores the foreign keys (with their cascade) and the locale order.
    await migrateTo(handle.db, settings, '0010_drop_contact_cell_index');
    await expect(orphan.execute(handle.db)).rejects.toThrow(/foreign key/);
    await handle.db.deleteFrom('customers').where('customer_id', '=', 'B-2').execute();
    expect(await handle.db.selectFrom('campaign_contacts').select('customer_id').where('customer_id', '=', 'B-2').execute()).toEqual([]);
    const { rows: restored } = await sql<{ collation_name: string | null }>`
      select collation_name from information_schema.columns where table_schema = current_schema() and table_name = 'campaign_contacts' and column_name = 'customer_id'`.execute(handle.db);
    expect(restored).toEqual([{ collation_name: null }]);
  });
});
