/**
 * Opens the database named by the configuration. The rest of the code sees only
 * `Kysely<Database>`; which engine sits behind it is decided here and nowhere else.
 */
import fs from 'node:fs';
import path from 'node:path';
import SqliteDatabase from 'better-sqlite3';
import { Kysely, PostgresDialect, SqliteDialect, sql, type LogEvent } from 'kysely';
import pg from 'pg';
import { registerCopyClients } from './pg-copy.js';
import type { Logger } from '../logger.js';
import { DEFAULT_SQLITE_READ_CACHE_MIB, type DatabaseSettings } from '../config.js';
import type { Database } from './tables.js';
import { prepared } from './prepared.js';

export type Dialect = DatabaseSettings['dialect'];

export interface DatabaseHandle {
  dialect: Dialect;
  /** Reads and writes. On SQLite this is the single writer connection. */
  db: Kysely<Database>;
  /**
   * Reads that must not wait behind a long upload: on SQLite a second, read-only connection
   * (WAL lets it read while a write transaction is open); on PostgreSQL the same pool.
   */
  readDb: Kysely<Database>;
  close(): Promise<void>;
}

// pg returns 64-bit integers and numerics as strings to avoid precision loss; our counts and
// cent sums stay far below 2^53, so numbers are both exact and convenient here.
const PG_INT8_OID = 20;
const PG_NUMERIC_OID = 1700;
const pgTypes = {
  getTypeParser(oid: number, format?: 'text' | 'binary') {
    if (oid === PG_INT8_OID || oid === PG_NUMERIC_OID) return (value: string) => Number(value);
    return pg.types.getTypeParser(oid, format);
  },
};

/**
 * The better-sqlite3 connection behind each SQLite `Kysely` instance this module opened (the
 * writer and the reader). The upload path runs its per-row statements on the writer directly,
 * as cached prepared statements inside the same transaction kysely opened (see
 * src/ingest/repository.ts), and the BI pull resolves the latest snapshot on the reader the
 * same way; everything else goes through kysely. Kept beside the instance rather than in
 * `DatabaseHandle` so that code holding only `Kysely<Database>` can find it.
 */
const sqliteConnections = new WeakMap<Kysely<Database>, SqliteDatabase.Database>();

/**
 * The raw SQLite connection behind `db`, or null when `db` is PostgreSQL (or was not
 * opened by `openDatabase`). Throws nothing.
 *
 * @example sqliteConnectionOf(handle.db) // → the better-sqlite3 Database on SQLite, null on PostgreSQL
 */
export function sqliteConnectionOf(db: Kysely<Database>): SqliteDatabase.Database | null {
  return sqliteConnections.get(db) ?? null;
}

export async function openDatabase(settings: DatabaseSettings, logger?: Logger): Promise<DatabaseHandle> {
  const log = logger ? queryLogger(logger) : undefined;
  if (settings.dialect === 'postgres') return openPostgres(settings, log);
  return openSqlite(settings.file, settings.readCacheMiB ?? DEFAULT_SQLITE_READ_CACHE_MIB, log);
}

/** Page cache of the writer connection (SQLite's default is 2 MiB); see the note where it is set. */
const WRITER_PAGE_CACHE_KIB = 32 * 1024;

function openSqlite(file: string, readCacheMiB: number, log: ((event: LogEvent) => void) | undefined): DatabaseHandle {
  const inMemory = file === ':memory:';
  if (!inMemory) fs.mkdirSync(path.dirname(path.resolve(file)), { recursive: true });
  const writer = new SqliteDatabase(file);
  writer.pragma('journal_mode = WAL');
  // NORMAL in WAL mode keeps the database consistent after a crash; only the last commits
  // before a power loss may be lost, never half of one.
  writer.pragma('synchronous = NORMAL');
  writer.pragma('foreign_keys = ON');
  writer.pragma('busy_timeout = 5000');
  // Inserting contacts touches a leaf page of the report index per cell (thousands of pages);
  // with SQLite's default 2 MiB page cache most inserts evicted and re-read a page. 32 MiB
  // holds them: a bare insert of 1,000,000 contacts took 11.2 s instead of 18.4 s.
  writer.pragma(`cache_size = -${WRITER_PAGE_CACHE_KIB}`);
  const db = new Kysely<Database>({ dialect: new SqliteDialect({ database: writer }), ...(log ? { log } : {}) });
  sqliteConnections.set(db, writer);
  if (inMemory) {
    return { dialect: 'sqlite', db, readDb: db, close: () => db.destroy() };
  }
  const readDb = openSqliteReader(file, readCacheMiB, log);
  return {
    dialect: 'sqlite',
    db,
    readDb,
    async close() {
      await readDb.destroy();
      await db.destroy();
    },
  };
}

/**
 * A read-only connection to a SQLite database file with `cacheMiB` of page cache, as the
 * service's reader (a build worker opens its own to read a report's aggregates off the main
 * thread); `sqliteConnectionOf` finds its raw connection.
 */
export function openSqliteReader(file: string, cacheMiB: number, log?: (event: LogEvent) => void): Kysely<Database> {
  const reader = new SqliteDatabase(file, { readonly: true });
  reader.pragma('busy_timeout = 5000');
  // The cache also bounds the sorter's memory: a GROUP BY over a million rows stays in memory
  // (about a fifth faster) with 32 MiB, and spills to a temporary file with less.
  reader.pragma(`cache_size = -${cacheMiB * 1024}`);
  const readDb = new Kysely<Database>({ dialect: new SqliteDialect({ database: reader }), ...(log ? { log } : {}) });
  sqliteConnections.set(readDb, reader);
  return readDb;
}

async function openPostgres(settings: Extract<DatabaseSettings, { dialect: 'postgres' }>, log: ((event: LogEvent) => void) | undefined): Promise<DatabaseHandle> {
  const { connectionString, schema } = settings;
  if (schema !== 'public') {
    // The schema must exist before the pool's search_path can point into it.
    const setup = new pg.Client({ connectionString });
    await setup.connect();
    try {
      await setup.query(`create schema if not exists "${schema}"`).catch((error: unknown) => {
        // Another instance starting at the same moment created it (unique_violation, duplicate_schema).
        const code = (error as { code?: unknown }).code;
        if (code !== '23505' && code !== '42P06') throw error;
      });
    } finally {
      await setup.end();
    }
  }
  const pool = new pg.Pool({
    connectionString,
    max: settings.poolSize,
    types: pgTypes,
    ...(schema !== 'public' ? { options: `-c search_path=${schema}` } : {}),
  });
  registerCopyClients(pool);
  const db = new Kysely<Database>({ dialect: new PostgresDialect({ pool }), ...(log ? { log } : {}) });
  return { dialect: 'postgres', db, readDb: db, close: () => db.destroy() };
}

function queryLogger(logger: Logger): (event: LogEvent) => void {
  return (event) => {
    if (event.level === 'error') {
      logger.warn({ durationMs: event.queryDurationMillis, err: event.error }, 'query failed');
    } else if (logger.level === 'trace') {
      logger.trace({ durationMs: event.queryDurationMillis, sql: event.query.sql }, 'query');
    }
  };
}

/** A cheap round trip, used by the health check. */
export async function pingDatabase(db: Kysely<Database>): Promise<void> {
  // On SQLite, straight on the connection: kysely queues a query behind an open transaction on
  // it (a refresh's reads), and a liveness probe must not wait for a report.
  const connection = sqliteConnectionOf(db);
  if (connection !== null) {
    prepared(connection, 'select 1', 'first column').get();
    return;
  }
  await sql`select 1`.execute(db);
}
