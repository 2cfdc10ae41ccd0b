/**
 * Regression: while the service sheds load, /healthz answered 500 instead of 503. The load
 * handler sends problem details, and the health route's own 503 schema (a health body) rejected
 * them during serialization. openapi.yaml declares both 503 bodies for /healthz.
 */
import { afterEach, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '../support/app.js';

describe('health check under load', () => {
  let testApp: TestApp | undefined;
  afterEach(async () => {
    await testApp?.close();
    testApp = undefined;
  });

  it('answers /healthz under load with 503 problem details rather than a 500', async () => {
    testApp = await createTestApp('sqlite', { maxHeapUsedMiB: 1, loadSampleIntervalMs: 1000 });
    // Samples once a second here; wait for a sample that sees the heap over 1 MiB.
    await new Promise((resolve) => setTimeout(resolve, 1200));
    const response = await testApp.app.inject({ method: 'GET', url: '/healthz' });
    expect(response.statusCode, response.body).toBe(503);
    expect(response.headers['content-type']).toMatch(/^application\/problem\+json/);
    expect(response.headers['retry-after']).toBe('10');
    expect(response.json()).toMatchObject({ type: '/problems/unavailable', title: 'Service unavailable', status: 503 });
  });
});
