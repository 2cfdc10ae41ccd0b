/**
 * Test databases for both engines. Every suite that touches SQL runs once per dialect
 * (as kysely's own tests do). PostgreSQL suites use a fresh schema each, dropped afterwards,
 * so test files may run in parallel against one server.
 *
 * Migrated databases are made once and copied: on SQLite each test process migrates one
 * template file and every test database is a copy of it (a file copy takes about 1 ms, a
 * migration about 15 ms). On PostgreSQL each test database still migrates its own schema
 * (about 0.2 s): PostgreSQL cannot copy a schema, and copying a template database instead
 * (CREATE DATABASE … TEMPLATE, then DROP DATABASE) measured no faster here, needs the right to
 * create databases, and fails while anyone is connected to the template.
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
import { openDatabase, sqliteConnectionOf, type DatabaseHandle, type Dialect } from '../../src/db/connect.js';
import { migrateToLatest } from '../../src/db/migrate.js';

const postgresUrl = /^postgres(ql)?:\/\//.test(process.env['DATABASE_URL'] ?? '') ? (process.env['DATABASE_URL'] as string) : undefined;

if (process.env['REQUIRE_POSTGRES'] === '1' && postgresUrl === undefined) {
  throw new Error('REQUIRE_POSTGRES=1 but DATABASE_URL is not a postgres:// URL: the PostgreSQL suites would be skipped');
}

if (process.env['TEST_PROJECT'] === 'unit') {
  throw new Error('a unit suite reached for a test database: list it outside UNIT in vitest.config.ts');
}

/** The dialects this run tests: always SQLite, and PostgreSQL when a server is configured. */
export const TEST_DIALECTS: Dialect[] = postgresUrl === undefined ? ['sqlite'] : ['sqlite', 'postgres'];

export interface TestDatabase {
  settings: DatabaseSettings;
  handle: DatabaseHandle;
  /** Closes the connections and removes the file or schema. */
  destroy(): Promise<void>;
}

/** A migrated database of the dialect, closed and removed by `destroy`. */
export async function createTestDatabase(dialect: Dialect): Promise<TestDatabase> {
  const settings = testDatabaseSettings(dialect);
  if (settings.dialect === 'sqlite') {
    fs.copyFileSync(await migratedSqliteTemplate(), settings.file);
  }
  const handle = await openDatabase(settings);
  if (settings.dialect === 'postgres') await migrateToLatest(handle.db, settings);
  return { settings, handle, destroy: async () => {
    await handle.close();
    await dropTestDatabase(settings);
  } };
}

let sqliteTemplate: Promise<string> | undefined;

/**
 * The file of this process's migrated SQLite template, made on first use and removed when the
 * process exits. Its write-ahead log is checkpointed into the main file before it is copied
 * (closing alone may leave it: the last connection to close is the read-only one).
 */
function migratedSqliteTemplate(): Promise<string> {
  sqliteTemplate ??= (async () => {
    const settings = sqliteSettingsInNewDirectory();
    process.once('exit', () => fs.rmSync(path.dirname(settings.file), { recursive: true, force: true }));
    const handle = await openDatabase(settings);
    try {
      await migrateToLatest(handle.db, settings);
      sqliteConnectionOf(handle.db)?.pragma('wal_checkpoint(TRUNCATE)');
    } finally {
      await handle.close();
    }
    return settings.file;
  })();
  return sqliteTemplate;
}

/** Settings for a new, empty database of the dialect (nothing is created until it is opened). */
export function testDatabaseSettings(dialect: Dialect): DatabaseSettings {
  if (dialect === 'postgres') {
    if (postgresUrl === undefined) throw new Error('no PostgreSQL configured');
    return parseDatabaseUrl(postgresUrl, `test_${randomUUID().replace(/-/g, '').slice(0, 16)}`);
  }
  return sqliteSettingsInNewDirectory();
}

function sqliteSettingsInNewDirectory(): Extract<DatabaseSettings, { dialect: 'sqlite' }> {
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
