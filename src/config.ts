/**
 * Every setting of the service, its type and its default, read once at start-up from the
 * environment. A bad value stops the service with a message that names the variable and
 * says what would be accepted, rather than surfacing later as an odd failure.
 */
import os from 'node:os';
import path from 'node:path';

export type DatabaseSettings =
  | {
      dialect: 'sqlite';
      file: string;
      /** Page cache of each read-only connection (the service's reader, a build worker's), in MiB; DEFAULT_SQLITE_READ_CACHE_MIB when absent. */
      readCacheMiB?: number;
    }
  | {
      dialect: 'postgres';
      connectionString: string;
      schema: string;
      /** Most connections the service holds open to PostgreSQL (uploads, refreshes and reads share them). */
      poolSize: number;
    };

export type LogLevel = 'fatal' | 'error' | 'warn' | 'info' | 'debug' | 'trace' | 'silent';

export interface Config {
  host: string;
  port: number;
  database: DatabaseSettings;
  logLevel: LogLevel;
  /** Largest accepted request body, in bytes. */
  maxUploadBytes: number;
  /** Largest number of data rows accepted in one upload. */
  maxUploadRows: number;
  /** Longest pause, in milliseconds, in the arrival of an upload body before it is answered 408. */
  uploadIdleTimeoutMs: number;
  /** Folder for upload bodies larger than 4 MiB while they arrive (removed after each upload). */
  uploadSpoolDir: string;
  /** Rows between two progress log lines during a long upload. */
  ingestProgressEveryRows: number;
  /** Cron expression of the weekly refresh. */
  refreshCron: string;
  /** IANA time zone in which the refresh cron expression is read. */
  refreshTimeZone: string;
  /** Whether the schedule runs in this process at all (off for one-shot tools). */
  scheduleEnabled: boolean;
  /** Milliseconds to wait for in-flight requests at shutdown before closing anyway. */
  shutdownGraceMs: number;
  /**
   * `keys`: every non-public route needs an API key. `open`: no keys, for a demo on this
   * machine only — refused unless the service listens on a loopback address.
   */
  authMode: 'keys' | 'open';
  /**
   * How long, in milliseconds, this process may answer from memory what is stored in the
   * database and can change elsewhere (another service process on the same PostgreSQL
   * database, the command line, the schedule): whether an API key is valid, and which snapshot
   * of a report the segment table serves (latest, redacted, or gone with its report). Changes
   * made through this process's own API are seen by the next request; 0 reads the database
   * on every request.
   */
  sharedStateCacheMs: number;
  /** Requests per window per API key (every non-public route in open mode counts as one key); 0 turns the limit off. */
  rateLimitPerKey: number;
  /**
   * Requests per window per client address that carry no valid key: public routes (but
   * `/healthz`), requests without a key and failed authentications; 0 turns the limit off.
   */
  rateLimitPerAddress: number;
  /** Length of the rate-limit window, in seconds. */
  rateLimitWindowSeconds: number;
  /** Longest time one request may take, in milliseconds (an upload of 200 MB included). */
  requestTimeoutMs: number;
  /** Event-loop delay above which new requests get 503 with Retry-After; 0 turns the check off. */
  maxEventLoopDelayMs: number;
  /** Heap use above which new requests get 503 with Retry-After, in MiB; 0 turns the check off. */
  maxHeapUsedMiB: number;
  /** Milliseconds over which the event-loop delay and heap use are sampled for those two checks. */
  loadSampleIntervalMs: number;
  /** Origins allowed to call the API from a browser; empty means CORS stays off. */
  corsOrigins: string[];
  /**
   * Smallest number of units a published figure may describe: segments, age × value cells,
   * histogram bars and dimension values below it are withheld (small-cell suppression).
   */
  publicationThreshold: number;
  /** Most distinct labels one dimension of a report may have; a report over it is refused. */
  maxLabelsPerDimension: number;
  /**
   * Worker threads that build and serialise snapshots, so a refresh does not hold the event
   * loop; 0 builds them on the main thread.
   */
  refreshWorkers: number;
  /** Longest a snapshot build (on a SQLite file, with its read) may take in a worker before the worker is replaced and the refresh fails, in milliseconds. */
  refreshBuildTimeoutMs: number;
  /**
   * Milliseconds a snapshot build worker may wait for its next refresh before it is stopped and
   * its memory (its own heap, compiled modules and SQLite connection) freed; 0 keeps it running.
   */
  refreshWorkerIdleMs: number;
  /**
   * How far, in percent, V8's heap may grow past what its last full collection kept before it
   * collects again (src/heap-growth.ts); 0 leaves V8's own factor.
   */
  heapGrowingPercent: number;
}

