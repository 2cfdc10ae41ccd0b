import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PROBLEM_TYPES, problemTypeUri, type ProblemSlug } from '../../src/http/problems.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { HTTP_METHODS, checkResponse, contract, toContractPath } from '../support/contract.js';

describe('openapi.yaml, the contract', () => {
  let testApp: TestApp;
  beforeAll(async () => {
    testApp = await createTestApp('sqlite');
  });
  afterAll(async () => {
    await testApp.close();
  });

  it('lists every route the service registers', () => {
    const missing = testApp.app.registeredRoutes
      .filter((route) => !contract.paths[toContractPath(route.url)]?.[route.method.toLowerCase()])
      .map((route) => `${route.method} ${route.url}`);
    expect(missing).toEqual([]);
  });

  it('lists no operation the service does not serve', () => {
    const served = new Set(testApp.app.registeredRoutes.map((route) => `${route.method.toLowerCase()} ${toContractPath(route.url)}`));
    const documentedOnly = Object.entries(contract.paths).flatMap(([path, operations]) =>
      Object.keys(operations)
        .filter((method) => HTTP_METHODS.includes(method))
        .map((method) => `${method} ${path}`)
        .filter((operation) => !served.has(operation)),
    );
    expect(documentedOnly).toEqual([]);
  });

  it('names every problem type of the catalogue, and no other', () => {
    const problemSchema = contract.components.schemas['Problem'] as { properties: { type: { enum: string[] } } };
    const documented = [...problemSchema.properties.type.enum].sort();
    const catalogued = (Object.keys(PROBLEM_TYPES) as ProblemSlug[]).map(problemTypeUri).sort();
    expect(documented).toEqual(catalogued);
  });

  it('is served at GET /openapi.yaml', async () => {
    const response = await testApp.app.inject({ method: 'GET', url: '/openapi.yaml' });
    expect(response.statusCode).toBe(200);
    expect(response.headers['content-type']).toMatch(/^application\/yaml/);
    expect(response.body).toMatch(/^openapi: 3\.1\.0/);
  });

  it('rejects a receipt with a field the schema does not allow', () => {
    const receipt = {
      ingest_id: 'a', kind: 'customers', campaign_id: null, on_error: 'reject', rows: 1, inserted: 1, updated: 0, unchanged: 0,
      rejected: 0, sha256: 'f'.repeat(64), received_at: '2026-01-01T00:00:00.000Z', duration_ms: 1, secret: 'leaked',
    };
    const violations = checkResponse('GET', '/v1/ingests/:ingest_id', 200, 'application/json', JSON.stringify(receipt));
    expect(violations.join('\n')).toMatch(/must NOT have additional properties/);
  });

  it('rejects a status code the operation does not declare', () => {
    expect(checkResponse('GET', '/healthz', 418, 'application/json', '{}')).toEqual(['GET /healthz → 418: status 418 is not declared in openapi.yaml']);
  });

  it('accepts the health answer and a problem detail as declared', async () => {
    const health = await testApp.app.inject({ method: 'GET', url: '/healthz' });
    expect(health.json()).toEqual({ status: 'ok', database: 'ok' });
    expect(checkResponse('GET', '/healthz', health.statusCode, health.headers['content-type'] as string, health.body)).toEqual([]);
    const missing = await testApp.app.inject({ method: 'GET', url: '/v1/ingests/nope' });
    expect(missing.statusCode).toBe(404);
    expect(missing.headers['content-type']).toMatch(/^application\/problem\+json/);
    expect(checkResponse('GET', '/v1/ingests/:ingest_id', missing.statusCode, missing.headers['content-type'] as string, missing.body)).toEqual([]);
  });
});
