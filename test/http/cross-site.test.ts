/**
 * A browser that once signed in to the report page resends its Basic credentials on every
 * request to the service, another site's too; state-changing requests must not act on them.
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { createKey } from '../../src/auth/keys.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { generateDataset, uploadRows } from '../support/report-data.js';

describe('cross-site requests', () => {
  let testApp: TestApp;
  let adminKey: string;
  let reportId: string;
  const basic = () => `Basic ${Buffer.from(`analyst:${adminKey}`).toString('base64')}`;
  const bearer = () => `Bearer ${adminKey}`;

  beforeEach(async () => {
    testApp = await createTestApp('sqlite', { authMode: 'keys', maxEventLoopDelayMs: 0, corsOrigins: ['https://dashboards.example'] });
    adminKey = (await createKey(testApp.database.handle.db, 'admin', 'operator')).key;
    const headers = { authorization: bearer() };
    const dataset = generateDataset({ seed: 5, customers: 60, baseRate: 0.2 });
    await uploadRows(testApp.app, '/v1/customers', dataset.customers, headers);
    await uploadRows(testApp.app, '/v1/campaigns/thaw/contacts', dataset.contacts, headers);
    const created = await testApp.app.inject({ method: 'POST', url: '/v1/reports', headers, payload: { name: 'Thaw', source: { campaign_ids: ['thaw'] } } });
    expect(created.statusCode, created.body).toBe(201);
    reportId = created.json().report_id;
  });
  afterEach(async () => {
    await testApp.close();
  });

  const refresh = (headers: Record<string, string>) =>
    testApp.app.inject({
      method: 'POST',
      url: `/v1/reports/${reportId}/refresh`,
      headers: { host: 'segrank.internal:3000', ...headers },
      ...(headers['content-type'] === 'text/plain' ? { payload: 'refresh' } : {}),
    });
  const snapshotCount = async () =>
    (await testApp.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/snapshots`, headers: { authorization: bearer() } })).json().snapshots.length as number;

  it('refuses a text/plain POST of a refresh sent from another site with the browser\'s Basic credentials, and stores no snapshot', async () => {
    const response = await refresh({ authorization: basic(), 'content-type': 'text/plain', origin: 'https://elsewhere.example', 'sec-fetch-site': 'cross-site' });
    expect(response.statusCode).toBe(403);
    expect(response.headers['content-type']).toMatch(/^application\/problem\+json/);
    expect(response.json()).toMatchObject({ type: '/problems/cross-site', title: 'Cross-site request refused' });
    expect(await snapshotCount()).toBe(0);
  });

  it('refuses it from an older browser that sends only Origin, and from a sibling site', async () => {
    expect((await refresh({ authorization: bearer(), origin: 'https://elsewhere.example' })).statusCode).toBe(403);
    expect((await refresh({ authorization: bearer(), origin: 'null' })).statusCode).toBe(403);
    expect((await refresh({ authorization: bearer(), origin: 'https://reports.segrank.internal', 'sec-fetch-site': 'same-site' })).statusCode).toBe(403);
    const erase = await testApp.app.inject({ method: 'DELETE', url: '/v1/customers/C-00001', headers: { authorization: bearer(), 'sec-fetch-site': 'cross-site' } });
    expect(erase.statusCode).toBe(403);
    expect(await snapshotCount()).toBe(0);
  });

  it('refuses Basic credentials for a refresh even without any browser header', async () => {
    const response = await refresh({ authorization: basic() });
    expect(response.statusCode).toBe(401);
    expect(response.headers['www-authenticate']).toBe('Bearer');
    expect(await snapshotCount()).toBe(0);
  });

  it('accepts a refresh from the service\'s own origin, from a configured CORS origin, and from a client that is not a browser', async () => {
    expect((await refresh({ authorization: bearer(), origin: 'http://segrank.internal:3000', 'sec-fetch-site': 'same-origin' })).statusCode).toBe(201);
    expect((await refresh({ authorization: bearer(), origin: 'https://segrank.internal:3000' })).statusCode).toBe(201);
    expect((await refresh({ authorization: bearer(), origin: 'https://dashboards.example', 'sec-fetch-site': 'cross-site' })).statusCode).toBe(201);
    expect((await refresh({ authorization: bearer() })).statusCode).toBe(201);
    expect(await snapshotCount()).toBe(4);
  });

  it('keeps reads open to links from elsewhere, and answers a CORS preflight without a key', async () => {
    const page = await testApp.app.inject({ method: 'GET', url: `/v1/reports/${reportId}`, headers: { authorization: bearer(), 'sec-fetch-site': 'cross-site' } });
    expect(page.statusCode).toBe(200);
    const preflight = await testApp.app.inject({
      method: 'OPTIONS',
      url: `/v1/reports/${reportId}/refresh`,
      headers: { origin: 'https://dashboards.example', 'access-control-request-method': 'POST', 'access-control-request-headers': 'authorization' },
    });
    expect(preflight.statusCode).toBe(204);
    expect(preflight.headers['access-control-allow-origin']).toBe('https://dashboards.example');
  });
});
