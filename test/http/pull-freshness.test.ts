/**
 * The segment table and key checks answer from memory for a short while (SHARED_STATE_CACHE_MS);
 * these tests fail if that memory outlives a change: a change made through the same service is
 * seen by the very next request, one made by another service on the same database (or the
 * command line) once the validity has passed.
 */
import type { FastifyInstance } from 'fastify';
import pino from 'pino';
import { afterEach, describe, expect, it } from 'vitest';
import { buildApp } from '../../src/app.js';
import { createKey, revokeKey } from '../../src/auth/keys.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { TEST_DIALECTS } from '../support/database.js';
import { CSV, upload } from '../support/upload-client.js';

/** Long enough that a test finishing inside it proves the same-service change was not waited out. */
const LONG_VALIDITY_MS = 60_000;
const SHORT_VALIDITY_MS = 150;
const pastValidity = () => new Promise((resolve) => setTimeout(resolve, SHORT_VALIDITY_MS + 100));

describe.each(TEST_DIALECTS)('freshness of the segment table pull on %s', (dialect) => {
  let writer: TestApp | undefined;
  let reader: FastifyInstance | undefined;
  afterEach(async () => {
    await reader?.close();
    reader = undefined;
    await writer?.close();
    writer = undefined;
  });

  /** A second service on the writer's database, as a second process sharing one PostgreSQL database would be. */
  async function secondService(validityMs: number): Promise<FastifyInstance> {
    const app = await buildApp({ config: { ...(writer as TestApp).config, sharedStateCacheMs: validityMs }, database: (writer as TestApp).database.handle, logger: pino({ level: 'silent' }) });
    await app.ready();
    return app;
  }

  /**
   * Customers E1…E80 in two regions and E81…E83 in a third too small to publish, one campaign,
   * a report over region with one snapshot. Erasing E81 removes the small region's row.
   */
  async function reportWithSnapshot(app: FastifyInstance): Promise<string> {
    const customers = ['customer_id,birth_date,region,channel,customer_type'];
    const contacts = ['customer_id,contacted_at,converted,revenue'];
    for (let index = 1; index <= 80; index++) {
      customers.push(`E${index},1980-05-0${(index % 9) + 1},${index % 2 === 0 ? 'Saltmere' : 'Fennwick'},web shop,individual`);
      contacts.push(`E${index},2026-03-02,${index % 4 === 0 ? 1 : 0},${index % 4 === 0 ? '20.00' : '0'}`);
    }
    for (let index = 81; index <= 83; index++) {
      customers.push(`E${index},1980-05-01,Lonemoor,web shop,individual`);
      contacts.push(`E${index},2026-03-02,0,0`);
    }
    expect((await upload(app, '/v1/customers', CSV, customers.join('\n') + '\n')).statusCode).toBe(201);
    expect((await upload(app, '/v1/campaigns/fresh/contacts', CSV, contacts.join('\n') + '\n')).statusCode).toBe(201);
    const created = await app.inject({ method: 'POST', url: '/v1/reports', payload: { name: 'fresh', source: { campaign_ids: ['fresh'] }, dimensions: ['region'] } });
    const reportId = created.json<{ report_id: string }>().report_id;
    expect((await app.inject({ method: 'POST', url: `/v1/reports/${reportId}/refresh` })).statusCode).toBe(201);
    return reportId;
  }

  const pull = (app: FastifyInstance, reportId: string) => app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments?format=csv` });
  const pulledSnapshot = async (app: FastifyInstance, reportId: string) => /segments-(.+)\.csv/.exec(String((await pull(app, reportId)).headers['content-disposition']))?.[1];

  it('serves a new snapshot, a redaction by erasure and a deleted report on the next request when they were made through the same service', async () => {
    writer = await createTestApp(dialect, { maxEventLoopDelayMs: 0, sharedStateCacheMs: LONG_VALIDITY_MS });
    const { app } = writer;
    const reportId = await reportWithSnapshot(app);
    const first = await pulledSnapshot(app, reportId);
    expect(first).toBeDefined();

    const refreshed = (await app.inject({ method: 'POST', url: `/v1/reports/${reportId}/refresh` })).json<{ snapshot_id: string }>();
    expect(refreshed.snapshot_id).not.toBe(first);
    expect(await pulledSnapshot(app, reportId)).toBe(refreshed.snapshot_id);

    const beforeErasure = await pull(app, reportId);
    expect((await app.inject({ method: 'DELETE', url: '/v1/customers/E81' })).statusCode).toBe(204);
    const afterErasure = await pull(app, reportId);
    expect(beforeErasure.body).toContain('Lonemoor');
    expect(afterErasure.body).not.toContain('Lonemoor');
    // What a service holding nothing in memory serves from the same database.
    reader = await secondService(0);
    expect(afterErasure.body).toBe((await pull(reader, reportId)).body);

    expect((await app.inject({ method: 'DELETE', url: `/v1/reports/${reportId}` })).statusCode).toBe(204);
    expect((await pull(app, reportId)).statusCode).toBe(404);
  });

  it('serves a new snapshot, a redaction and a deleted report made by another service on the same database once the validity has passed', async () => {
    writer = await createTestApp(dialect, { maxEventLoopDelayMs: 0 });
    const { app } = writer;
    const reportId = await reportWithSnapshot(app);
    reader = await secondService(SHORT_VALIDITY_MS);
    const first = await pulledSnapshot(reader, reportId);
    expect(first).toBeDefined();

    const refreshed = (await app.inject({ method: 'POST', url: `/v1/reports/${reportId}/refresh` })).json<{ snapshot_id: string }>();
    await pastValidity();
    expect(await pulledSnapshot(reader, reportId)).toBe(refreshed.snapshot_id);

    const beforeErasure = await pull(reader, reportId);
    expect((await app.inject({ method: 'DELETE', url: '/v1/customers/E81' })).statusCode).toBe(204);
    await pastValidity();
    const afterErasure = await pull(reader, reportId);
    expect(beforeErasure.body).toContain('Lonemoor');
    expect(afterErasure.body).not.toContain('Lonemoor');
    expect(afterErasure.body).toBe((await pull(app, reportId)).body);

    expect((await app.inject({ method: 'DELETE', url: `/v1/reports/${reportId}` })).statusCode).toBe(204);
    await pastValidity();
    expect((await pull(reader, reportId)).statusCode).toBe(404);
  });
});

describe.each(TEST_DIALECTS)('freshness of API key checks on %s', (dialect) => {
  let testApp: TestApp | undefined;
  afterEach(async () => {
    await testApp?.close();
    testApp = undefined;
  });

  // A report that does not exist answers 404 to a valid key and 401 to a refused one.
  const pullWith = (key: string) => (testApp as TestApp).app.inject({ method: 'GET', url: '/v1/reports/none/segments?format=csv', headers: { authorization: `Bearer ${key}` } });

  it('refuses a key revoked from the command line once the validity has passed', async () => {
    testApp = await createTestApp(dialect, { authMode: 'keys', sharedStateCacheMs: SHORT_VALIDITY_MS });
    const reader = await createKey(testApp.database.handle.db, 'read', 'dashboard');
    expect((await pullWith(reader.key)).statusCode).toBe(404);
    expect(await revokeKey(testApp.database.handle.db, reader.keyId)).toBe(true);
    await pastValidity();
    expect((await pullWith(reader.key)).statusCode).toBe(401);
  });

  it('refuses a revoked key on the next request when nothing is kept in memory', async () => {
    testApp = await createTestApp(dialect, { authMode: 'keys', sharedStateCacheMs: 0 });
    const reader = await createKey(testApp.database.handle.db, 'read', 'dashboard');
    expect((await pullWith(reader.key)).statusCode).toBe(404);
    expect(await revokeKey(testApp.database.handle.db, reader.keyId)).toBe(true);
    expect((await pullWith(reader.key)).statusCode).toBe(401);
  });

  it('never answers a wrong secret from memory, even for a key it holds', async () => {
    testApp = await createTestApp(dialect, { authMode: 'keys', sharedStateCacheMs: LONG_VALIDITY_MS });
    const reader = await createKey(testApp.database.handle.db, 'read', 'dashboard');
    expect((await pullWith(reader.key)).statusCode).toBe(404);
    const tampered = reader.key.slice(0, -1) + (reader.key.endsWith('A') ? 'B' : 'A');
    expect((await pullWith(tampered)).statusCode).toBe(401);
    expect((await pullWith(reader.key)).statusCode).toBe(404);
  });
});
