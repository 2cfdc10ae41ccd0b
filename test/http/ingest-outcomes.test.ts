/**
 * What an upload leaves behind: nothing at all when it is rejected, the good rows and a list of
 * the bad ones in skip mode, exact counts on re-upload, and one receipt per Idempotency-Key.
 */
import { describe, expect, it } from 'vitest';
import { createKey } from '../../src/auth/keys.js';
import type { TestApp } from '../support/app.js';
import { TEST_DIALECTS } from '../support/database.js';
import {
  countRows,
  CSV,
  CUSTOMER_HEADER,
  csvText,
  JSON_TYPE,
  NDJSON,
  ndjsonText,
  problemOf,
  receiptOf,
  seedCustomers,
  startApp,
  upload,
} from '../support/upload-client.js';

const SALE_HEADER = 'sale_id,customer_id,sold_at,amount';
const CONTACT_HEADER = 'customer_id,contacted_at,converted,revenue';

/** Puts rows in every table, so that "nothing written" is checked against non-empty tables. */
async function seedEveryTable(testApp: TestApp): Promise<void> {
  const { app } = testApp;
  receiptOf(
    await upload(
      app,
      '/v1/customers',
      CSV,
      csvText(`${CUSTOMER_HEADER},loyalty_tier`, 'C1,1985-04-12,Northvale,web,individual,gold', 'C2,1972-11-30,Eastmoor,store,company,silver', 'C3,2000-02-29,Northvale,referral,individual,'),
    ),
  );
  receiptOf(await upload(app, '/v1/sales', CSV, csvText(SALE_HEADER, 'S1,C1,2026-01-05,19.99', 'S2,C2,2025-12-24,250.00')));
  receiptOf(await upload(app, '/v1/campaigns/spring-mailing/contacts', CSV, csvText(CONTACT_HEADER, 'C1,2026-03-02,1,40.00', 'C2,2026-03-02,0,')));
  // A skip-mode upload with one bad row fills rejected_rows.
  const skipped = receiptOf(await upload(app, '/v1/sales', CSV, csvText(SALE_HEADER, 'S3,C3,2026-02-01,5.00', 'S4,C9,2026-02-01,5.00'), { query: 'on_error=skip' }));
  expect(skipped.rejected).toBe(1);
}

