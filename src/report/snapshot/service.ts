/**
 * Report definitions and snapshots as the API sees them: save and read definitions, and
 * compute a snapshot (read the aggregates in one consistent read, build, store).
 */
import { randomUUID } from 'node:crypto';
import type { Kysely } from 'kysely';
import { sqliteConnectionOf, type DatabaseHandle, type Dialect } from '../../db/connect.js';
import type { Database, ReportsTable, SnapshotTrigger } from '../../db/tables.js';
import type { Logger } from '../../logger.js';
import { labelCounts } from '../../segments/index.js';
import type { SnapshotBuilder } from './build-pool.js';
import type { BuiltSnapshot } from './build-task.js';
import { dimensionsOverLimit } from './label-limit.js';
import { populationSource, readReportAggregates } from './read-aggregates.js';
import { InvalidDefinitionError, normalizeDefinition, withCurrentDefaults, type ReportDefinition } from '../definition/index.js';
import { publishedText, readStoredSnapshot } from './stored.js';
import * as repository from '../store/index.js';
import type { Report, Snapshot } from '../shapes/index.js';

export interface ReportDependencies {
  dialect: Dialect;
  /** reads and writes */
  db: Kysely<Database>;
  /** reads that must not wait behind uploads (SQLite: a second connection) */
  readDb: Kysely<Database>;
  logger: Logger;
  now: () => Date;
  /** No published figure describes fewer units than this (withholding.ts). */
  publicationThreshold: number;
  /** Most distinct labels a dimension of a report may have. */
  maxLabelsPerDimension: number;
  /** Where snapshots are built and serialised (worker threads, so a refresh leaves the event loop free). */
  snapshots: SnapshotBuilder;
}

export type ReportLimits = Pick<ReportDependencies, 'publicationThreshold' | 'maxLabelsPerDimension'>;

/** The dependencies of the report functions, from an open database, a logger, a clock, the report settings and the snapshot builder. */
export function reportDependencies(database: DatabaseHandle, logger: Logger, now: () => Date, limits: ReportLimits, snapshots: SnapshotBuilder): ReportDependencies {
  return { dialect: database.dialect, db: database.db, readDb: database.readDb, logger, now, ...limits, snapshots };
}

/** A saved report as the API returns it: its definition, id, creation time and latest snapshot. */
export type ReportResource = Report;

export class ReportNotFoundError extends Error {
  override name = 'ReportNotFoundError';
  constructor(readonly reportId: string) {
    super(`no report with id ${reportId}`);
  }
}

/** The report exists but has no snapshot by this id (or, for `latest`, none yet). */
export class SnapshotNotFoundError extends Error {
  override name = 'SnapshotNotFoundError';
  constructor(
    readonly reportId: string,
    readonly snapshotId: string,
  ) {
    super(`report ${reportId} has no snapshot ${snapshotId}`);
  }
}

function parseDefinition(row: ReportsTable): ReportDefinition {
  return withCurrentDefaults(JSON.parse(row.definition) as ReportDefinition);
}

async function toResource(db: Kysely<Database>, row: ReportsTable): Promise<ReportResource> {
  const latest = await repository.latestSnapshotMeta(db, row.report_id);
  return {
    report_id: row.report_id,
    ...parseDefinition(row),
    created_at: row.created_at,
    latest_snapshot: latest ? { snapshot_id: latest.snapshot_id, sequence: latest.sequence, created_at: latest.created_at } : null,
  };
}

/**
 * Checks and saves a report definition. A dimension that already has more labels in the
 * report's population than the limit is refused here, where the data can tell.
 * @throws InvalidDefinitionError listing every problem of the body
 */
