import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createKey } from '../../src/auth/keys.js';
import type { Snapshot } from '../../src/report/shapes/index.js';
import { OPEN_MODE_BANNER } from '../../src/view/page.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { TEST_DIALECTS } from '../support/database.js';
import { generateDataset } from '../support/report-data.js';
import { toCsv } from '../support/upload-client.js';

interface Loaded {
  reportId: string;
  first: Snapshot;
  second: Snapshot;
}

/** Loads a small invented campaign through the API and computes two snapshots of one report. */
async function loadReport(context: TestApp, authorization: Record<string, string>): Promise<Loaded> {
  const dataset = generateDataset({ seed: 7, customers: 600, baseRate: 0.12, plantedRegion: 'Northfield', plantedRate: 0.24 });
  const post = async (url: string, payload: string, contentType: string | null) => {
    const headers = contentType === null ? authorization : { 'content-type': contentType, ...authorization };
    const response = await context.app.inject({ method: 'POST', url, headers, payload });
    expect(response.statusCode, response.body).toBeLessThan(300);
    return response;
  };
  await post('/v1/customers', toCsv(dataset.customers as unknown as Array<Record<string, unknown>>), 'text/csv');
  await post('/v1/campaigns/frost/contacts', toCsv(dataset.contacts as unknown as Array<Record<string, unknown>>), 'text/csv');
  const report = (await post('/v1/reports', JSON.stringify({ name: 'Frost <campaign>', source: { campaign_ids: ['frost'] }, dimensions: ['region', 'channel'] }), 'application/json')).json();
  const first = (await post(`/v1/reports/${report.report_id}/refresh`, '', null)).json() as Snapshot;
  const second = (await post(`/v1/reports/${report.report_id}/refresh`, '', null)).json() as Snapshot;
  return { reportId: report.report_id as string, first, second };
}

function nonceOf(policy: string, directive: string): string | undefined {
  const part = policy.split(';').find((entry) => entry.trim().startsWith(`${directive} `));
  return /'nonce-([^']+)'/.exec(part ?? '')?.[1];
}

