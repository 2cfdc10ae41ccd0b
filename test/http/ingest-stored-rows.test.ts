/**
 * What an upload stores, row by row, along each of the write paths: a first upload (nothing
 * stored yet, so no lookups), a later upload that finds stored rows to compare, updates of every
 * kind, and uploads long enough to span many batches. On SQLite these rows go through prepared
 * statements, on PostgreSQL through kysely; both must store the same thing.
 */
import { describe, expect, it } from 'vitest';
import type { TestApp } from '../support/app.js';
import { TEST_DIALECTS } from '../support/database.js';
import { CSV, CUSTOMER_HEADER, csvText, onlyRowError, problemOf, receiptOf, seedCustomers, startApp, upload } from '../support/upload-client.js';

const CONTACT_HEADER = 'customer_id,contacted_at,converted,revenue';

/** A clock the test moves by hand, so that created_at and updated_at can be told apart. */
function movableClock(start: string): { now: () => Date; set(iso: string): void } {
  let current = new Date(start);
  return { now: () => current, set: (iso) => (current = new Date(iso)) };
}

function contactsOf(testApp: TestApp, campaignId: string) {
  return testApp.database.handle.db
    .selectFrom('campaign_contacts')
    .select(['customer_id', 'contacted_at', 'converted', 'revenue_cents', 'age_at_contact', 'last_ingest_id'])
    .where('campaign_id', '=', campaignId)
    .orderBy('customer_id')
    .execute()
    .then((rows) => rows.map((row) => ({ ...row, converted: Number(row.converted), revenue_cents: Number(row.revenue_cents) })));
}

/** `count` customers K0001… with birth dates spread over the 1970s and 1980s. */
function manyCustomers(count: number): string {
  const lines = [];
  for (let index = 1; index <= count; index++) {
    const year = 1970 + (index % 20);
    const month = String((index % 12) + 1).padStart(2, '0');
    lines.push(`K${String(index).padStart(4, '0')},${year}-${month}-15,${index % 2 === 0 ? 'Northvale' : 'Eastmoor'},web,individual`);
  }
  return csvText(CUSTOMER_HEADER, ...lines);
}