describe.each(TEST_DIALECTS)('rejected uploads write nothing on %s', (dialect) => {
  it('a rejected customer upload changes no table, not even ingests', async () => {
    const testApp = await startApp(dialect);
    await seedEveryTable(testApp);
    const before = await countRows(testApp);
    expect(Object.values(before).every((count) => count > 0)).toBe(true);

    // A new customer, a changed birth date (which would re-derive ages), a changed attribute, then one bad row.
    const body = csvText(
      `${CUSTOMER_HEADER},loyalty_tier`,
      'C4,1991-07-01,Eastmoor,web,individual,bronze',
      'C1,1986-04-12,Northvale,web,individual,platinum',
      'C5,1990-13-01,Eastmoor,web,individual,',
    );
    problemOf(await upload(testApp.app, '/v1/customers', CSV, body), 422);

    expect(await countRows(testApp)).toEqual(before);
    const db = testApp.database.handle.db;
    expect(await db.selectFrom('customers').select('birth_date').where('customer_id', '=', 'C1').executeTakeFirstOrThrow()).toEqual({ birth_date: '1985-04-12' });
    expect(await db.selectFrom('customer_attributes').select('value').where('customer_id', '=', 'C1').executeTakeFirstOrThrow()).toEqual({ value: 'gold' });
    expect(await db.selectFrom('campaign_contacts').select('age_at_contact').where('customer_id', '=', 'C1').executeTakeFirstOrThrow()).toEqual({ age_at_contact: 40 });
  });

  it('a rejected sales upload changes no table', async () => {
    const testApp = await startApp(dialect);
    await seedEveryTable(testApp);
    const before = await countRows(testApp);
    problemOf(await upload(testApp.app, '/v1/sales', CSV, csvText(SALE_HEADER, 'S1,C1,2026-01-05,21.00', 'S5,C2,2026-02-02,7.00', 'S6,C9,2026-02-02,7.00')), 422);
    expect(await countRows(testApp)).toEqual(before);
    const s1 = await testApp.database.handle.db.selectFrom('sales').select('amount_cents').where('sale_id', '=', 'S1').executeTakeFirstOrThrow();
    expect(Number(s1.amount_cents)).toBe(1999);
  });

  it('a rejected contacts upload for a new campaign does not create the campaign', async () => {
    const testApp = await startApp(dialect);
    await seedEveryTable(testApp);
    const before = await countRows(testApp);
    problemOf(await upload(testApp.app, '/v1/campaigns/summer-mailing/contacts', CSV, csvText(CONTACT_HEADER, 'C1,2026-05-02,1,10.00', 'C2,2026-05-02,0,5.00')), 422);
    expect(await countRows(testApp)).toEqual(before);
  });

  it('a bad row after the first batch of 2,000 rows was written still leaves nothing written', async () => {
    const testApp = await startApp(dialect);
    const before = await countRows(testApp);
    const lines = Array.from({ length: 2500 }, (_, index) => `K${index + 1},1980-01-01,Northvale,web,individual`);
    lines[2399] = 'K2400,1980-01-01,Northvale,web,nobody';
    const problem = problemOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, ...lines)), 422);
    expect(problem.errors).toEqual([{ row: 2400, line: 2401, column: 'customer_type', value: 'nobody', reason: 'customer_type must be one of individual, company' }]);
    expect(problem.row_count).toBe(2500);
    expect(await countRows(testApp)).toEqual(before);
  });

  it('lists row problems in a rejection found only against stored data, with their lines', async () => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    const problem = problemOf(await upload(testApp.app, '/v1/sales', CSV, csvText(SALE_HEADER, 'S1,C9,2026-01-05,1.00', 'S2,C1,2026-01-05,1.00', 'S3,C1,1970-01-01,1.00')), 422);
    expect(problem.rejected_count).toBe(2);
    expect(problem.errors?.map((error) => [error.row, error.line, error.column])).toEqual([
      [1, 2, 'customer_id'],
      [3, 4, 'sold_at'],
    ]);
  });
});