export async function createReport(deps: ReportDependencies, body: unknown): Promise<ReportResource> {
  const definition = await normalizeDefinition(body, {
    missingCampaigns: (ids) => repository.missingCampaigns(deps.readDb, ids),
    missingAttributes: (names) => repository.missingAttributes(deps.readDb, names),
  });
  const counts = await labelCounts(deps.readDb, { source: populationSource(definition), dimensions: definition.dimensions, ageEdges: definition.age_bands });
  const over = dimensionsOverLimit(definition.dimensions, counts, deps.maxLabelsPerDimension);
  if (over.length > 0) {
    throw new InvalidDefinitionError(
      over.map(({ dimension, labels }) => ({
        field: `body/dimensions/${definition.dimensions.indexOf(dimension)}`,
        reason: `${dimension} has ${labels} distinct labels in this report's population, more than the ${deps.maxLabelsPerDimension} a dimension may have (MAX_LABELS_PER_DIMENSION)`,
      })),
    );
  }
  const row: ReportsTable = {
    report_id: randomUUID(),
    name: definition.name,
    definition: JSON.stringify(definition),
    refresh: definition.refresh,
    created_at: deps.now().toISOString(),
  };
  await repository.insertReport(deps.db, row);
  deps.logger.info({ reportId: row.report_id, name: row.name }, 'report saved');
  return { report_id: row.report_id, ...definition, created_at: row.created_at, latest_snapshot: null };
}

/**
 * Replaces a report's definition. Snapshots taken later use the new one; earlier snapshots keep
 * the definition they were computed with (each snapshot carries its own).
 * @throws ReportNotFoundError, InvalidDefinitionError
 */
export async function replaceReport(deps: ReportDependencies, reportId: string, body: unknown): Promise<ReportResource> {
  if (!(await repository.findReport(deps.db, reportId))) throw new ReportNotFoundError(reportId);
  const definition = await normalizeDefinition(body, {
    missingCampaigns: (ids) => repository.missingCampaigns(deps.readDb, ids),
    missingAttributes: (names) => repository.missingAttributes(deps.readDb, names),
  });
  const replaced = await repository.replaceReportDefinition(deps.db, reportId, { name: definition.name, definition: JSON.stringify(definition), refresh: definition.refresh });
  if (!replaced) throw new ReportNotFoundError(reportId);
  deps.logger.info({ reportId, name: definition.name }, 'report definition replaced');
  return getReport(deps, reportId);
}

/**
 * Deletes a report and every snapshot of it (the caller forgets their rendered tables).
 * @throws ReportNotFoundError
 */
export async function deleteReport(deps: ReportDependencies, reportId: string): Promise<void> {
  const deleted = await deps.db.transaction().execute((trx) => repository.deleteReport(trx, reportId));
  if (!deleted) throw new ReportNotFoundError(reportId);
  deps.logger.info({ reportId }, 'report deleted');
}

/** Every saved report, oldest first, each with its latest snapshot. */
export async function listReports(deps: ReportDependencies): Promise<ReportResource[]> {
  const rows = await repository.listReports(deps.readDb);
  return Promise.all(rows.map((row) => toResource(deps.readDb, row)));
}

/** @throws ReportNotFoundError */
export async function getReport(deps: ReportDependencies, reportId: string): Promise<ReportResource> {
  const row = await repository.findReport(deps.readDb, reportId);
  if (!row) throw new ReportNotFoundError(reportId);
  return toResource(deps.readDb, row);
}

/** The SQLite file behind `readDb`, which a build worker can open too; null on PostgreSQL and for an in-memory database. */
function workerReadableFile(readDb: Kysely<Database>): { file: string; cacheMiB: number } | null {
  const connection = sqliteConnectionOf(readDb);
  if (connection === null || connection.memory) return null;
  // The worker's connection gets the page cache the service's reader was opened with (negative: KiB).
  const cacheKiB = -Number(connection.pragma('cache_size', { simple: true }));
  return { file: connection.name, cacheMiB: Math.max(1, Math.round(cacheKiB / 1024)) };
}

// One refresh at a time per report in this process, so each snapshot compares with the one before it.
const refreshesInFlight = new Map<string, Promise<unknown>>();

/** A snapshot just stored: its id and its JSON text, as stored and as sent. */
export interface RefreshedSnapshot {
  snapshotId: string;
  body: string;
}

/**
 * Computes and stores a new snapshot of a report: every aggregate is read in one consistent
 * read transaction (a snapshot of the data on both engines), then the snapshot is built and
 * serialised by `deps.snapshots` (a worker thread) and written once.
 * @throws ReportNotFoundError
 */
