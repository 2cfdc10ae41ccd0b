/** Records you can see and change: campaigns and receipts listed, reports replaced and deleted, rejected rows as CSV. */
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createTestApp, type TestApp } from '../support/app.js';
import { TEST_DIALECTS } from '../support/database.js';
import { createReport, generateDataset, refresh, REPORT_TEST_SETTINGS, uploadDataset } from '../support/report-data.js';
import { CSV, csvText, problemOf, receiptOf, upload } from '../support/upload-client.js';

describe.each(TEST_DIALECTS)('records over HTTP (%s)', (dialect) => {
  let context: TestApp;
  beforeAll(async () => {
    context = await createTestApp(dialect, REPORT_TEST_SETTINGS);
    await uploadDataset(context.app, generateDataset({ seed: 31, customers: 200, baseRate: 0.2 }), 'spring');
  });
  afterAll(async () => {
    await context.close();
  });

  test('GET /v1/campaigns lists each campaign with the counts of its stored contacts', async () => {
    const contacts = await context.database.handle.db
      .selectFrom('campaign_contacts')
      .select((eb) => [eb.fn.countAll<number>().as('n'), eb.fn.sum<number>('converted').as('conversions'), eb.fn.min<string>('contacted_at').as('first'), eb.fn.max<string>('contacted_at').as('last')])
      .executeTakeFirstOrThrow();
    receiptOf(
      await upload(context.app, '/v1/campaigns/sprnig/contacts', CSV, csvText('customer_id,contacted_at,converted,revenue,holdout', 'c000001,2026-04-02,1,12.50,0', 'c000002,2026-04-03,0,0,1')),
    );
    const response = await context.app.inject({ method: 'GET', url: '/v1/campaigns' });
    expect(response.statusCode).toBe(200);
    const { campaigns } = response.json<{ campaigns: Array<Record<string, unknown>> }>();
    expect(campaigns.map((campaign) => campaign['campaign_id'])).toEqual(['spring', 'sprnig']);
    expect(campaigns[0]).toMatchObject({
      contacts: Number(contacts.n),
      conversions: Number(contacts.conversions),
      first_contacted_at: contacts.first,
      last_upload_at: '2026-06-15T12:00:00.000Z',
    });
    expect(campaigns[0]).toMatchObject({ holdout_contacts: 0 });
    expect(campaigns[1]).toMatchObject({ contacts: 2, holdout_contacts: 1, conversions: 1, first_contacted_at: '2026-04-02', last_contacted_at: '2026-04-03' });
  });

  test('GET /v1/ingests pages through the receipts, newest first, and filters by kind and campaign', async () => {
    const all = (await context.app.inject({ method: 'GET', url: '/v1/ingests?limit=1000' })).json<{ total: number; ingests: Array<{ ingest_id: string; kind: string; received_at: string }> }>();
    expect(all.total).toBe(all.ingests.length);
    expect(all.total).toBeGreaterThanOrEqual(2);
    const receivedAt = all.ingests.map((receipt) => receipt.received_at);
    expect(receivedAt).toEqual([...receivedAt].sort().reverse());
    const second = (await context.app.inject({ method: 'GET', url: '/v1/ingests?limit=1&offset=1' })).json<{ total: number; limit: number; offset: number; ingests: Array<{ ingest_id: string }> }>();
    expect(second).toMatchObject({ total: all.total, limit: 1, offset: 1 });
    expect(second.ingests.map((receipt) => receipt.ingest_id)).toEqual([all.ingests[1]?.ingest_id]);
    const customers = (await context.app.inject({ method: 'GET', url: '/v1/ingests?kind=customers' })).json<{ ingests: Array<{ kind: string }> }>();
    expect(customers.ingests.length).toBeGreaterThan(0);
    expect(new Set(customers.ingests.map((receipt) => receipt.kind))).toEqual(new Set(['customers']));
    const spring = (await context.app.inject({ method: 'GET', url: '/v1/ingests?campaign_id=spring' })).json<{ ingests: Array<{ campaign_id: string }> }>();
    expect(spring.ingests.map((receipt) => receipt.campaign_id)).toEqual(spring.ingests.map(() => 'spring'));
    const wrongKind = problemOf(await context.app.inject({ method: 'GET', url: '/v1/ingests?kind=orders' }), 400);
    expect(wrongKind.detail).toBe('querystring/kind must be equal to one of the allowed values: customers, sales, contacts');
  });

  test('PUT /v1/reports/{id} gives later snapshots the new definition and leaves earlier ones as they were', async () => {
    const report = await createReport(context.app, { name: 'Spring', source: { campaign_ids: ['spring'] }, dimensions: ['region'] });
    const before = await refresh(context.app, report.report_id);
    const put = await context.app.inject({ method: 'PUT', url: `/v1/reports/${report.report_id}`, payload: { name: 'Spring by channel', source: { campaign_ids: ['spring'] }, dimensions: ['channel'] } });
    expect(put.statusCode, put.body).toBe(200);
    expect(put.json()).toMatchObject({ report_id: report.report_id, name: 'Spring by channel', dimensions: ['channel'], created_at: report['created_at'], latest_snapshot: { snapshot_id: before.snapshot_id } });
    const after = await refresh(context.app, report.report_id);
    expect(after.definition.dimensions).toEqual(['channel']);
    const earlier = await context.app.inject({ method: 'GET', url: `/v1/reports/${report.report_id}/snapshots/${before.snapshot_id}` });
    expect(earlier.json<{ definition: { dimensions: string[]; name: string } }>().definition).toMatchObject({ dimensions: ['region'], name: 'Spring' });
    const invalid = problemOf(await context.app.inject({ method: 'PUT', url: `/v1/reports/${report.report_id}`, payload: { name: 'x', source: { campaign_ids: ['no-such'] } } }), 400);
    expect(invalid.type).toBe('/problems/invalid-request');
    problemOf(await context.app.inject({ method: 'PUT', url: '/v1/reports/no-such-report', payload: { name: 'x', source: { campaign_ids: ['spring'] } } }), 404);
  });

  test('DELETE /v1/reports/{id} removes the report and its snapshots, including cached tables', async () => {
    const report = await createReport(context.app, { name: 'Doomed', source: { campaign_ids: ['spring'] }, dimensions: ['region'] });
    const snapshot = await refresh(context.app, report.report_id);
    const table = await context.app.inject({ method: 'GET', url: `/v1/reports/${report.report_id}/segments?snapshot=${snapshot.snapshot_id}` });
    expect(table.statusCode).toBe(200);
    const deleted = await context.app.inject({ method: 'DELETE', url: `/v1/reports/${report.report_id}` });
    expect(deleted.statusCode).toBe(204);
    const stored = await context.database.handle.db.selectFrom('report_snapshots').select('snapshot_id').where('report_id', '=', report.report_id).execute();
    expect(stored).toEqual([]);
    const gone = problemOf(await context.app.inject({ method: 'GET', url: `/v1/reports/${report.report_id}/segments?snapshot=${snapshot.snapshot_id}` }), 404);
    expect(gone.detail).toBe(`no report with id ${report.report_id}`);
    problemOf(await context.app.inject({ method: 'DELETE', url: `/v1/reports/${report.report_id}` }), 404);
  });

  test('an unknown report id on /segments says there is no such report, not that it has no snapshot', async () => {
    const problem = problemOf(await context.app.inject({ method: 'GET', url: '/v1/reports/no-such-report/segments' }), 404);
    expect(problem.detail).toBe('no report with id no-such-report');
    const unrefreshed = await createReport(context.app, { name: 'Never refreshed', source: { campaign_ids: ['spring'] } });
    const waiting = problemOf(await context.app.inject({ method: 'GET', url: `/v1/reports/${unrefreshed.report_id}/segments` }), 404);
    expect(waiting.detail).toMatch(/has no snapshot yet/);
  });

  test('an unknown table format lists the formats there are', async () => {
    const problem = problemOf(await context.app.inject({ method: 'GET', url: '/v1/reports/any/segments?format=xlsx' }), 400);
    expect(problem.detail).toBe('querystring/format must be equal to one of the allowed values: json, csv');
  });

  test('rejected rows come as CSV on request, with formulas neutralised', async () => {
    const body = csvText('sale_id,customer_id,sold_at,amount', 'S1,"=HYPERLINK(""x"")",2026-01-05,1.00', 'S2,c000001,2026-01-05,abc', 'S3,c000001,2026-01-05,2.00');
    const receipt = receiptOf(await upload(context.app, '/v1/sales', CSV, body, { query: 'on_error=skip' }));
    expect(receipt.rejected).toBe(2);
    const viaQuery = await context.app.inject({ method: 'GET', url: `/v1/ingests/${receipt.ingest_id}/rejected?format=csv` });
    expect(viaQuery.statusCode).toBe(200);
    expect(viaQuery.headers['content-type']).toBe('text/csv; charset=utf-8; header=present');
    const lines = viaQuery.body.split('\r\n');
    expect(lines[0]).toBe('row,line,column,value,reason');
    // Rows failing a field check are listed before rows failing against stored data (the order they were rejected in).
    expect(lines[1]).toMatch(/^2,3,amount,abc,amount /);
    expect(lines[2]).toBe(`1,2,customer_id,"'=HYPERLINK(""x"")","customer_id =HYPERLINK(""x"") is not a known customer; upload the customer first"`);
    expect(lines.slice(3)).toEqual(['']);
    const viaAccept = await context.app.inject({ method: 'GET', url: `/v1/ingests/${receipt.ingest_id}/rejected`, headers: { accept: 'text/csv' } });
    expect(viaAccept.body).toBe(viaQuery.body);
    const json = await context.app.inject({ method: 'GET', url: `/v1/ingests/${receipt.ingest_id}/rejected`, headers: { accept: 'application/json' } });
    expect(json.json<{ total: number }>().total).toBe(2);
    problemOf(await context.app.inject({ method: 'GET', url: `/v1/ingests/${receipt.ingest_id}/rejected`, headers: { accept: 'application/xml' } }), 406);
  });
});
