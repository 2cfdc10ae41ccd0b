import { afterEach, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '../support/app.js';

describe('protective limits', () => {
  let testApp: TestApp | undefined;
  afterEach(async () => {
    await testApp?.close();
    testApp = undefined;
  });

  it('sends security headers on every answer', async () => {
    testApp = await createTestApp('sqlite');
    const response = await testApp.app.inject({ method: 'GET', url: '/healthz' });
    expect(response.headers['x-content-type-options']).toBe('nosniff');
    expect(response.headers['x-frame-options']).toBe('SAMEORIGIN');
    expect(response.headers['content-security-policy']).toContain("default-src 'self'");
  });

  it('keeps CORS off unless origins are configured', async () => {
    testApp = await createTestApp('sqlite');
    const closed = await testApp.app.inject({ method: 'GET', url: '/healthz', headers: { origin: 'https://dashboards.example' } });
    expect(closed.headers['access-control-allow-origin']).toBeUndefined();
    await testApp.close();
    testApp = await createTestApp('sqlite', { corsOrigins: ['https://dashboards.example'] });
    const open = await testApp.app.inject({ method: 'GET', url: '/healthz', headers: { origin: 'https://dashboards.example' } });
    expect(open.headers['access-control-allow-origin']).toBe('https://dashboards.example');
    const stranger = await testApp.app.inject({ method: 'GET', url: '/healthz', headers: { origin: 'https://elsewhere.example' } });
    expect(stranger.headers['access-control-allow-origin']).toBeUndefined();
  });

  it('answers 429 with Retry-After past the rate limit', async () => {
    testApp = await createTestApp('sqlite', { rateLimitPerMinute: 3 });
    const statuses: number[] = [];
    for (let attempt = 0; attempt < 4; attempt++) statuses.push((await testApp.app.inject({ method: 'GET', url: '/v1/ingests/none' })).statusCode);
    expect(statuses).toEqual([404, 404, 404, 429]);
    const limited = await testApp.app.inject({ method: 'GET', url: '/v1/ingests/none' });
    expect(limited.headers['content-type']).toMatch(/application\/problem\+json/);
    expect(Number(limited.headers['retry-after'])).toBeGreaterThan(0);
    expect(limited.json().type).toBe('/problems/rate-limited');
  });

  it('answers a malformed URL and a 200-character campaign id with problem details, not the router\'s own JSON', async () => {
    testApp = await createTestApp('sqlite');
    const malformed = await testApp.app.inject({ method: 'POST', url: '/v1/campaigns/%E0%A4%A/contacts', headers: { 'content-type': 'text/csv' }, payload: 'x\n' });
    expect(malformed.statusCode).toBe(400);
    expect(malformed.headers['content-type']).toMatch(/application\/problem\+json/);
    expect(malformed.json().type).toBe('/problems/invalid-request');
    const longId = 'c'.repeat(200);
    const long = await testApp.app.inject({ method: 'POST', url: `/v1/campaigns/${longId}/contacts`, headers: { 'content-type': 'text/csv' }, payload: 'customer_id,contacted_at,converted,revenue\nnobody,2026-01-01,0,\n' });
    expect(long.statusCode).toBe(422);
    expect(long.json().errors[0].reason).toMatch(/not a known customer/);
  });

  it('answers 503 with Retry-After when memory use is past its limit', async () => {
    testApp = await createTestApp('sqlite', { maxHeapUsedMiB: 1, loadSampleIntervalMs: 1000 });
    // Samples once a second here; wait for a sample that sees the heap.
    await new Promise((resolve) => setTimeout(resolve, 1200));
    const response = await testApp.app.inject({ method: 'GET', url: '/v1/ingests/none' });
    expect(response.statusCode).toBe(503);
    expect(response.headers['retry-after']).toBe('10');
    expect(response.json().type).toBe('/problems/unavailable');
  });
});
