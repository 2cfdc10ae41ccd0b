/**
 * Test databases for both engines. Every suite that touches SQL runs once per dialect
 * (as kysely's own tests do). PostgreSQL suites use a fresh schema each, dropped afterwards,
 * so test files may run in parallel against one server.
 *
 * PostgreSQL is reached through DATABASE_URL (a postgres:// URL). Without it the PostgreSQL
 * suites are skipped locally — unless REQUIRE_POSTGRES=1, as CI sets, where that is an error.
 */
import { randomUUID } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import pg from 'pg';
import { parseDatabaseUrl, type DatabaseSettings } from '../../src/config.js';
import { openDatabase, type DatabaseHandle, type Dialect } from '../../src/db/connect.js';
import { migrateToLatest } from '../../src/db/migrate.js';

const postgresUrl = /^postgres(ql)?:\/\//.test(process.env['DATABASE_URL'] ?? '') ? (process.env['DATABASE_URL'] as string) : undefined;

if (process.env['REQUIRE_POSTGRES'] === '1' && postgresUrl === undefined) {
  throw new Error('REQUIRE_POSTGRES=1 but DATABASE_URL is not a postgres:// URL: the PostgreSQL suites would be skipped');
}

/** The dialects this run tests: always SQLite, and PostgreSQL when a server is configured. */
export const TEST_DIALECTS: Dialect[] = postgresUrl === undefined ? ['sqlite'] : ['sqlite', 'postgres'];

export interface TestDatabase {
  settings: DatabaseSettings;
  handle: DatabaseHandle;
  /** Closes the connections and removes the file or schema. */
  destroy(): Promise<void>;
}

export async function createTestDatabase(dialect: Dialect): Promise<TestDatabase> {
  const settings = testDatabaseSettings(dialect);
  const handle = await openDatabase(settings);
  await migrateToLatest(handle.db, settings);
  return { settings, handle, destroy: async () => {
    await handle.close();
    await dropTestDatabase(settings);
  } };
}

/** Settings for a new, empty database of the dialect (nothing is created until it is opened). */
export function testDatabaseSettings(dialect: Dialect): DatabaseSettings {
  if (dialect === 'postgres') {
    if (postgresUrl === undefined) throw new Error('no PostgreSQL configured');
    return parseDatabaseUrl(postgresUrl, `test_${randomUUID().replace(/-/g, '').slice(0, 16)}`);
  }
  const directory = fs.mkdtempSync(path.join(os.tmpdir(), 'segrank-test-'));
  return { dialect: 'sqlite', file: path.join(directory, 'test.sqlite') };
}

export async function dropTestDatabase(settings: DatabaseSettings): Promise<void> {
  if (settings.dialect === 'sqlite') {
    fs.rmSync(path.dirname(settings.file), { recursive: true, force: true });
    return;
  }
  const client = new pg.Client({ connectionString: settings.connectionString });
  await client.connect();
  try {
    await client.query(`drop schema if exists "${settings.schema}" cascade`);
  } finally {
    await client.end();
  }
}