export async function refreshReportText(deps: ReportDependencies, reportId: string, trigger: SnapshotTrigger): Promise<RefreshedSnapshot> {
  const earlier = refreshesInFlight.get(reportId) ?? Promise.resolve();
  const run = earlier.catch(() => undefined).then(() => computeAndStore(deps, reportId, trigger));
  refreshesInFlight.set(reportId, run);
  try {
    return await run;
  } finally {
    if (refreshesInFlight.get(reportId) === run) refreshesInFlight.delete(reportId);
  }
}

/**
 * `refreshReportText` with the snapshot read back from its text (parsed on the calling thread).
 * @throws ReportNotFoundError
 */
export async function refreshReport(deps: ReportDependencies, reportId: string, trigger: SnapshotTrigger): Promise<Snapshot> {
  return JSON.parse((await refreshReportText(deps, reportId, trigger)).body) as Snapshot;
}

async function computeAndStore(deps: ReportDependencies, reportId: string, trigger: SnapshotTrigger): Promise<RefreshedSnapshot> {
  const started = performance.now();
  const row = await repository.findReport(deps.readDb, reportId);
  if (!row) throw new ReportNotFoundError(reportId);
  const definition = parseDefinition(row);
  deps.logger.info({ reportId, trigger }, 'refresh started');
  const snapshotId = randomUUID();
  let sequence = await repository.nextSnapshotSequence(deps.db, reportId);
  const identity = { snapshotId, reportId, reportName: row.name, sequence, createdAt: deps.now().toISOString(), trigger };
  const workerReadable = workerReadableFile(deps.readDb);
  let built: BuiltSnapshot;
  let queriesDone: number;
  if (deps.snapshots.readAndBuild !== undefined && workerReadable !== null) {
    // On SQLite the worker reads the aggregates on its own connection, so neither the event
    // loop nor the service's read connection waits for the refresh's reads.
    const readAndBuilt = await deps.snapshots.readAndBuild({
      databaseFile: workerReadable.file,
      readCacheMiB: workerReadable.cacheMiB,
      input: { identity, definition, publicationThreshold: deps.publicationThreshold },
      maxLabelsPerDimension: deps.maxLabelsPerDimension,
      elapsedBeforeReadMs: performance.now() - started,
    });
    built = readAndBuilt;
    queriesDone = started + readAndBuilt.readMs;
  } else {
    const data = await readReportAggregates(deps.readDb, reportId, definition, {
      dialect: deps.dialect,
      sqlite: sqliteConnectionOf(deps.readDb),
      maxLabelsPerDimension: deps.maxLabelsPerDimension,
    });
    queriesDone = performance.now();
    // The previous snapshot travels as its stored text and is parsed where the new one is built.
    const previousBody = await repository.findSnapshotBody(deps.readDb, reportId, 'latest');
    built = await deps.snapshots.build({
      input: { identity: { ...identity, createdAt: deps.now().toISOString() }, definition, ...data, publicationThreshold: deps.publicationThreshold },
      previousBody: previousBody ?? null,
      elapsedBeforeBuildMs: performance.now() - started,
    });
  }
  const snapshot = built.summary;
  let body = built.body;
  const computed = performance.now();

  // Another instance may have taken the sequence number meanwhile; the unique key refuses the
  // duplicate, and the next free number is taken.
  for (let attempt = 1; ; attempt += 1) {
    try {
      await repository.insertSnapshot(deps.db, {
        snapshot_id: snapshotId,
        report_id: reportId,
        sequence,
        created_at: snapshot.created_at,
        fingerprint: snapshot.fingerprint,
        population_rows: snapshot.row_counts.population,
        segment_count: snapshot.row_counts.segments,
        duration_ms: snapshot.duration_ms,
        trigger,
        body,
        redacted_at: null,
      });
      break;
    } catch (error) {
      if (attempt >= 3) throw error;
      const next = await repository.nextSnapshotSequence(deps.db, reportId);
      if (next === sequence) throw error;
      sequence = next;
      body = await deps.snapshots.renumber(body, sequence);
    }
  }
  deps.logger.info(
    {
      reportId,
      snapshotId,
      sequence,
      trigger,
      units: snapshot.row_counts.population,
      cells: snapshot.row_counts.cells,
      segments: snapshot.row_counts.segments,
      queryMs: Math.round(queriesDone - started),
      computeMs: Math.round(computed - queriesDone),
      totalMs: snapshot.duration_ms,
    },
    'snapshot stored',
  );
  return { snapshotId, body };
}