describe.each(TEST_DIALECTS)('stored rows on %s', (dialect) => {
  it('an updated customer keeps its creation time and takes the changed fields, the update time and the upload that changed it', async () => {
    const clock = movableClock('2026-06-15T12:00:00Z');
    const testApp = await startApp(dialect, {}, clock.now);
    receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, 'C1,1985-04-12,Northvale,web,individual')));
    clock.set('2026-06-16T08:30:00Z');
    const second = receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, 'C1,1986-05-13,Eastmoor,store,company')));
    expect(second).toMatchObject({ inserted: 0, updated: 1, unchanged: 0 });
    const stored = await testApp.database.handle.db.selectFrom('customers').selectAll().executeTakeFirstOrThrow();
    expect(stored).toEqual({
      customer_id: 'C1',
      birth_date: '1986-05-13',
      region: 'Eastmoor',
      channel: 'store',
      customer_type: 'company',
      created_at: '2026-06-15T12:00:00.000Z',
      updated_at: '2026-06-16T08:30:00.000Z',
      last_ingest_id: second.ingest_id,
    });
  });

  it('an attribute-only change replaces the changed attribute, keeps the others and names the upload that changed the customer', async () => {
    const testApp = await startApp(dialect);
    receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText(`${CUSTOMER_HEADER},loyalty_tier,store_area`, 'C1,1985-04-12,Northvale,web,individual,gold,north')));
    const second = receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText(`${CUSTOMER_HEADER},loyalty_tier`, 'C1,1985-04-12,Northvale,web,individual,platinum')));
    expect(second).toMatchObject({ inserted: 0, updated: 1, unchanged: 0 });
    const db = testApp.database.handle.db;
    expect(await db.selectFrom('customer_attributes').select(['name', 'value']).where('customer_id', '=', 'C1').orderBy('name').execute()).toEqual([
      { name: 'loyalty_tier', value: 'platinum' },
      { name: 'store_area', value: 'north' },
    ]);
    expect(await db.selectFrom('customers').select('last_ingest_id').executeTakeFirstOrThrow()).toEqual({ last_ingest_id: second.ingest_id });
  });

  it('an updated contact takes the new values and the age at its new contact date', async () => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app); // C1 born 1985-04-12
    receiptOf(await upload(testApp.app, '/v1/campaigns/spring-mailing/contacts', CSV, csvText(CONTACT_HEADER, 'C1,2026-04-11,0,')));
    expect((await contactsOf(testApp, 'spring-mailing'))[0]?.age_at_contact).toBe(40); // the day before the 41st birthday
    const second = receiptOf(await upload(testApp.app, '/v1/campaigns/spring-mailing/contacts', CSV, csvText(CONTACT_HEADER, 'C1,2026-04-12,1,25.10')));
    expect(second).toMatchObject({ inserted: 0, updated: 1, unchanged: 0 });
    expect(await contactsOf(testApp, 'spring-mailing')).toEqual([
      { customer_id: 'C1', contacted_at: '2026-04-12', converted: 1, revenue_cents: 2510, age_at_contact: 41, last_ingest_id: second.ingest_id },
    ]);
  });

  it('stores the same contacts in a new campaign as in a campaign that already had some, with exact counts in both', async () => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    const body = csvText(CONTACT_HEADER, 'C1,2026-03-02,1,40.00', 'C2,2026-03-02,0,', 'C3,2026-03-02,0,0');
    // "fresh" has no contacts before the upload; "running" already holds C1 as it is and C2 with other values.
    receiptOf(await upload(testApp.app, '/v1/campaigns/running/contacts', CSV, csvText(CONTACT_HEADER, 'C1,2026-03-02,1,40.00', 'C2,2026-03-01,0,')));
    const fresh = receiptOf(await upload(testApp.app, '/v1/campaigns/fresh/contacts', CSV, body));
    const running = receiptOf(await upload(testApp.app, '/v1/campaigns/running/contacts', CSV, body));
    expect(fresh).toMatchObject({ rows: 3, inserted: 3, updated: 0, unchanged: 0, rejected: 0 });
    expect(running).toMatchObject({ rows: 3, inserted: 1, updated: 1, unchanged: 1, rejected: 0 });
    const withoutUpload = (rows: Awaited<ReturnType<typeof contactsOf>>) => rows.map(({ last_ingest_id: _ingest, ...row }) => row);
    expect(withoutUpload(await contactsOf(testApp, 'running'))).toEqual(withoutUpload(await contactsOf(testApp, 'fresh')));
  });

  it('counts every row exactly when an upload spans many batches of new, unchanged, changed and refused rows', async () => {
    const testApp = await startApp(dialect);
    receiptOf(await upload(testApp.app, '/v1/customers', CSV, manyCustomers(2500)));
    // Rows 1–1000 were stored before; of them every tenth changes. Rows 1001–2500 are new, and
    // every 250th row names a customer nobody uploaded.
    receiptOf(
      await upload(testApp.app, '/v1/campaigns/autumn/contacts', CSV, csvText(CONTACT_HEADER, ...Array.from({ length: 1000 }, (_, index) => `K${String(index + 1).padStart(4, '0')},2026-05-01,0,`))),
    );
    const lines: string[] = [];
    for (let index = 1; index <= 2500; index++) {
      const customer = index % 250 === 0 ? `X${index}` : `K${String(index).padStart(4, '0')}`;
      lines.push(index <= 1000 && index % 10 === 0 ? `${customer},2026-05-01,1,9.99` : `${customer},2026-05-01,0,`);
    }
    const receipt = receiptOf(await upload(testApp.app, '/v1/campaigns/autumn/contacts', CSV, csvText(CONTACT_HEADER, ...lines), { query: 'on_error=skip' }));
    // Refused: rows 250, 500, …, 2500 (10 rows; 4 of them within the first 1000, all multiples of 10).
    expect(receipt).toMatchObject({ rows: 2500, rejected: 10, inserted: 1500 - 6, updated: 100 - 4, unchanged: 900 });
    const refused = await testApp.database.handle.db
      .selectFrom('rejected_rows')
      .select(['row_number', 'customer_id'])
      .where('ingest_id', '=', receipt.ingest_id)
      .orderBy('row_number')
      .execute();
    expect(refused.map((row) => Number(row.row_number))).toEqual([250, 500, 750, 1000, 1250, 1500, 1750, 2000, 2250, 2500]);
    expect(refused.map((row) => row.customer_id)).toEqual([250, 500, 750, 1000, 1250, 1500, 1750, 2000, 2250, 2500].map((index) => `X${index}`));
    const stored = await contactsOf(testApp, 'autumn');
    expect(stored).toHaveLength(2500 - 6);
    expect(stored.filter((row) => row.converted === 1)).toHaveLength(96);
  });

  it('refuses a key repeated hundreds of rows after its first occurrence, naming the line it first came on', async () => {
    const testApp = await startApp(dialect);
    const body = manyCustomers(1200).replace(/\n$/, '\nK0003,1980-01-15,Eastmoor,web,individual\n');
    expect(onlyRowError(await upload(testApp.app, '/v1/customers', CSV, body))).toEqual({
      row: 1201,
      line: 1202,
      column: 'customer_id',
      value: 'K0003',
      reason: 'customer_id K0003 appears twice in this upload (first on line 4)',
    });
  });

  it('does not count the keys of a rejected upload as seen by the next upload', async () => {
    const testApp = await startApp(dialect);
    problemOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, 'C1,1985-04-12,Northvale,web,individual', 'C2,1985-13-01,Eastmoor,web,individual')), 422);
    const next = receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, 'C1,1985-04-12,Northvale,web,individual')));
    expect(next).toMatchObject({ rows: 1, inserted: 1, rejected: 0 });
  });

  it('does not count the keys of a stored upload as repeated within the next upload', async () => {
    const testApp = await startApp(dialect);
    receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, 'C1,1985-04-12,Northvale,web,individual')));
    const next = receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, 'C1,1985-04-12,Northvale,web,individual', 'C2,1972-11-30,Eastmoor,store,company')));
    expect(next).toMatchObject({ rows: 2, inserted: 1, unchanged: 1, rejected: 0 });
  });

  it('stores the holdout flag in any of its spellings, counts holdout rows in the receipt and updates the flag on re-upload', async () => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    const header = `${CONTACT_HEADER},holdout`;
    const first = receiptOf(await upload(testApp.app, '/v1/campaigns/kept-out/contacts', CSV, csvText(header, 'C1,2026-03-02,1,40.00,yes', 'C2,2026-03-02,0,,', 'C3,2026-03-02,0,,TRUE')));
    expect(first).toMatchObject({ rows: 3, inserted: 3, holdout_rows: 2 });
    const flags = async () =>
      (await testApp.database.handle.db.selectFrom('campaign_contacts').select(['customer_id', 'holdout']).where('campaign_id', '=', 'kept-out').orderBy('customer_id').execute()).map(
        (row) => [row.customer_id, Number(row.holdout)],
      );
    expect(await flags()).toEqual([['C1', 1], ['C2', 0], ['C3', 1]]);
    // Only the flag changes for C1; a file without the column means every row was contacted.
    const second = receiptOf(await upload(testApp.app, '/v1/campaigns/kept-out/contacts', CSV, csvText(CONTACT_HEADER, 'C1,2026-03-02,1,40.00', 'C2,2026-03-02,0,')));
    expect(second).toMatchObject({ rows: 2, inserted: 0, updated: 1, unchanged: 1, holdout_rows: 0 });
    expect(await flags()).toEqual([['C1', 0], ['C2', 0], ['C3', 1]]);
    expect(onlyRowError(await upload(testApp.app, '/v1/campaigns/kept-out/contacts', CSV, csvText(header, 'C2,2026-03-02,0,,maybe')))).toMatchObject({ row: 1, column: 'holdout', value: 'maybe' });
  });
});
