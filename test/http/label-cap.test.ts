/**
 * A dimension with more distinct labels than MAX_LABELS_PER_DIMENSION (default 100) is refused:
 * at definition (400, naming the dimension's field and its count) when the stored data already
 * show it, at refresh (422 /problems/too-many-labels) when the data grew past it later; never a
 * snapshot of thousands of one-customer segments.
 */
import { afterEach, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '../support/app.js';
import { TEST_DIALECTS } from '../support/database.js';
import { CSV, upload } from '../support/upload-client.js';

// Invented customers, each with its own member code (an identifier uploaded as an attribute).
function customers(from: number, to: number): string {
  const lines = ['customer_id,birth_date,region,channel,customer_type,member_code'];
  for (let index = from; index <= to; index++) lines.push(`M${index},1980-05-0${(index % 9) + 1},${index % 2 === 0 ? 'Saltmere' : 'Fennwick'},web shop,individual,MC-${index}`);
  return `${lines.join('\n')}\n`;
}

function contacts(from: number, to: number): string {
  const lines = ['customer_id,contacted_at,converted,revenue'];
  for (let index = from; index <= to; index++) lines.push(`M${index},2026-03-02,${index % 4 === 0 ? 1 : 0},0`);
  return `${lines.join('\n')}\n`;
}

describe.each(TEST_DIALECTS)('labels per dimension on %s', (dialect) => {
  let testApp: TestApp | undefined;
  afterEach(async () => {
    await testApp?.close();
    testApp = undefined;
  });

  it('refuses a definition whose dimension already has more labels than the limit, naming it and its count', async () => {
    testApp = await createTestApp(dialect, { maxEventLoopDelayMs: 0 });
    const { app } = testApp;
    expect((await upload(app, '/v1/customers', CSV, customers(1, 150))).statusCode).toBe(201);
    expect((await upload(app, '/v1/campaigns/codes/contacts', CSV, contacts(1, 150))).statusCode).toBe(201);
    const response = await app.inject({ method: 'POST', url: '/v1/reports', payload: { name: 'codes', source: { campaign_ids: ['codes'] }, dimensions: ['region', 'member_code'] } });
    expect(response.statusCode).toBe(400);
    const problem = response.json<{ type: string; errors: Array<{ field: string; reason: string }> }>();
    expect(problem.type).toBe('/problems/invalid-request');
    expect(problem.errors).toEqual([{ field: 'body/dimensions/1', reason: expect.stringContaining('member_code has 150 distinct labels') }]);
    expect(problem.errors[0]?.reason).toContain('100');
    const listed = await app.inject({ method: 'GET', url: '/v1/reports' });
    expect(listed.json<{ reports: unknown[] }>().reports).toEqual([]);
  });

  it('refuses a refresh once the data have grown past the limit, with 422 too-many-labels, and stores no snapshot', async () => {
    testApp = await createTestApp(dialect, { maxEventLoopDelayMs: 0 });
    const { app } = testApp;
    expect((await upload(app, '/v1/customers', CSV, customers(1, 60))).statusCode).toBe(201);
    expect((await upload(app, '/v1/campaigns/codes/contacts', CSV, contacts(1, 60))).statusCode).toBe(201);
    const created = await app.inject({ method: 'POST', url: '/v1/reports', payload: { name: 'codes', source: { campaign_ids: ['codes'] }, dimensions: ['region', 'member_code'] } });
    expect(created.statusCode).toBe(201);
    const reportId = created.json<{ report_id: string }>().report_id;
    expect((await app.inject({ method: 'POST', url: `/v1/reports/${reportId}/refresh` })).statusCode).toBe(201);

    expect((await upload(app, '/v1/customers', CSV, customers(61, 250))).statusCode).toBe(201);
    expect((await upload(app, '/v1/campaigns/codes/contacts', CSV, contacts(61, 250))).statusCode).toBe(201);
    const refused = await app.inject({ method: 'POST', url: `/v1/reports/${reportId}/refresh` });
    expect(refused.statusCode).toBe(422);
    expect(refused.headers['content-type']).toContain('application/problem+json');
    expect(refused.json()).toMatchObject({ type: '/problems/too-many-labels', dimensions: [{ dimension: 'member_code', labels: 250 }], limit: 100 });
    expect(refused.json<{ detail: string }>().detail).toContain('member_code has 250 distinct labels');
    const snapshots = await app.inject({ method: 'GET', url: `/v1/reports/${reportId}/snapshots` });
    expect(snapshots.json<{ total: number }>().total).toBe(1);
  });
});
