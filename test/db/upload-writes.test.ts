/**
 * The upload's write path on both engines: rows written by the repository's batch inserts come
 * back exactly as given (nulls, money at and past the per-row cap, text that an array literal
 * must escape), look-ups by key find them, and the PostgreSQL pool size is read from
 * DATABASE_POOL_SIZE and reaches the pool.
 */
import { afterEach, describe, expect, it } from 'vitest';
import { ConfigError, DEFAULT_DATABASE_POOL_SIZE, loadConfig } from '../../src/config.js';
import { openDatabase } from '../../src/db/connect.js';
import type { CampaignContactsTable, CustomersTable } from '../../src/db/tables.js';
import * as repository from '../../src/ingest/repository.js';
import { sqliteConnectionOf } from '../../src/db/connect.js';
import { sql } from 'kysely';
import { createTestDatabase, TEST_DIALECTS, testDatabaseSettings, dropTestDatabase, type TestDatabase } from '../support/database.js';

// Text an array literal or a CSV would have to escape, and text outside the BMP.
const AWKWARD_TEXTS = ['NULL', 'a,b', '{x}', 'say "hi"', 'back\\slash', ' padded ', 'Zürich', '東京', '🦊 fox', 'e\u0301', '', 'tab\there', 'two\nlines', 'carriage\rreturn', '\\N', 'ends in backslash\\'];

describe.each(TEST_DIALECTS)('upload writes on %s', (dialect) => {
  let database: TestDatabase | undefined;
  afterEach(async () => {
    await database?.destroy();
    database = undefined;
  });

  it('store nulls, large money and awkward text exactly, and find them by key', async () => {
    database = await createTestDatabase(dialect);
    const { db } = database.handle;
    const now = '2026-03-01T00:00:00.000Z';
    const customers: CustomersTable[] = AWKWARD_TEXTS.map((text, index) => ({
      customer_id: `C${index}-${text}`,
      birth_date: index % 2 === 0 ? null : '1980-02-29',
      region: text,
      channel: `channel ${text}`,
      customer_type: index % 3 === 0 ? 'company' : 'individual',
      created_at: now,
      updated_at: now,
      last_ingest_id: index % 2 === 0 ? null : 'ingest-1',
    }));
    // The per-row cap (fields.ts: one trillion in major units) and the largest exact JavaScript integer.
    const moneys = [0, 1, 100_000_000_000_000, Number.MAX_SAFE_INTEGER];
    const contacts: CampaignContactsTable[] = customers.map((customer, index) => ({
      campaign_id: 'spring',
      customer_id: customer.customer_id,
      contacted_at: '2026-03-02',
      converted: index % 2,
      revenue_cents: moneys[index % moneys.length] as number,
      holdout: index % 5 === 0 ? 1 : 0,
      age_at_contact: customer.birth_date === null ? null : 46,
      region: customer.region,
      channel: customer.channel,
      customer_type: customer.customer_type,
      last_ingest_id: customer.last_ingest_id,
    }));
    await db.transaction().execute(async (trx) => {
      const store: repository.UploadStore = { trx, sqlite: sqliteConnectionOf(db) };
      await repository.insertCustomers(store, customers);
      await repository.ensureCampaign(trx, 'spring', now);
      await repository.insertContacts(store, contacts);
      const ids = customers.map((customer) => customer.customer_id);
      const found = await repository.findContactCustomers(store, [...ids, 'nobody']);
      expect(found.size).toBe(customers.length);
      for (const customer of customers) {
        expect(found.get(customer.customer_id)).toEqual({ birth_date: customer.birth_date, region: customer.region, channel: customer.channel, customer_type: customer.customer_type });
      }
      const stored = await repository.findContacts(store, 'spring', [...ids, 'nobody']);
      expect(stored.size).toBe(contacts.length);
      for (const contact of contacts) {
        const row = stored.get(contact.customer_id);
        expect({ ...row, revenue_cents: Number(row?.revenue_cents), converted: Number(row?.converted), holdout: Number(row?.holdout) }).toEqual(contact);
      }
    });
    // The exact sum of the stored cents, read as text so that no engine's number type rounds it.
    const { rows } = await sql<{ total: string }>`select cast(sum(revenue_cents) as text) as total from campaign_contacts`.execute(db);
    const expected = contacts.reduce((sum, contact) => sum + BigInt(contact.revenue_cents), 0n);
    expect(rows[0]?.total).toBe(expected.toString());
  });

  it('store more rows than one array insert holds', async () => {
    database = await createTestDatabase(dialect);
    const { db } = database.handle;
    const now = '2026-03-01T00:00:00.000Z';
    // Past one PostgreSQL array insert (5,000 rows) and one array look-up (5,000 keys).
    const customers: CustomersTable[] = Array.from({ length: 12_345 }, (_, index) => ({
      customer_id: `C${index}`,
      birth_date: null,
      region: `R${index % 7}`,
      channel: 'web shop',
      customer_type: 'individual',
      created_at: now,
      updated_at: now,
      last_ingest_id: null,
    }));
    await db.transaction().execute(async (trx) => {
      const store: repository.UploadStore = { trx, sqlite: sqliteConnectionOf(db) };
      await repository.insertCustomers(store, customers);
      const found = await repository.findBirthDates(store, customers.map((customer) => customer.customer_id));
      expect(found.size).toBe(customers.length);
    });
    const count = await db.selectFrom('customers').select((eb) => eb.fn.countAll<number>().as('n')).executeTakeFirstOrThrow();
    expect(Number(count.n)).toBe(customers.length);
  });
});

describe('DATABASE_POOL_SIZE', () => {
  it('defaults to ten connections and reads the variable for PostgreSQL', () => {
    const url = 'postgres://segrank@db.example:5432/segrank';
    expect(DEFAULT_DATABASE_POOL_SIZE).toBe(10);
    expect(loadConfig({ DATABASE_URL: url }).database).toMatchObject({ dialect: 'postgres', poolSize: 10 });
    expect(loadConfig({ DATABASE_URL: url, DATABASE_POOL_SIZE: '32' }).database).toMatchObject({ dialect: 'postgres', poolSize: 32 });
  });

  it.each(['0', 'ten', '-3', '1001'])('refuses DATABASE_POOL_SIZE=%s by name', (value) => {
    expect(() => loadConfig({ DATABASE_URL: 'postgres://segrank@db.example/segrank', DATABASE_POOL_SIZE: value })).toThrow(ConfigError);
    expect(() => loadConfig({ DATABASE_URL: 'postgres://segrank@db.example/segrank', DATABASE_POOL_SIZE: value })).toThrow(/DATABASE_POOL_SIZE/);
  });

  it.runIf(TEST_DIALECTS.includes('postgres'))('opens at most that many PostgreSQL connections', async () => {
    const settings = testDatabaseSettings('postgres');
    if (settings.dialect !== 'postgres') throw new Error('expected PostgreSQL settings');
    const handle = await openDatabase({ ...settings, poolSize: 2 });
    try {
      // Six queries at once, each holding its connection a while: only two backends serve them.
      const pids = await Promise.all(
        Array.from({ length: 6 }, async () => (await sql<{ pid: number }>`select pg_backend_pid() as pid, pg_sleep(0.05)`.execute(handle.db)).rows[0]?.pid),
      );
      expect(new Set(pids).size).toBe(2);
    } finally {
      await handle.close();
      await dropTestDatabase(settings);
    }
  });
});