describe.each(TEST_DIALECTS)('the report page over HTTP in open demo mode (%s)', (dialect) => {
  let context: TestApp;
  let loaded: Loaded;

  beforeAll(async () => {
    context = await createTestApp(dialect, { maxEventLoopDelayMs: 0 });
    loaded = await loadReport(context, {});
  });
  afterAll(async () => {
    await context.close();
  });

  test('answers an HTML page of the latest snapshot, not cached by shared caches', async () => {
    const response = await context.app.inject({ method: 'GET', url: `/reports/${loaded.reportId}` });
    expect(response.statusCode).toBe(200);
    expect(response.headers['content-type']).toBe('text/html; charset=utf-8');
    expect(response.headers['cache-control']).toBe('private, no-cache');
    expect(response.body).toContain(`Snapshot #${loaded.second.sequence},`);
    expect(response.body).toContain('<h1>Frost &lt;campaign&gt;</h1>');
  });

  test('the security headers hold a strict policy whose nonces match the inline script and stylesheet', async () => {
    const response = await context.app.inject({ method: 'GET', url: `/reports/${loaded.reportId}` });
    const policy = String(response.headers['content-security-policy']);
    expect(policy).toContain("default-src 'self'");
    expect(policy).toContain("img-src 'self' data:");
    const scriptSources = policy.split(';').find((entry) => entry.startsWith('script-src ')) ?? '';
    expect(scriptSources).not.toContain('unsafe-inline');
    expect(scriptSources).not.toContain('unsafe-eval');
    const scriptNonce = nonceOf(policy, 'script-src');
    const styleNonce = nonceOf(policy, 'style-src');
    expect(scriptNonce).toMatch(/^[0-9a-f]{32}$/);
    expect(response.body).toContain(`<script nonce="${scriptNonce}">`);
    expect(response.body).toContain(`<style nonce="${styleNonce}">`);
    expect(response.headers['x-content-type-options']).toBe('nosniff');
    const again = await context.app.inject({ method: 'GET', url: `/reports/${loaded.reportId}` });
    expect(nonceOf(String(again.headers['content-security-policy']), 'script-src')).not.toBe(scriptNonce);
  });

  test('says it is in open demo mode', async () => {
    const response = await context.app.inject({ method: 'GET', url: `/reports/${loaded.reportId}` });
    expect(response.body).toContain(OPEN_MODE_BANNER);
  });

  test('?snapshot= shows an earlier snapshot', async () => {
    const response = await context.app.inject({ method: 'GET', url: `/reports/${loaded.reportId}?snapshot=${loaded.first.snapshot_id}` });
    expect(response.statusCode).toBe(200);
    expect(response.body).toContain(`Snapshot #${loaded.first.sequence},`);
    expect(response.body).toContain(`<option value="${loaded.first.snapshot_id}" selected>`);
  });

  test('an unknown report, an unknown snapshot and a report without snapshots answer 404 problem details', async () => {
    const unknownReport = await context.app.inject({ method: 'GET', url: '/reports/no-such-report' });
    expect(unknownReport.statusCode).toBe(404);
    expect(unknownReport.headers['content-type']).toMatch(/^application\/problem\+json/);
    const unknownSnapshot = await context.app.inject({ method: 'GET', url: `/reports/${loaded.reportId}?snapshot=no-such-snapshot` });
    expect(unknownSnapshot.statusCode).toBe(404);
    expect(unknownSnapshot.json().detail).toContain('has no snapshot no-such-snapshot');
    const empty = await context.app.inject({ method: 'POST', url: '/v1/reports', payload: { name: 'Empty', source: { campaign_ids: ['frost'] } } });
    const noSnapshot = await context.app.inject({ method: 'GET', url: `/reports/${empty.json().report_id}` });
    expect(noSnapshot.statusCode).toBe(404);
    expect(noSnapshot.json().detail).toMatch(/has no snapshot yet; POST \/v1\/reports\/.+\/refresh computes one/);
  });

  test('an unknown query parameter is refused with 400', async () => {
    const response = await context.app.inject({ method: 'GET', url: `/reports/${loaded.reportId}?snapshot=latest&colour=red` });
    expect(response.statusCode).toBe(400);
    expect(response.headers['content-type']).toMatch(/^application\/problem\+json/);
  });
});

describe('the report page over HTTP with API keys', () => {
  let context: TestApp;
  let loaded: Loaded;
  let readKey: string;
  let ingestKey: string;
  const basic = (key: string) => `Basic ${Buffer.from(`analyst:${key}`).toString('base64')}`;

  beforeAll(async () => {
    context = await createTestApp('sqlite', { authMode: 'keys', maxEventLoopDelayMs: 0 });
    const admin = await createKey(context.database.handle.db, 'admin', 'setup');
    readKey = (await createKey(context.database.handle.db, 'read', 'browser')).key;
    ingestKey = (await createKey(context.database.handle.db, 'ingest', 'uploads')).key;
    loaded = await loadReport(context, { authorization: `Bearer ${admin.key}` });
  });
  afterAll(async () => {
    await context.close();
  });

  test('without a key the browser is asked for Basic credentials', async () => {
    const response = await context.app.inject({ method: 'GET', url: `/reports/${loaded.reportId}` });
    expect(response.statusCode).toBe(401);
    expect(response.headers['www-authenticate']).toBe('Basic realm="segrank", charset="UTF-8"');
  });

  test('a read key as the Basic password opens the page, without the demo banner', async () => {
    const response = await context.app.inject({ method: 'GET', url: `/reports/${loaded.reportId}`, headers: { authorization: basic(readKey) } });
    expect(response.statusCode).toBe(200);
    expect(response.body).not.toContain(OPEN_MODE_BANNER);
  });

  test('a key without the read role is refused with 403', async () => {
    const response = await context.app.inject({ method: 'GET', url: `/reports/${loaded.reportId}`, headers: { authorization: basic(ingestKey) } });
    expect(response.statusCode).toBe(403);
  });
});
