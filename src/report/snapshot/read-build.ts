/**
 * A whole refresh but its write, for a build worker: read the report's aggregates on the
 * worker's own read-only connection to the SQLite file (read-aggregates.ts, the same read the
 * main thread would make), read the previous snapshot's text, build and serialise. The main
 * thread's event loop is then free for the whole refresh, and its read connection too; the
 * main thread stores the result. WAL lets this connection read while the service writes.
 */
import type { Kysely } from 'kysely';
import { openSqliteReader, sqliteConnectionOf } from '../../db/connect.js';
import type { Database } from '../../db/tables.js';
import * as repository from '../store/index.js';
import { runSnapshotBuild, type BuiltSnapshot, type SnapshotBuildJob } from './build-task.js';
import { readReportAggregates, type ReportAggregates } from './read-aggregates.js';

export interface SnapshotReadJob {
  /** The SQLite database file the service has open. */
  databaseFile: string;
  /** Page cache of the worker's connection, in MiB: the service reader's (SQLITE_READ_CACHE_MIB). */
  readCacheMiB: number;
  /** Who the snapshot is and how it is built; the aggregates are read by the job. */
  input: Omit<SnapshotBuildJob['input'], keyof ReportAggregates>;
  /** Most distinct labels a dimension of a report may have. */
  maxLabelsPerDimension: number;
  /** Milliseconds the refresh ran before this job (on the calling thread's clock). */
  elapsedBeforeReadMs: number;
}

/** A built snapshot and how long its read took. */
export interface ReadAndBuiltSnapshot extends BuiltSnapshot {
  readMs: number;
}

// One connection, to the file of the last job: a service has one database; tests open many, one after another.
let reader: { file: string; db: Kysely<Database> } | null = null;

async function readerOf(file: string, cacheMiB: number): Promise<Kysely<Database>> {
  if (reader?.file === file) return reader.db;
  const previous = reader;
  reader = { file, db: openSqliteReader(file, cacheMiB) };
  if (previous !== null) await previous.db.destroy();
  return reader.db;
}

/**
 * Reads a report's aggregates and previous snapshot from the database file and builds the snapshot.
 * @throws as readReportAggregates and runSnapshotBuild
 */
export async function runSnapshotReadAndBuild(job: SnapshotReadJob): Promise<ReadAndBuiltSnapshot> {
  const readStarted = performance.now();
  const db = await readerOf(job.databaseFile, job.readCacheMiB);
  const { reportId } = job.input.identity;
  const aggregates = await readReportAggregates(db, reportId, job.input.definition, {
    dialect: 'sqlite',
    sqlite: sqliteConnectionOf(db),
    maxLabelsPerDimension: job.maxLabelsPerDimension,
  });
  // The previous snapshot travels no further than this thread: read, parsed and compared here.
  const previousBody = (await repository.findSnapshotBody(db, reportId, 'latest')) ?? null;
  const readMs = performance.now() - readStarted;
  const built = runSnapshotBuild({ input: { ...job.input, ...aggregates }, previousBody, elapsedBeforeBuildMs: job.elapsedBeforeReadMs + readMs });
  return { ...built, readMs };
}