describe.each(TEST_DIALECTS)('on_error=skip on %s', (dialect) => {
  it('writes the good rows, counts the bad ones and lists them with reasons at /rejected', async () => {
    const testApp = await startApp(dialect);
    const body = csvText(
      CUSTOMER_HEADER,
      'C1,1985-04-12,Northvale,web,individual',
      'C2,2023-02-30,Eastmoor,web,person',
      'C3,2000-02-29,Northvale,referral,individual',
      'C1,1985-04-12,Northvale,store,individual',
      'C4,1999-09-09,Eastmoor,store,company',
    );
    const response = await upload(testApp.app, '/v1/customers', CSV, body, { query: 'on_error=skip' });
    expect(response.statusCode).toBe(201);
    const receipt = receiptOf(response);
    expect(receipt).toMatchObject({ on_error: 'skip', rows: 5, inserted: 3, updated: 0, unchanged: 0, rejected: 2 });

    const stored = await testApp.database.handle.db.selectFrom('customers').select(['customer_id', 'channel']).orderBy('customer_id').execute();
    expect(stored).toEqual([
      { customer_id: 'C1', channel: 'web' },
      { customer_id: 'C3', channel: 'referral' },
      { customer_id: 'C4', channel: 'store' },
    ]);

    const rejected = await testApp.app.inject({ method: 'GET', url: `/v1/ingests/${receipt.ingest_id}/rejected` });
    expect(rejected.statusCode).toBe(200);
    expect(rejected.json()).toEqual({
      ingest_id: receipt.ingest_id,
      total: 2,
      limit: 1000,
      offset: 0,
      rows: [
        { row: 2, line: 3, column: 'birth_date', value: '2023-02-30', reason: 'birth_date is not a calendar date: February 2023 has 28 days' },
        { row: 2, line: 3, column: 'customer_type', value: 'person', reason: 'customer_type must be one of individual, company' },
        { row: 4, line: 5, column: 'customer_id', value: 'C1', reason: 'customer_id C1 appears twice in this upload (first on line 2)' },
      ],
    });
  });

  it('lists rows refused against stored data (unknown customer, date before birth) at /rejected', async () => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    const body = ndjsonText([
      { customer_id: 'C1', contacted_at: '2026-03-02', converted: 1, revenue: 40 },
      { customer_id: 'C9', contacted_at: '2026-03-02', converted: 0, revenue: 0 },
      { customer_id: 'C3', contacted_at: '1999-12-31', converted: 0, revenue: 0 },
    ]);
    const receipt = receiptOf(await upload(testApp.app, '/v1/campaigns/spring-mailing/contacts', NDJSON, body, { query: 'on_error=skip' }));
    expect(receipt).toMatchObject({ rows: 3, inserted: 1, rejected: 2 });
    const rejected = await testApp.app.inject({ method: 'GET', url: `/v1/ingests/${receipt.ingest_id}/rejected` });
    expect(rejected.json<{ rows: unknown[] }>().rows).toEqual([
      { row: 2, line: 2, column: 'customer_id', value: 'C9', reason: 'customer_id C9 is not a known customer; upload the customer first' },
      { row: 3, line: 3, column: 'contacted_at', value: '1999-12-31', reason: "contacted_at 1999-12-31 is before the customer's birth date 2000-02-29" },
    ]);
    const contacts = await testApp.database.handle.db.selectFrom('campaign_contacts').select('customer_id').execute();
    expect(contacts).toEqual([{ customer_id: 'C1' }]);
  });

  it('pages through the rejected rows with limit and offset', async () => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    const lines = Array.from({ length: 5 }, (_, index) => `S${index + 1},C9,2026-01-0${index + 1},1.00`);
    const receipt = receiptOf(await upload(testApp.app, '/v1/sales', CSV, csvText(SALE_HEADER, ...lines, 'S6,C1,2026-01-06,1.00'), { query: 'on_error=skip' }));
    expect(receipt.rejected).toBe(5);
    const page = await testApp.app.inject({ method: 'GET', url: `/v1/ingests/${receipt.ingest_id}/rejected?limit=2&offset=2` });
    expect(page.json()).toMatchObject({ total: 5, limit: 2, offset: 2, rows: [{ line: 4 }, { line: 5 }] });
  });

  it('refuses with 422 and stores nothing, not even a receipt, when every row is bad', async () => {
    const testApp = await startApp(dialect);
    const before = await countRows(testApp);
    const response = await upload(testApp.app, '/v1/sales', CSV, csvText(SALE_HEADER, 'S1,C9,2026-01-05,1.00', 'S2,C8,2026-01-05,1.00'), { query: 'on_error=skip' });
    const problem = problemOf(response, 422);
    expect(problem.type).toBe('/problems/invalid-rows');
    expect(problem.detail).toBe('every row was rejected (all 2), so on_error=skip kept nothing; nothing was written');
    expect(problem).toMatchObject({ rejected_count: 2, row_count: 2 });
    expect(problem.errors?.map((error) => error.value)).toEqual(['C9', 'C8']);
    expect(await countRows(testApp)).toEqual(before);
  });
});

