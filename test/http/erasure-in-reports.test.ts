import { afterEach, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '../support/app.js';
import { TEST_DIALECTS } from '../support/database.js';
import { CSV, upload } from '../support/upload-client.js';

describe.each(TEST_DIALECTS)('erasure and reports on %s', (dialect) => {
  let testApp: TestApp | undefined;
  afterEach(async () => {
    await testApp?.close();
    testApp = undefined;
  });

  it('removes an erased customer from the next snapshot', async () => {
    testApp = await createTestApp(dialect, { maxEventLoopDelayMs: 0 });
    const { app } = testApp;
    const customers = ['customer_id,birth_date,region,channel,customer_type'];
    const contacts = ['customer_id,contacted_at,converted,revenue'];
    for (let index = 1; index <= 80; index++) {
      customers.push(`E${index},1980-05-0${(index % 9) + 1},${index % 2 === 0 ? 'Saltmere' : 'Fennwick'},web shop,individual`);
      contacts.push(`E${index},2026-03-02,${index % 4 === 0 ? 1 : 0},${index % 4 === 0 ? '20.00' : '0'}`);
    }
    const post = (url: string, body: string) => upload(app, url, CSV, body + '\n');
    expect((await post('/v1/customers', customers.join('\n'))).statusCode).toBe(201);
    expect((await post('/v1/campaigns/erasure-check/contacts', contacts.join('\n'))).statusCode).toBe(201);
    const created = await app.inject({ method: 'POST', url: '/v1/reports', payload: { name: 'erasure', source: { campaign_ids: ['erasure-check'] }, dimensions: ['region'] } });
    const reportId = created.json<{ report_id: string }>().report_id;
    const before = (await app.inject({ method: 'POST', url: `/v1/reports/${reportId}/refresh` })).json<{ row_counts: { population: number }; segments: Array<{ segment: string; n: number; conversions: number }> }>();
    expect(before.row_counts.population).toBe(80);

    // E4 converted and lives in Saltmere.
    expect((await app.inject({ method: 'DELETE', url: '/v1/customers/E4' })).statusCode).toBe(204);
    const after = (await app.inject({ method: 'POST', url: `/v1/reports/${reportId}/refresh` })).json<typeof before>();
    expect(after.row_counts.population).toBe(79);
    const saltmere = (snapshot: typeof before) => snapshot.segments.find((segment) => segment.segment === 'region=Saltmere');
    expect(saltmere(after)?.n).toBe((saltmere(before)?.n ?? 0) - 1);
    expect(saltmere(after)?.conversions).toBe((saltmere(before)?.conversions ?? 0) - 1);
  });
});
