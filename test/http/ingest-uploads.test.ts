/** Every upload endpoint in every upload format, the receipt it returns, and the receipt routes. */
import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { TEST_TODAY } from '../support/app.js';
import { TEST_DIALECTS } from '../support/database.js';
import {
  CSV,
  CUSTOMER_ROWS,
  encode,
  FORMATS,
  JSON_TYPE,
  problemOf,
  receiptOf,
  seedCustomers,
  startApp,
  upload,
  type RowObject,
} from '../support/upload-client.js';

const sha256 = (text: string) => createHash('sha256').update(text, 'utf8').digest('hex');

const SALE_ROWS: RowObject[] = [
  { sale_id: 'S1', customer_id: 'C1', sold_at: '2026-01-05', amount: 19.99 },
  { sale_id: 'S2', customer_id: 'C2', sold_at: '2025-12-24', amount: 250 },
  // Today (the fixed test clock) is not in the future.
  { sale_id: 'S3', customer_id: 'C1', sold_at: '2026-06-15', amount: 0 },
];

const CONTACT_ROWS: RowObject[] = [
  { customer_id: 'C1', contacted_at: '2026-03-02', converted: 1, revenue: 40 },
  { customer_id: 'C2', contacted_at: '2026-03-02', converted: 0, revenue: null },
  { customer_id: 'C3', contacted_at: '2026-03-02', converted: 'yes', revenue: '12.5' },
];

