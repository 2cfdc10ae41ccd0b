import { Writable } from 'node:stream';
import pino from 'pino';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { buildApp } from '../../src/app.js';
import { createKey, revokeKey, verifyKey } from '../../src/auth/keys.js';
import { ConfigError, loadConfig } from '../../src/config.js';
import { ROUTE_ACCESS, presentedKey } from '../../src/http/auth.js';
import { REDACTED_PATHS } from '../../src/logger.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { TEST_DIALECTS, createTestDatabase, type TestDatabase } from '../support/database.js';

const customersCsv = 'customer_id,region,channel,customer_type\nK-1,Saltmere,web shop,individual\n';

describe.each(TEST_DIALECTS)('API keys and roles on %s', (dialect) => {
  let testApp: TestApp;
  beforeEach(async () => {
    testApp = await createTestApp(dialect, { authMode: 'keys' });
  });
  afterEach(async () => {
    await testApp.close();
  });

  const upload = (authorization?: string) =>
    testApp.app.inject({
      method: 'POST',
      url: '/v1/customers',
      headers: { 'content-type': 'text/csv', ...(authorization ? { authorization } : {}) },
      payload: customersCsv,
    });

  it('answers 401 with a problem detail when no key is sent', async () => {
    const response = await upload();
    expect(response.statusCode).toBe(401);
    expect(response.headers['content-type']).toMatch(/application\/problem\+json/);
    expect(response.headers['www-authenticate']).toBe('Bearer');
    expect(response.json().type).toBe('/problems/unauthorized');
  });

  it('answers 401 for a key that does not exist', async () => {
    const response = await upload(`Bearer sgr_0123456789abcdef_${'A'.repeat(43)}`);
    expect(response.statusCode).toBe(401);
  });

  it('answers 401 for a key whose secret is wrong', async () => {
    const issued = await createKey(testApp.database.handle.db, 'ingest', 'uploads');
    const tampered = issued.key.slice(0, -1) + (issued.key.endsWith('A') ? 'B' : 'A');
    expect((await upload(`Bearer ${tampered}`)).statusCode).toBe(401);
  });

  it('answers 403 when the key has the wrong role', async () => {
    const reader = await createKey(testApp.database.handle.db, 'read', 'dashboard');
    const response = await upload(`Bearer ${reader.key}`);
    expect(response.statusCode).toBe(403);
    expect(response.json().detail).toMatch(/needs a key with role ingest/);
  });

  it('accepts a key with the right role, and an admin key anywhere', async () => {
    const ingest = await createKey(testApp.database.handle.db, 'ingest', 'uploads');
    expect((await upload(`Bearer ${ingest.key}`)).statusCode).toBe(201);
    const admin = await createKey(testApp.database.handle.db, 'admin', 'operator');
    const erase = await testApp.app.inject({ method: 'DELETE', url: '/v1/customers/K-1', headers: { authorization: `Bearer ${admin.key}` } });
    expect(erase.statusCode).toBe(204);
    const byIngestKey = await testApp.app.inject({ method: 'DELETE', url: '/v1/customers/K-1', headers: { authorization: `Bearer ${ingest.key}` } });
    expect(byIngestKey.statusCode).toBe(403);
  });

  it('refuses a key once it is revoked', async () => {
    const ingest = await createKey(testApp.database.handle.db, 'ingest', 'uploads');
    expect(await revokeKey(testApp.database.handle.db, ingest.keyId)).toBe(true);
    expect((await upload(`Bearer ${ingest.key}`)).statusCode).toBe(401);
  });

  it('accepts the key as the password of Basic credentials where a browser reads, and nowhere else', async () => {
    const reader = await createKey(testApp.database.handle.db, 'read', 'dashboard');
    const basic = (key: string) => `Basic ${Buffer.from(`anyone:${key}`).toString('base64')}`;
    const pull = await testApp.app.inject({ method: 'GET', url: '/v1/reports/none/segments', headers: { authorization: basic(reader.key) } });
    expect(pull.statusCode).toBe(404); // past authentication: the report does not exist
    const page = await testApp.app.inject({ method: 'GET', url: '/reports/none', headers: { authorization: basic(reader.key) } });
    expect(page.statusCode).toBe(404);
    expect((await testApp.app.inject({ method: 'GET', url: '/v1/reports/none/segments', headers: { authorization: basic('wrong') } })).statusCode).toBe(401);
    // A browser resends Basic credentials on any request, another site's included: nothing else takes them.
    const ingest = await createKey(testApp.database.handle.db, 'ingest', 'uploads');
    const uploaded = await upload(basic(ingest.key));
    expect(uploaded.statusCode).toBe(401);
    expect(uploaded.json().detail).toMatch(/Basic credentials are accepted only when reading the report page/);
    expect((await testApp.app.inject({ method: 'GET', url: '/v1/reports', headers: { authorization: basic(reader.key) } })).statusCode).toBe(401);
  });

  it('asks a browser following a link to the CSV pull for Basic credentials', async () => {
    const response = await testApp.app.inject({ method: 'GET', url: '/v1/reports/any/segments?format=csv', headers: { accept: 'text/html,application/xhtml+xml,*/*;q=0.8' } });
    expect(response.statusCode).toBe(401);
    expect(response.headers['www-authenticate']).toMatch(/^Basic realm="segrank"/);
  });

  it('keeps public routes open', async () => {
    expect((await testApp.app.inject({ method: 'GET', url: '/healthz' })).statusCode).toBe(200);
    expect((await testApp.app.inject({ method: 'GET', url: '/openapi.yaml' })).statusCode).toBe(200);
  });

  it('stores only a hash of the secret', async () => {
    const issued = await createKey(testApp.database.handle.db, 'read', 'dashboard');
    const rows = await testApp.database.handle.db.selectFrom('api_keys').selectAll().execute();
    const stored = JSON.stringify(rows);
    const secret = issued.key.split('_').slice(2).join('_');
    expect(stored).not.toContain(secret);
    expect(rows[0]?.secret_sha256).toMatch(/^[0-9a-f]{64}$/);
    expect(await verifyKey(testApp.database.handle.db, issued.key)).toEqual({ keyId: issued.keyId, role: 'read' });
  });
});

