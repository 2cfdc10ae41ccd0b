/**
 * The contact value counts beyond single uploads: migration 0009 builds them for contacts stored
 * before it; `checkCells` finds a corrupted row and `rebuildCells` (and `segrank aggregates`)
 * repair it; two uploads to one campaign at once on PostgreSQL leave them exact.
 */
import { sql } from 'kysely';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { runAggregatesCommand } from '../../src/aggregates/command.js';
import { checkCells, rebuildCells, recomputeCells } from '../../src/aggregates/check.js';
import { loadConfig } from '../../src/config.js';
import { openDatabase } from '../../src/db/connect.js';
import { migrateTo, migrateToLatest } from '../../src/db/migrate.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { TEST_DIALECTS, dropTestDatabase, testDatabaseSettings } from '../support/database.js';
import { CSV, toCsv, upload } from '../support/upload-client.js';

const NOW = '2026-06-01T00:00:00.000Z';

describe.each(TEST_DIALECTS)('migration 0009 on stored contacts (%s)', (dialect) => {
  let cleanUp: (() => Promise<void>) | undefined;
  afterEach(async () => {
    await cleanUp?.();
    cleanUp = undefined;
  });

  it('counts the contacts stored before it, an unknown age as -1', async () => {
    const settings = testDatabaseSettings(dialect);
    const handle = await openDatabase(settings);
    cleanUp = async () => {
      await handle.close();
      await dropTestDatabase(settings);
    };
    await migrateTo(handle.db, settings, '0008_contact_holdout');
    // Rows as the schema before 0009 held them, written in SQL.
    const customers = [['K1', '1980-01-01'], ['K2', null], ['K3', '1990-06-30'], ['K4', null]] as const;
    for (const [id, birthDate] of customers) {
      await sql`insert into customers (customer_id, birth_date, region, channel, customer_type, created_at, updated_at)
        values (${id}, ${birthDate}, ${'Fennwick'}, ${'web'}, ${'individual'}, ${NOW}, ${NOW})`.execute(handle.db);
    }
    for (const campaign of ['spring', 'autumn']) await sql`insert into campaigns (campaign_id, created_at) values (${campaign}, ${NOW})`.execute(handle.db);
    const contacts = [
      ['spring', 'K1', 46, 0, 0, 0],
      ['spring', 'K2', null, 0, 0, 0],
      ['spring', 'K4', null, 0, 0, 0],
      ['spring', 'K3', 35, 1, 1250, 1],
      ['autumn', 'K1', 46, 1, 1250, 0],
      ['autumn', 'K3', 46, 1, 1250, 0],
    ] as const;
    for (const [campaign, customer, age, converted, revenue, holdout] of contacts) {
      await sql`insert into campaign_contacts (campaign_id, customer_id, contacted_at, converted, revenue_cents, age_at_contact, region, channel, customer_type, holdout)
        values (${campaign}, ${customer}, ${'2026-03-01'}, ${converted}, ${revenue}, ${age}, ${'Fennwick'}, ${'web'}, ${'individual'}, ${holdout})`.execute(handle.db);
    }

    expect(await migrateToLatest(handle.db, settings)).toContain('0009_contact_value_counts');
    const stored = await handle.db.selectFrom('contact_value_counts').selectAll().execute();
    const units = (campaign: string, age: number, converted: number) =>
      stored.filter((row) => row.campaign_id === campaign && Number(row.age) === age && Number(row.converted) === converted).map((row) => Number(row.units));
    // Written out by hand from the rows above: K2 and K4 share the unknown age.
    expect(stored).toHaveLength(4);
    expect(units('spring', -1, 0)).toEqual([2]);
    expect(units('spring', 46, 0)).toEqual([1]);
    expect(units('spring', 35, 1)).toEqual([1]);
    expect(units('autumn', 46, 1)).toEqual([2]);
    expect((await checkCells(handle.db)).differenceCount).toBe(0);
    expect((await recomputeCells(handle.db)).map((cell) => cell.units).sort()).toEqual([1, 1, 2, 2]);

    // Down drops the table; up builds it again.
    await migrateTo(handle.db, settings, '0008_contact_holdout');
    await expect(handle.db.selectFrom('contact_value_counts').selectAll().execute()).rejects.toThrow();
  });
});