describe.each(TEST_DIALECTS)('upload endpoints on %s', (dialect) => {
  describe.each(FORMATS)('as $contentType', ({ format, contentType }) => {
    it('POST /v1/customers stores the customers and answers 201 with a receipt', async () => {
      const testApp = await startApp(dialect);
      const body = encode(format, CUSTOMER_ROWS);
      const response = await upload(testApp.app, '/v1/customers', contentType, body);

      expect(response.statusCode).toBe(201);
      const receipt = receiptOf(response);
      expect(receipt).toMatchObject({
        kind: 'customers',
        campaign_id: null,
        on_error: 'reject',
        content_type: contentType,
        rows: 3,
        inserted: 3,
        updated: 0,
        unchanged: 0,
        rejected: 0,
        sha256: sha256(body),
        idempotency_key: null,
        received_at: TEST_TODAY.toISOString(),
      });
      expect(response.headers['location']).toBe(`/v1/ingests/${receipt.ingest_id}`);
      const stored = await testApp.database.handle.db
        .selectFrom('customers')
        .select(['customer_id', 'birth_date', 'region', 'channel', 'customer_type', 'last_ingest_id'])
        .orderBy('customer_id')
        .execute();
      expect(stored).toEqual(CUSTOMER_ROWS.map((row) => ({ ...row, last_ingest_id: receipt.ingest_id })));
    });

    it('POST /v1/sales stores the sales in cents and answers 201 with a receipt', async () => {
      const testApp = await startApp(dialect);
      await seedCustomers(testApp.app);
      const body = encode(format, SALE_ROWS);
      const receipt = receiptOf(await upload(testApp.app, '/v1/sales', contentType, body));

      expect(receipt).toMatchObject({ kind: 'sales', campaign_id: null, content_type: contentType, rows: 3, inserted: 3, rejected: 0, sha256: sha256(body) });
      const stored = await testApp.database.handle.db.selectFrom('sales').select(['sale_id', 'customer_id', 'sold_at', 'amount_cents']).orderBy('sale_id').execute();
      expect(stored.map((row) => ({ ...row, amount_cents: Number(row.amount_cents) }))).toEqual([
        { sale_id: 'S1', customer_id: 'C1', sold_at: '2026-01-05', amount_cents: 1999 },
        { sale_id: 'S2', customer_id: 'C2', sold_at: '2025-12-24', amount_cents: 25000 },
        { sale_id: 'S3', customer_id: 'C1', sold_at: '2026-06-15', amount_cents: 0 },
      ]);
    });

    it('POST /v1/campaigns/{campaign_id}/contacts stores the contacts with their age at contact', async () => {
      const testApp = await startApp(dialect);
      await seedCustomers(testApp.app);
      const body = encode(format, CONTACT_ROWS);
      const receipt = receiptOf(await upload(testApp.app, '/v1/campaigns/spring-mailing/contacts', contentType, body));

      expect(receipt).toMatchObject({ kind: 'contacts', campaign_id: 'spring-mailing', content_type: contentType, rows: 3, inserted: 3, rejected: 0, sha256: sha256(body) });
      const db = testApp.database.handle.db;
      expect(await db.selectFrom('campaigns').select('campaign_id').execute()).toEqual([{ campaign_id: 'spring-mailing' }]);
      const stored = await db
        .selectFrom('campaign_contacts')
        .select(['campaign_id', 'customer_id', 'contacted_at', 'converted', 'revenue_cents', 'age_at_contact'])
        .orderBy('customer_id')
        .execute();
      // Ages by hand: born 1985-04-12, 1972-11-30 and 2000-02-29, all contacted on 2026-03-02.
      expect(stored.map((row) => ({ ...row, converted: Number(row.converted), revenue_cents: Number(row.revenue_cents) }))).toEqual([
        { campaign_id: 'spring-mailing', customer_id: 'C1', contacted_at: '2026-03-02', converted: 1, revenue_cents: 4000, age_at_contact: 40 },
        { campaign_id: 'spring-mailing', customer_id: 'C2', contacted_at: '2026-03-02', converted: 0, revenue_cents: 0, age_at_contact: 53 },
        { campaign_id: 'spring-mailing', customer_id: 'C3', contacted_at: '2026-03-02', converted: 1, revenue_cents: 1250, age_at_contact: 26 },
      ]);
    });
  });

  it('records the media type of the upload without its parameters', async () => {
    const testApp = await startApp(dialect);
    const receipt = receiptOf(await upload(testApp.app, '/v1/customers', 'Text/CSV; charset=utf-8', encode('csv', CUSTOMER_ROWS)));
    expect(receipt.content_type).toBe('text/csv');
  });

  it('GET /v1/ingests/{ingest_id} returns the same receipt as the upload', async () => {
    const testApp = await startApp(dialect);
    const posted = receiptOf(await upload(testApp.app, '/v1/customers', CSV, encode('csv', CUSTOMER_ROWS)));
    const response = await testApp.app.inject({ method: 'GET', url: `/v1/ingests/${posted.ingest_id}` });
    expect(response.statusCode).toBe(200);
    expect(response.json()).toEqual(posted);
  });

  it('GET /v1/ingests/{ingest_id} answers 404 problem details for an unknown id', async () => {
    const testApp = await startApp(dialect);
    const problem = problemOf(await testApp.app.inject({ method: 'GET', url: '/v1/ingests/no-such-upload' }), 404);
    expect(problem).toMatchObject({ type: '/problems/not-found', title: 'Not found', detail: 'no upload with id no-such-upload' });
  });

  it('GET /v1/ingests/{ingest_id}/rejected lists no rows for a clean upload', async () => {
    const testApp = await startApp(dialect);
    const posted = receiptOf(await upload(testApp.app, '/v1/customers', JSON_TYPE, encode('json', CUSTOMER_ROWS)));
    const response = await testApp.app.inject({ method: 'GET', url: `/v1/ingests/${posted.ingest_id}/rejected` });
    expect(response.statusCode).toBe(200);
    expect(response.json()).toEqual({ ingest_id: posted.ingest_id, total: 0, limit: 1000, offset: 0, rows: [] });
  });

  it('GET /v1/ingests/{ingest_id}/rejected answers 404 for an unknown id', async () => {
    const testApp = await startApp(dialect);
    const problem = problemOf(await testApp.app.inject({ method: 'GET', url: '/v1/ingests/no-such-upload/rejected' }), 404);
    expect(problem.type).toBe('/problems/not-found');
  });

  it('refuses an on_error value other than reject or skip with a 400 problem', async () => {
    const testApp = await startApp(dialect);
    const problem = problemOf(await upload(testApp.app, '/v1/customers', CSV, encode('csv', CUSTOMER_ROWS), { query: 'on_error=ignore' }), 400);
    expect(problem.type).toBe('/problems/invalid-request');
  });

  it('refuses a campaign id with a control character with a 400 problem', async () => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    const problem = problemOf(await upload(testApp.app, '/v1/campaigns/bad%07id/contacts', CSV, encode('csv', CONTACT_ROWS)), 400);
    expect(problem.type).toBe('/problems/invalid-request');
  });
});