export class ConfigError extends Error {
  override name = 'ConfigError';
}

const LOG_LEVELS: readonly LogLevel[] = ['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent'];

/** Fewer units than this are never described on their own (see README, Privacy). */
export const DEFAULT_PUBLICATION_THRESHOLD = 10;
const DEFAULT_MAX_LABELS_PER_DIMENSION = 100;

/**
 * Ten connections: one per upload in flight, a refresh, and the BI pulls' one short question
 * each. Past the server's cores more connections only queue inside PostgreSQL instead of here.
 */
export const DEFAULT_DATABASE_POOL_SIZE = 10;

/** See src/heap-growth.ts and bench/RESULTS.md for what it was measured to cost and save. */
const DEFAULT_HEAP_GROWING_PERCENT = 50;

/**
 * A minute: refreshes that follow one another (a schedule's reports, a user's retries) share one
 * worker, and a service that refreshes weekly does not hold its 140 MiB for the week. The
 * refresh that starts a new worker waits for it: 3.4–5.6 s run from source through tsx,
 * 1.1–1.4 s compiled, on a loaded 2-core machine (bench/RESULTS.md).
 */
const DEFAULT_REFRESH_WORKER_IDLE_MS = 60_000;

/**
 * SQLite's own default. A campaign refresh reads the kept counts once, front to back, and the BI
 * pull one snapshot, so a larger cache on a read-only connection only holds pages read once:
 * 32 MiB per connection cost up to 64 MiB of resident memory (bench/RESULTS.md). A report
 * grouped in the database over a million rows (an attribute or sales report) sorts in
 * memory with a larger cache and may want one.
 */
export const DEFAULT_SQLITE_READ_CACHE_MIB = 2;

const DEFAULT_SQLITE_FILE = path.join('data', 'segrank.sqlite');

/** The database `npm run demo` uses when DATABASE_URL is not set; removed and rebuilt at each demo start. */
export const DEMO_SQLITE_FILE = path.join('data', 'demo.sqlite');

type Environment = Record<string, string | undefined>;