describe.each(TEST_DIALECTS)('re-uploads on %s', (dialect) => {
  const KINDS = [
    {
      kind: 'customers',
      url: '/v1/customers',
      body: csvText(CUSTOMER_HEADER, 'C1,1985-04-12,Northvale,web,individual', 'C2,1972-11-30,Eastmoor,store,company', 'C3,2000-02-29,Northvale,referral,individual'),
      changed: csvText(CUSTOMER_HEADER, 'C1,1985-04-12,Northvale,web,individual', 'C2,1972-11-30,Westfold,store,company', 'C3,2000-02-29,Northvale,referral,individual'),
      seed: false,
    },
    {
      kind: 'sales',
      url: '/v1/sales',
      body: csvText(SALE_HEADER, 'S1,C1,2026-01-05,19.99', 'S2,C2,2025-12-24,250.00', 'S3,C3,2026-02-01,5.00'),
      changed: csvText(SALE_HEADER, 'S1,C1,2026-01-05,19.99', 'S2,C2,2025-12-24,251.00', 'S3,C3,2026-02-01,5.00'),
      seed: true,
    },
    {
      kind: 'contacts',
      url: '/v1/campaigns/spring-mailing/contacts',
      body: csvText(CONTACT_HEADER, 'C1,2026-03-02,1,40.00', 'C2,2026-03-02,0,', 'C3,2026-03-02,no,0'),
      changed: csvText(CONTACT_HEADER, 'C1,2026-03-02,1,40.00', 'C2,2026-03-02,1,12.00', 'C3,2026-03-02,no,0'),
      seed: true,
    },
  ] as const;

  it.each(KINDS)('sending the same $kind file twice inserts nothing the second time and keeps the sha256', async ({ url, body, seed }) => {
    const testApp = await startApp(dialect);
    if (seed) await seedCustomers(testApp.app);
    const first = receiptOf(await upload(testApp.app, url, CSV, body));
    const before = await countRows(testApp);
    const second = receiptOf(await upload(testApp.app, url, CSV, body));
    expect(first).toMatchObject({ rows: 3, inserted: 3, updated: 0, unchanged: 0 });
    expect(second).toMatchObject({ rows: 3, inserted: 0, updated: 0, unchanged: 3, rejected: 0, sha256: first.sha256 });
    expect(second.ingest_id).not.toBe(first.ingest_id);
    expect(await countRows(testApp)).toEqual({ ...before, ingests: before.ingests + 1 });
  });

  it.each(KINDS)('a $kind file with one changed row counts one update', async ({ url, body, changed, seed }) => {
    const testApp = await startApp(dialect);
    if (seed) await seedCustomers(testApp.app);
    const first = receiptOf(await upload(testApp.app, url, CSV, body));
    const second = receiptOf(await upload(testApp.app, url, CSV, changed));
    expect(second).toMatchObject({ rows: 3, inserted: 0, updated: 1, unchanged: 2 });
    expect(second.sha256).not.toBe(first.sha256);
  });

  it('stores the changed values of an updated row', async () => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    receiptOf(await upload(testApp.app, '/v1/sales', CSV, csvText(SALE_HEADER, 'S1,C1,2026-01-05,19.99')));
    const second = receiptOf(await upload(testApp.app, '/v1/sales', CSV, csvText(SALE_HEADER, 'S1,C2,2026-01-06,20.00')));
    const stored = await testApp.database.handle.db.selectFrom('sales').selectAll().executeTakeFirstOrThrow();
    expect({ ...stored, amount_cents: Number(stored.amount_cents) }).toEqual({ sale_id: 'S1', customer_id: 'C2', sold_at: '2026-01-06', amount_cents: 2000, last_ingest_id: second.ingest_id });
  });

  it('counts the same rows as unchanged whatever the format they come in', async () => {
    const testApp = await startApp(dialect);
    receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, 'C1,1985-04-12,Northvale,web,individual')));
    const again = receiptOf(
      await upload(testApp.app, '/v1/customers', JSON_TYPE, JSON.stringify([{ customer_id: 'C1', birth_date: '1985-04-12', region: 'Northvale', channel: 'web', customer_type: 'individual' }])),
    );
    expect(again).toMatchObject({ inserted: 0, updated: 0, unchanged: 1 });
  });
});