/** @throws ReportNotFoundError */
export async function listSnapshots(deps: ReportDependencies, reportId: string, page: { limit: number; offset: number }) {
  const row = await repository.findReport(deps.readDb, reportId);
  if (!row) throw new ReportNotFoundError(reportId);
  const [snapshots, total] = await Promise.all([repository.listSnapshots(deps.readDb, reportId, page), repository.countSnapshots(deps.readDb, reportId)]);
  return { report_id: reportId, total, limit: page.limit, offset: page.offset, snapshots };
}

/**
 * The stored JSON text of a snapshot (`latest` accepted), or undefined when the report has no such snapshot.
 * @throws ReportNotFoundError
 */
export async function getSnapshotBody(deps: ReportDependencies, reportId: string, snapshotId: string): Promise<string | undefined> {
  const row = await repository.findReport(deps.readDb, reportId);
  if (!row) throw new ReportNotFoundError(reportId);
  const body = await repository.findSnapshotBody(deps.readDb, reportId, snapshotId);
  return body === undefined ? undefined : publishedText(body, deps.publicationThreshold);
}

/**
 * The snapshot `snapshotId` stands for (`latest`: the newest) and a key naming the stored version
 * of its body (an erasure may redact it); undefined when the report has no such snapshot. Read
 * without waiting behind uploads.
 * @throws ReportNotFoundError
 */
export async function snapshotVersionKey(deps: ReportDependencies, reportId: string, snapshotId: string): Promise<{ snapshotId: string; key: string } | undefined> {
  const version = await repository.snapshotVersion(deps.readDb, reportId, snapshotId);
  if (version === undefined) {
    // "no snapshot yet" would mislead about a report that does not exist at all.
    if (!(await repository.findReport(deps.readDb, reportId))) throw new ReportNotFoundError(reportId);
    return undefined;
  }
  return { snapshotId: version.snapshot_id, key: `${version.snapshot_id}@${version.redacted_at ?? ''}` };
}

/** The JSON text of one snapshot by its id as published (small cells withheld), or undefined. */
export async function publishedSnapshotText(deps: ReportDependencies, reportId: string, snapshotId: string): Promise<string | undefined> {
  const stored = await repository.findSnapshotBody(deps.readDb, reportId, snapshotId);
  return stored === undefined ? undefined : publishedText(stored, deps.publicationThreshold);
}

/** A snapshot as the report page shows it: with the snapshots before it and the report's listing. */
export interface SnapshotInContext {
  shown: Snapshot;
  /** the shown snapshot first, then the ones before it, newest first */
  history: Snapshot[];
  /** the report's snapshots, newest first */
  listing: repository.SnapshotMeta[];
}

/**
 * A snapshot (`latest` accepted) with up to `historyLength` snapshots counting itself, read from
 * a listing of at most `listingLimit` snapshots.
 * @throws ReportNotFoundError
 * @throws SnapshotNotFoundError
 */
export async function snapshotInContext(
  deps: ReportDependencies,
  reportId: string,
  snapshotId: string,
  limits: { historyLength: number; listingLimit: number },
): Promise<SnapshotInContext> {
  const readSnapshot = async (id: string): Promise<Snapshot | undefined> => {
    const body = await getSnapshotBody(deps, reportId, id);
    return body === undefined ? undefined : readStoredSnapshot(body);
  };
  const shown = await readSnapshot(snapshotId);
  if (shown === undefined) throw new SnapshotNotFoundError(reportId, snapshotId);
  const listing = await listSnapshots(deps, reportId, { limit: limits.listingLimit, offset: 0 });
  const earlier = listing.snapshots.filter((meta) => meta.sequence < shown.sequence).slice(0, limits.historyLength - 1);
  const history: Snapshot[] = [shown];
  for (const meta of earlier) {
    const snapshot = await readSnapshot(meta.snapshot_id);
    if (snapshot) history.push(snapshot);
  }
  return { shown, history, listing: listing.snapshots };
}