/** Reads the whole configuration from `env`; throws ConfigError naming the first bad variable. */
export function loadConfig(env: Environment = process.env): Config {
  const host = readString(env, 'HOST', '127.0.0.1');
  return {
    host,
    port: readInteger(env, 'PORT', 3000, { min: 0, max: 65_535 }),
    database: withReadCache(
      parseDatabaseUrl(env['DATABASE_URL'], env['DATABASE_SCHEMA'], readInteger(env, 'DATABASE_POOL_SIZE', DEFAULT_DATABASE_POOL_SIZE, { min: 1, max: 1000 })),
      readInteger(env, 'SQLITE_READ_CACHE_MIB', DEFAULT_SQLITE_READ_CACHE_MIB, { min: 1, max: 4096 }),
    ),
    logLevel: readChoice(env, 'LOG_LEVEL', LOG_LEVELS, 'info'),
    maxUploadBytes: readInteger(env, 'MAX_UPLOAD_BYTES', 256 * 1024 * 1024, { min: 1024, max: 4 * 1024 ** 3 }),
    maxUploadRows: readInteger(env, 'MAX_UPLOAD_ROWS', 2_000_000, { min: 1, max: 100_000_000 }),
    uploadIdleTimeoutMs: readInteger(env, 'UPLOAD_IDLE_TIMEOUT_MS', 30_000, { min: 100, max: 3_600_000 }),
    uploadSpoolDir: readString(env, 'UPLOAD_SPOOL_DIR', os.tmpdir()),
    ingestProgressEveryRows: readInteger(env, 'INGEST_PROGRESS_EVERY_ROWS', 100_000, { min: 1, max: 100_000_000 }),
    refreshCron: readString(env, 'REFRESH_CRON', '0 6 * * 1'),
    refreshTimeZone: readTimeZone(env, 'REFRESH_TIME_ZONE', 'UTC'),
    scheduleEnabled: readBoolean(env, 'SCHEDULE_ENABLED', true),
    shutdownGraceMs: readInteger(env, 'SHUTDOWN_GRACE_MS', 10_000, { min: 0, max: 600_000 }),
    authMode: readAuthMode(env, host),
    sharedStateCacheMs: readInteger(env, 'SHARED_STATE_CACHE_MS', 1000, { min: 0, max: 60_000 }),
    rateLimitPerKey: readInteger(env, 'RATE_LIMIT_PER_KEY', 6000, { min: 0, max: 10_000_000 }),
    rateLimitPerAddress: readInteger(env, 'RATE_LIMIT_PER_ADDRESS', 600, { min: 0, max: 10_000_000 }),
    rateLimitWindowSeconds: readInteger(env, 'RATE_LIMIT_WINDOW_SECONDS', 60, { min: 1, max: 86_400 }),
    requestTimeoutMs: readInteger(env, 'REQUEST_TIMEOUT_MS', 600_000, { min: 1000, max: 3_600_000 }),
    maxEventLoopDelayMs: readInteger(env, 'MAX_EVENT_LOOP_DELAY_MS', 2000, { min: 0, max: 600_000 }),
    maxHeapUsedMiB: readInteger(env, 'MAX_HEAP_USED_MIB', 0, { min: 0, max: 1_000_000 }),
    loadSampleIntervalMs: readInteger(env, 'LOAD_SAMPLE_INTERVAL_MS', 5000, { min: 10, max: 600_000 }),
    corsOrigins: readOrigins(env, 'CORS_ORIGINS'),
    publicationThreshold: readInteger(env, 'PUBLICATION_THRESHOLD', DEFAULT_PUBLICATION_THRESHOLD, { min: 1, max: 1_000_000 }),
    maxLabelsPerDimension: readInteger(env, 'MAX_LABELS_PER_DIMENSION', DEFAULT_MAX_LABELS_PER_DIMENSION, { min: 2, max: 100_000 }),
    refreshWorkers: readInteger(env, 'REFRESH_WORKERS', 1, { min: 0, max: 16 }),
    refreshBuildTimeoutMs: readInteger(env, 'REFRESH_BUILD_TIMEOUT_MS', 120_000, { min: 1000, max: 3_600_000 }),
    refreshWorkerIdleMs: readInteger(env, 'REFRESH_WORKER_IDLE_MS', DEFAULT_REFRESH_WORKER_IDLE_MS, { min: 0, max: 86_400_000 }),
    heapGrowingPercent: readInteger(env, 'HEAP_GROWING_PERCENT', DEFAULT_HEAP_GROWING_PERCENT, { min: 0, max: 1000 }),
  };
}

function withReadCache(settings: DatabaseSettings, readCacheMiB: number): DatabaseSettings {
  return settings.dialect === 'sqlite' ? { ...settings, readCacheMiB } : settings;
}

function readOrigins(env: Environment, name: string): string[] {
  const raw = env[name]?.trim();
  if (raw === undefined || raw === '') return [];
  return raw.split(',').map((origin) => {
    const value = origin.trim();
    let parsed: URL;
    try {
      parsed = new URL(value);
    } catch {
      throw new ConfigError(`${name} must be a comma-separated list of origins such as https://dashboards.example, got "${value}"`);
    }
    if (parsed.origin !== value.replace(/\/$/, '')) throw new ConfigError(`${name}: "${value}" is not a bare origin (scheme://host[:port])`);
    return parsed.origin;
  });
}

