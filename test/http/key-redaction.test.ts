/**
 * API keys are written nowhere but the key table: not into request logs, not into problem
 * details, and the first admin key not into the JSON log stream.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Writable } from 'node:stream';
import { afterEach, describe, expect, it } from 'vitest';
import { buildApp } from '../../src/app.js';
import { createKey } from '../../src/auth/keys.js';
import { redactKeys } from '../../src/auth/redact.js';
import { loadConfig } from '../../src/config.js';
import { createLogger } from '../../src/logger.js';
import { startService } from '../../src/server.js';
import { createTestDatabase, type TestDatabase } from '../support/database.js';

function collector(): { stream: Writable; text(): string } {
  const chunks: string[] = [];
  const stream = new Writable({
    write(chunk, _encoding, done) {
      chunks.push(String(chunk));
      done();
    },
  });
  return { stream, text: () => chunks.join('') };
}

describe('redactKeys', () => {
  it('replaces every key-like token, plain or URL-encoded, and leaves other text alone', () => {
    const key = `sgr_0123456789abcdef_${'Zq-_'.repeat(10)}abc`;
    expect(redactKeys(`/v1/reports?api_key=${key}&x=1`)).toBe('/v1/reports?api_key=sgr_[redacted]&x=1');
    expect(redactKeys(`/v1/reports/${encodeURIComponent(key).replaceAll('_', '%5F')}`)).toBe('/v1/reports/sgr_[redacted]');
    expect(redactKeys('/v1/reports/SGR_abc')).toBe('/v1/reports/sgr_[redacted]');
    expect(redactKeys('/v1/reports/sugar_free?region=North')).toBe('/v1/reports/sugar_free?region=North');
  });
});

describe('keys in URLs', () => {
  let database: TestDatabase | undefined;
  afterEach(async () => {
    await database?.destroy();
    database = undefined;
  });

  it('never reach the request log or the problem detail', async () => {
    database = await createTestDatabase('sqlite');
    const log = collector();
    const logger = createLogger('info', { destination: log.stream });
    const app = await buildApp({ config: { ...loadConfig({}), database: database.settings, scheduleEnabled: false }, database: database.handle, logger });
    const issued = await createKey(database.handle.db, 'admin', 'operator');
    const secret = issued.key.split('_').slice(2).join('_');
    const inQuery = await app.inject({ method: 'GET', url: `/v1/reports?api_key=${issued.key}` });
    const inPath = await app.inject({ method: 'GET', url: `/v1/reports/${issued.key}`, headers: { authorization: `Bearer ${issued.key}` } });
    const encoded = await app.inject({ method: 'GET', url: `/v1/reports?api_key=${issued.key.replaceAll('_', '%5F')}` });
    await app.close();

    expect(inQuery.statusCode).toBe(401);
    expect(inQuery.json().instance).toBe('/v1/reports?api_key=sgr_[redacted]');
    expect(inPath.statusCode).toBe(404);
    expect(inPath.json().instance).toBe('/v1/reports/sgr_[redacted]');
    expect(encoded.json().instance).toBe('/v1/reports?api_key=sgr_[redacted]');
    for (const response of [inQuery, inPath, encoded]) {
      expect(response.body).not.toContain(secret);
      expect(response.body).not.toContain(issued.keyId);
    }
    // The requests were logged (with their URLs), but without the key.
    expect(log.text()).toContain('/v1/reports?api_key=sgr_[redacted]');
    expect(log.text()).not.toContain(secret);
  });
});

describe('the first admin key', () => {
  const directories: string[] = [];
  afterEach(() => {
    for (const directory of directories.splice(0)) fs.rmSync(directory, { recursive: true, force: true });
  });

  it('is shown on its own stream as plain text, never in the JSON log', async () => {
    const directory = fs.mkdtempSync(path.join(os.tmpdir(), 'segrank-first-key-'));
    directories.push(directory);
    const log = collector();
    const notice = collector();
    const config = { ...loadConfig({ DATABASE_URL: path.join(directory, 'first.sqlite'), PORT: '0', SCHEDULE_ENABLED: 'false' }) };
    const { app } = await startService(config, { log: log.stream, notice: notice.stream });
    await app.close();
    const key = /sgr_[0-9a-f]{16}_[A-Za-z0-9_-]{43}/.exec(notice.text())?.[0];
    expect(key, notice.text()).toBeDefined();
    const secret = (key as string).split('_').slice(2).join('_');
    expect(log.text()).toContain('first admin key created');
    expect(log.text()).not.toContain(secret);
    for (const line of log.text().trim().split('\n')) expect(() => JSON.parse(line)).not.toThrow();
  });
});