describe.each(TEST_DIALECTS)('check and rebuild (%s)', (dialect) => {
  let testApp: TestApp | undefined;
  afterEach(async () => {
    vi.restoreAllMocks();
    await testApp?.close();
    testApp = undefined;
  });

  it('check finds a corrupted, a missing and an extra row; rebuild repairs them; the command does the same', async () => {
    testApp = await createTestApp(dialect, { maxEventLoopDelayMs: 0 });
    const { app, database } = testApp;
    const db = database.handle.db;
    const customers = Array.from({ length: 12 }, (_, index) => ({
      customer_id: `P${index}`,
      birth_date: index % 4 === 0 ? '' : `19${60 + index}-02-0${(index % 9) + 1}`,
      region: index % 2 === 0 ? 'Fennwick' : 'Saltmere',
      channel: 'web',
      customer_type: 'individual',
    }));
    expect((await upload(app, '/v1/customers', CSV, toCsv(customers))).statusCode).toBe(201);
    const contacts = customers.map((customer, index) => ({ customer_id: customer.customer_id, contacted_at: '2026-03-01', converted: index % 3 === 0 ? 1 : 0, revenue: index % 3 === 0 ? '20' : '0' }));
    expect((await upload(app, '/v1/campaigns/check-mailer/contacts', CSV, toCsv(contacts))).statusCode).toBe(201);
    expect(await checkCells(db)).toMatchObject({ differenceCount: 0, differences: [] });

    const [first, second] = await db.selectFrom('contact_value_counts').selectAll().orderBy('age').orderBy('region').limit(2).execute();
    if (first === undefined || second === undefined) throw new Error('expected stored counts');
    const keyOf = ({ units: _units, ...key }: typeof first) => key;
    const firstKey = keyOf(first);
    await db.updateTable('contact_value_counts').set({ units: Number(first.units) + 5 }).where((eb) => eb.and(firstKey)).execute();
    await db.deleteFrom('contact_value_counts').where((eb) => eb.and(keyOf(second))).execute();
    const extra = { ...firstKey, campaign_id: 'no-such-campaign', units: 3 };
    await db.insertInto('contact_value_counts').values(extra).execute();

    const check = await checkCells(db, 2);
    expect(check.differenceCount).toBe(3);
    expect(check.differences).toHaveLength(2);
    const all = await checkCells(db);
    const normalised = all.differences.map((difference) => ({ ...difference, key: { ...difference.key } }));
    expect(normalised).toEqual(
      expect.arrayContaining([
        { key: expect.objectContaining({ campaign_id: 'check-mailer', age: Number(first.age), region: first.region }), storedUnits: Number(first.units) + 5, expectedUnits: Number(first.units) },
        { key: expect.objectContaining({ campaign_id: 'check-mailer', age: Number(second.age), region: second.region }), storedUnits: 0, expectedUnits: Number(second.units) },
        { key: expect.objectContaining({ campaign_id: 'no-such-campaign' }), storedUnits: 3, expectedUnits: 0 },
      ]),
    );

    const printed: string[] = [];
    vi.spyOn(console, 'log').mockImplementation((line: string) => printed.push(line));
    const config = { ...loadConfig({}), database: database.settings, logLevel: 'silent' as const };
    expect(await runAggregatesCommand(['check'], config)).toBe(1);
    expect(printed[0]).toMatch(/^contact value counts differ from the contacts in 3 cells/);
    expect(printed.filter((line) => line.startsWith('  '))).toHaveLength(3);
    expect(printed.some((line) => line.includes('no-such-campaign') && line.endsWith('stored 3, contacts 0'))).toBe(true);

    printed.length = 0;
    expect(await runAggregatesCommand(['rebuild'], config)).toBe(0);
    const expectedRows = (await recomputeCells(db)).length;
    expect(printed).toEqual([`contact value counts rebuilt from the contacts: ${expectedRows} rows written`]);
    expect(await checkCells(db)).toMatchObject({ differenceCount: 0, storedRows: expectedRows });

    printed.length = 0;
    expect(await runAggregatesCommand(['check'], config)).toBe(0);
    expect(printed).toEqual([`contact value counts exact: ${expectedRows} rows match the contacts`]);

    // The library function alone, after another corruption.
    await db.updateTable('contact_value_counts').set({ units: 99 }).where((eb) => eb.and(firstKey)).execute();
    expect((await checkCells(db)).differenceCount).toBe(1);
    expect(await rebuildCells(db)).toBe(expectedRows);
    expect((await checkCells(db)).differenceCount).toBe(0);

    const errors: string[] = [];
    vi.spyOn(console, 'error').mockImplementation((line: string) => errors.push(line));
    expect(await runAggregatesCommand(['repair'], config)).toBe(64);
    expect(errors).toEqual(['usage: segrank aggregates check | rebuild']);
  });
});