function isLoopbackHost(host: string): boolean {
  return host === 'localhost' || host === '::1' || /^127\.\d{1,3}\.\d{1,3}\.\d{1,3}$/.test(host);
}

function readAuthMode(env: Environment, host: string): 'keys' | 'open' {
  const mode = readChoice(env, 'AUTH_MODE', ['keys', 'open'] as const, 'keys');
  if (mode === 'open' && !isLoopbackHost(host)) {
    throw new ConfigError(`AUTH_MODE=open is only allowed when HOST is a loopback address (127.0.0.1, ::1, localhost), got HOST=${host}`);
  }
  return mode;
}

/**
 * A `postgres://` or `postgresql://` URL selects PostgreSQL; anything else is an SQLite file
 * path (`:memory:` included). Unset means the embedded default file under `./data/`. The pool
 * size applies to PostgreSQL only (SQLite has one writer and one reader connection).
 */
export function parseDatabaseUrl(url: string | undefined, schema: string | undefined, poolSize = DEFAULT_DATABASE_POOL_SIZE): DatabaseSettings {
  const value = url?.trim();
  if (value === undefined || value === '') return { dialect: 'sqlite', file: DEFAULT_SQLITE_FILE };
  if (/^postgres(ql)?:\/\//i.test(value)) {
    try {
      new URL(value);
    } catch {
      throw new ConfigError(`DATABASE_URL is not a valid PostgreSQL URL: expected postgres://user@host:port/database`);
    }
    const schemaName = schema?.trim() || 'public';
    if (!/^[a-z_][a-z0-9_]{0,62}$/.test(schemaName)) {
      throw new ConfigError(`DATABASE_SCHEMA must be a lower-case SQL identifier (letters, digits, _), got "${schemaName}"`);
    }
    return { dialect: 'postgres', connectionString: value, schema: schemaName, poolSize };
  }
  if (/^[a-z][a-z0-9+.-]*:\/\//i.test(value)) {
    throw new ConfigError(`DATABASE_URL scheme is not supported: use postgres://… or an SQLite file path`);
  }
  return { dialect: 'sqlite', file: value.replace(/^sqlite:/i, '') };
}

function readString(env: Environment, name: string, fallback: string): string {
  const value = env[name]?.trim();
  return value === undefined || value === '' ? fallback : value;
}

function readInteger(env: Environment, name: string, fallback: number, range: { min: number; max: number }): number {
  const raw = env[name]?.trim();
  if (raw === undefined || raw === '') return fallback;
  if (!/^\d+$/.test(raw)) throw new ConfigError(`${name} must be a whole number from ${range.min} to ${range.max}, got "${raw}"`);
  const value = Number(raw);
  if (value < range.min || value > range.max) {
    throw new ConfigError(`${name} must be from ${range.min} to ${range.max}, got ${value}`);
  }
  return value;
}

function readBoolean(env: Environment, name: string, fallback: boolean): boolean {
  const raw = env[name]?.trim().toLowerCase();
  if (raw === undefined || raw === '') return fallback;
  if (['1', 'true', 'yes', 'on'].includes(raw)) return true;
  if (['0', 'false', 'no', 'off'].includes(raw)) return false;
  throw new ConfigError(`${name} must be true or false, got "${raw}"`);
}

function readChoice<T extends string>(env: Environment, name: string, choices: readonly T[], fallback: T): T {
  const raw = env[name]?.trim().toLowerCase();
  if (raw === undefined || raw === '') return fallback;
  const match = choices.find((choice) => choice === raw);
  if (match === undefined) throw new ConfigError(`${name} must be one of ${choices.join(', ')}, got "${raw}"`);
  return match;
}

function readTimeZone(env: Environment, name: string, fallback: string): string {
  const value = readString(env, name, fallback);
  try {
    new Intl.DateTimeFormat('en', { timeZone: value });
  } catch {
    throw new ConfigError(`${name} must be an IANA time zone such as Europe/Berlin or UTC, got "${value}"`);
  }
  return value;
}