describe.each(TEST_DIALECTS)('Idempotency-Key on %s', (dialect) => {
  const body = csvText(CUSTOMER_HEADER, 'C1,1985-04-12,Northvale,web,individual');
  const withKey = (key: string) => ({ headers: { 'idempotency-key': key } });

  it('replays the first receipt with 200 and writes nothing the second time', async () => {
    const testApp = await startApp(dialect);
    const first = await upload(testApp.app, '/v1/customers', CSV, body, withKey('weekly-2026-24'));
    expect(first.statusCode).toBe(201);
    expect(first.headers['segrank-receipt-replayed']).toBe('false');
    const before = await countRows(testApp);

    const second = await upload(testApp.app, '/v1/customers', CSV, body, withKey('weekly-2026-24'));
    expect(second.statusCode).toBe(200);
    expect(second.headers['segrank-receipt-replayed']).toBe('true');
    expect(second.json()).toEqual(first.json());
    expect(receiptOf(second)).toMatchObject({ idempotency_key: 'weekly-2026-24', inserted: 1 });
    expect(second.headers['location']).toBe(first.headers['location']);
    expect(await countRows(testApp)).toEqual(before);
  });

  it('answers 409 problem details for a different body with the same key, and writes nothing', async () => {
    const testApp = await startApp(dialect);
    receiptOf(await upload(testApp.app, '/v1/customers', CSV, body, withKey('weekly-2026-24')));
    const before = await countRows(testApp);
    const changed = csvText(CUSTOMER_HEADER, 'C1,1985-04-12,Eastmoor,web,individual');
    const problem = problemOf(await upload(testApp.app, '/v1/customers', CSV, changed, withKey('weekly-2026-24')), 409);
    expect(problem).toMatchObject({ type: '/problems/conflict', title: 'Conflict', detail: 'this Idempotency-Key was used for an upload with a different body' });
    expect(await countRows(testApp)).toEqual(before);
  });

  it('answers 409 for the same body and key sent to another endpoint rather than replaying the other receipt', async () => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    const contacts = csvText(CONTACT_HEADER, 'C1,2026-03-02,1,40.00');
    receiptOf(await upload(testApp.app, '/v1/campaigns/spring-mailing/contacts', CSV, contacts, withKey('mailing-1')));
    const problem = problemOf(await upload(testApp.app, '/v1/campaigns/autumn-mailing/contacts', CSV, contacts, withKey('mailing-1')), 409);
    expect(problem.detail).toBe('this Idempotency-Key was used for a contacts upload to campaign spring-mailing as text/csv with on_error=reject');
    const campaigns = await testApp.database.handle.db.selectFrom('campaigns').select('campaign_id').execute();
    expect(campaigns).toEqual([{ campaign_id: 'spring-mailing' }]);
  });

  it('answers 409 for the same body and key sent with another on_error', async () => {
    const testApp = await startApp(dialect);
    receiptOf(await upload(testApp.app, '/v1/customers', CSV, body, withKey('weekly-2026-24')));
    problemOf(await upload(testApp.app, '/v1/customers', CSV, body, { query: 'on_error=skip', ...withKey('weekly-2026-24') }), 409);
  });

  it('lets a key be used again after its upload was rejected, since nothing was stored', async () => {
    const testApp = await startApp(dialect);
    problemOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, 'C1,1985-04-12,Northvale,web,nobody'), withKey('retry-me')), 422);
    const corrected = await upload(testApp.app, '/v1/customers', CSV, body, withKey('retry-me'));
    expect(corrected.statusCode).toBe(201);
  });

  it('keeps each API key\'s Idempotency-Keys its own: another key with the same value and body gets its own upload', async () => {
    const testApp = await startApp(dialect, { authMode: 'keys' });
    const first = await createKey(testApp.database.handle.db, 'ingest', 'nightly export');
    const second = await createKey(testApp.database.handle.db, 'ingest', 'partner feed');
    const send = (key: string) => upload(testApp.app, '/v1/customers', CSV, body, { headers: { 'idempotency-key': 'weekly-2026-24', authorization: `Bearer ${key}` } });
    const mine = await send(first.key);
    expect(mine.statusCode).toBe(201);
    const theirs = await send(second.key);
    expect(theirs.statusCode).toBe(201);
    expect(theirs.headers['segrank-receipt-replayed']).toBe('false');
    expect(receiptOf(theirs).ingest_id).not.toBe(receiptOf(mine).ingest_id);
    expect(receiptOf(theirs)).toMatchObject({ idempotency_key: 'weekly-2026-24', inserted: 0, unchanged: 1 });
    // Each key still replays its own receipt.
    const again = await send(first.key);
    expect(again.statusCode).toBe(200);
    expect(receiptOf(again).ingest_id).toBe(receiptOf(mine).ingest_id);
    const againTheirs = await send(second.key);
    expect(receiptOf(againTheirs).ingest_id).toBe(receiptOf(theirs).ingest_id);
  });

  it('keeps uploads without a key independent', async () => {
    const testApp = await startApp(dialect);
    const first = receiptOf(await upload(testApp.app, '/v1/customers', CSV, body));
    const second = receiptOf(await upload(testApp.app, '/v1/customers', CSV, body));
    expect(second.ingest_id).not.toBe(first.ingest_id);
    expect(first.idempotency_key).toBeNull();
  });
});