describe.runIf(TEST_DIALECTS.includes('postgres'))('two uploads to one campaign at once (postgres)', () => {
  const apps: TestApp[] = [];
  afterEach(async () => {
    for (const app of apps.splice(0)) await app.close();
  });

  it('leave the counts exact, whichever commits first', { timeout: 120_000 }, async () => {
    const first = await createTestApp('postgres', { maxEventLoopDelayMs: 0 });
    apps.push(first);
    // A second app with its own pool on the same schema, as a second service instance would be.
    const secondHandle = await openDatabase(first.database.settings);
    const { buildApp } = await import('../../src/app.js');
    const pino = (await import('pino')).default;
    const second = await buildApp({ config: first.config, database: secondHandle, logger: pino({ level: 'silent' }), now: () => new Date('2026-06-15T12:00:00Z') });
    await second.ready();

    try {
      const customerCount = 6_000;
      const customers = Array.from({ length: customerCount }, (_, index) => ({
        customer_id: `Q${index}`,
        birth_date: index % 7 === 0 ? '' : `19${50 + (index % 50)}-0${(index % 9) + 1}-15`,
        region: ['Fennwick', 'Saltmere', 'Eastmoor'][index % 3] as string,
        channel: ['web', 'store'][index % 2] as string,
        customer_type: index % 5 === 0 ? 'company' : 'individual',
      }));
      expect((await upload(first.app, '/v1/customers', CSV, toCsv(customers))).statusCode).toBe(201);
      // Both uploads hold several batches and share most cells; each also updates rows the other did not write.
      const contacts = (from: number, to: number, revenue: string) =>
        toCsv(
          customers.slice(from, to).map((customer, index) => ({
            customer_id: customer.customer_id,
            contacted_at: '2026-03-01',
            converted: index % 4 === 0 ? 1 : 0,
            revenue: index % 4 === 0 ? revenue : '0',
            holdout: index % 10 === 0 ? 1 : 0,
          })),
        );
      expect((await upload(first.app, '/v1/campaigns/busy/contacts', CSV, contacts(0, 1_000, '15'))).statusCode).toBe(201);
      const [one, two] = await Promise.all([
        upload(first.app, '/v1/campaigns/busy/contacts', CSV, contacts(0, 3_000, '20')),
        upload(second, '/v1/campaigns/busy/contacts', CSV, contacts(3_000, 6_000, '20')),
      ]);
      expect([one.statusCode, two.statusCode], `${one.body}\n${two.body}`).toEqual([201, 201]);
      const check = await checkCells(first.database.handle.db);
      expect(check.differences).toEqual([]);
      const total = await first.database.handle.db.selectFrom('contact_value_counts').select((eb) => eb.fn.sum<number>('units').as('units')).executeTakeFirstOrThrow();
      expect(Number(total.units)).toBe(customerCount);
    } finally {
      await second.close();
      await secondHandle.close();
    }
  });
});
