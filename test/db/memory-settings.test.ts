/** The settings that bound the service's memory: their defaults and the values refused at start-up. */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { ConfigError, loadConfig } from '../../src/config.js';
import { openDatabase, sqliteConnectionOf } from '../../src/db/connect.js';

describe('REFRESH_WORKER_IDLE_MS', () => {
  it('defaults to a minute and reads 0 (keep the worker) or another time', () => {
    expect(loadConfig({}).refreshWorkerIdleMs).toBe(60_000);
    expect(loadConfig({ REFRESH_WORKER_IDLE_MS: '0' }).refreshWorkerIdleMs).toBe(0);
    expect(loadConfig({ REFRESH_WORKER_IDLE_MS: '5000' }).refreshWorkerIdleMs).toBe(5000);
  });

  it.each(['-1', 'soon', '86400001'])('refuses %s by name', (value) => {
    expect(() => loadConfig({ REFRESH_WORKER_IDLE_MS: value })).toThrow(ConfigError);
    expect(() => loadConfig({ REFRESH_WORKER_IDLE_MS: value })).toThrow(/REFRESH_WORKER_IDLE_MS/);
  });
});

describe('SQLITE_READ_CACHE_MIB', () => {
  it('defaults to 2 MiB on SQLite, reads another size, and leaves PostgreSQL alone', () => {
    expect(loadConfig({ DATABASE_URL: 'data/x.sqlite' }).database).toEqual({ dialect: 'sqlite', file: 'data/x.sqlite', readCacheMiB: 2 });
    expect(loadConfig({ DATABASE_URL: 'data/x.sqlite', SQLITE_READ_CACHE_MIB: '32' }).database).toMatchObject({ readCacheMiB: 32 });
    expect(loadConfig({ DATABASE_URL: 'postgres://u@h:5432/d', SQLITE_READ_CACHE_MIB: '32' }).database).not.toHaveProperty('readCacheMiB');
  });

  it.each(['0', 'big', '4097'])('refuses %s by name', (value) => {
    expect(() => loadConfig({ SQLITE_READ_CACHE_MIB: value })).toThrow(ConfigError);
    expect(() => loadConfig({ SQLITE_READ_CACHE_MIB: value })).toThrow(/SQLITE_READ_CACHE_MIB/);
  });

  it('sizes the read connection\'s page cache and leaves the writer\'s', async () => {
    const directory = fs.mkdtempSync(path.join(os.tmpdir(), 'segrank-read-cache-'));
    const handle = await openDatabase({ dialect: 'sqlite', file: path.join(directory, 'cache.sqlite'), readCacheMiB: 5 });
    try {
      expect(sqliteConnectionOf(handle.readDb)?.pragma('cache_size', { simple: true })).toBe(-5 * 1024);
      expect(sqliteConnectionOf(handle.db)?.pragma('cache_size', { simple: true })).toBe(-32 * 1024);
    } finally {
      await handle.close();
      fs.rmSync(directory, { recursive: true, force: true });
    }
  });
});