describe('the access table', () => {
  let database: TestDatabase;
  beforeEach(async () => {
    database = await createTestDatabase('sqlite');
  });
  afterEach(async () => {
    await database.destroy();
  });

  it('lists every registered route, so none falls back to admin-only by accident', async () => {
    const app = await buildApp({ config: { ...loadConfig({}), database: database.settings }, database: database.handle, logger: pino({ level: 'silent' }) });
    await app.ready();
    const unlisted = app.registeredRoutes.map((route) => `${route.method} ${route.url}`).filter((route) => !(route in ROUTE_ACCESS));
    await app.close();
    expect(unlisted).toEqual([]);
  });

  it('never writes the bearer header into a log line', async () => {
    const lines: string[] = [];
    const sink = new Writable({ write(chunk, _encoding, done) { lines.push(String(chunk)); done(); } });
    const logger = pino({ level: 'info', redact: { paths: REDACTED_PATHS, censor: '[redacted]' }, serializers: { req: (request: { headers: unknown }) => ({ headers: request.headers }) } }, sink);
    const app = await buildApp({ config: { ...loadConfig({}), database: database.settings }, database: database.handle, logger });
    const secret = `sgr_0123456789abcdef_${'Z'.repeat(43)}`;
    await app.inject({ method: 'GET', url: '/v1/reports', headers: { authorization: `Bearer ${secret}` } });
    await app.close();
    expect(lines.length).toBeGreaterThan(0);
    expect(lines.join('')).not.toContain(secret);
    expect(lines.join('')).toContain('[redacted]');
  });
});

describe('presentedKey', () => {
  it('reads bearer tokens and Basic passwords, and nothing else', () => {
    expect(presentedKey('Bearer sgr_x')).toBe('sgr_x');
    expect(presentedKey(`Basic ${Buffer.from('user:sgr_y').toString('base64')}`)).toBe('sgr_y');
    expect(presentedKey(`Basic ${Buffer.from('no-colon').toString('base64')}`)).toBeNull();
    expect(presentedKey('Digest abc')).toBeNull();
    expect(presentedKey(undefined)).toBeNull();
  });
});

describe('AUTH_MODE', () => {
  it('refuses open mode on an address other than loopback', () => {
    expect(() => loadConfig({ AUTH_MODE: 'open', HOST: '0.0.0.0' })).toThrow(ConfigError);
    expect(loadConfig({ AUTH_MODE: 'open', HOST: '127.0.0.1' }).authMode).toBe('open');
    expect(loadConfig({}).authMode).toBe('keys');
  });
});
