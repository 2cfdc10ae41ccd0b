/**
 * Report definitions and snapshots as the API sees them: save and read definitions, and
 * compute a snapshot (read the aggregates in one consistent read, build, store).
 */
import { randomUUID } from 'node:crypto';
import type { Kysely } from 'kysely';
import { sqliteConnectionOf, type DatabaseHandle, type Dialect } from '../../db/connect.js';
import type { Database, ReportsTable, SnapshotTrigger } from '../../db/tables.js';
import type { Executor } from '../../db/executor.js';
import { YIELD_AFTER_EACH_QUERY } from '../../db/yield-after-query.js';
import type { Logger } from '../../logger.js';
import {
  campaignPopulationTable,
  explainOverflow,
  gridCountsOf,
  holdoutContacts,
  keptCountAggregates,
  labelCounts,
  shiftsAndCellAggregates,
  sourceQuality,
  valueCountsByAgeBin,
  valueCountsOf,
  valueDistribution,
  type AggregationRequest,
  type CellAggregate,
  type PopulationSource,
  type ValueDistributionScope,
} from '../../segments/index.js';
import type { PreviousWindow } from '../analysis/index.js';
import type { SnapshotBuilder } from './build-pool.js';
import { dimensionsOverLimit, refuseCellLabelsPastLimit, refuseLabelsPastLimit } from './label-limit.js';
import type { HoldoutCells } from './holdout.js';
import { InvalidDefinitionError, normalizeDefinition, withCurrentDefaults, type ReportDefinition } from '../definition/index.js';
import { publishedText, readStoredSnapshot } from './stored.js';
import { ageGridAxis, ageValueGridAxes, isExpandable } from './profiles.js';
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

const DAY_MS = 86_400_000;

function addDays(date: string, days: number): string {
  return new Date(Date.parse(`${date}T00:00:00Z`) + days * DAY_MS).toISOString().slice(0, 10);
}

/**
 * The window of the same length just before `[from, to]` (both ends inclusive), e.g.
 * 2026-03-08…2026-03-14 for 2026-03-15…2026-03-21.
 */
function precedingWindow(from: string, to: string): { from: string; to: string } {
  const days = Math.round((Date.parse(`${to}T00:00:00Z`) - Date.parse(`${from}T00:00:00Z`)) / DAY_MS) + 1;
  return { from: addDays(from, -days), to: addDays(from, -1) };
}

/** The report's population, read from the table `campaignPopulationTable` chooses for its dimensions. */
function populationSource(definition: ReportDefinition): PopulationSource {
  const source = definition.source;
  return 'campaign_ids' in source
    ? { kind: 'campaigns', campaignIds: source.campaign_ids, table: campaignPopulationTable(definition.dimensions) }
    : { kind: 'sales', from: source.sales_from, to: source.sales_to };
}

/**
 * The dimension values whose value distribution is worth reading: only groups small enough to
 * be described value by value need it, so the sort over the whole population is skipped (or
 * narrowed) when the groups are large.
 */
function valueDistributionScope(cells: readonly CellAggregate[], definition: ReportDefinition): ValueDistributionScope {
  const valueCount = (cell: CellAggregate) => (definition.value_basis === 'per_unit' ? cell.n : cell.conversions);
  if (isExpandable(cells.reduce((sum, cell) => sum + valueCount(cell), 0))) return 'all';
  const scope: Array<{ dimensionIndex: number; labels: string[] }> = [];
  definition.dimensions.forEach((_dimension, dimensionIndex) => {
    const sizes = new Map<string, number>();
    for (const cell of cells) sizes.set(cell.labels[dimensionIndex] as string, (sizes.get(cell.labels[dimensionIndex] as string) ?? 0) + valueCount(cell));
    const small = [...sizes].filter(([, size]) => isExpandable(size)).map(([value]) => value);
    if (small.length > 0) scope.push({ dimensionIndex, labels: small });
  });
  return scope;
}

/**
 * Whether contacts the report's newest snapshot held may have changed since it read them: an
 * upload updated contacts or customers, or an erasure redacted it. The change since that
 * snapshot is then not computed (current minus previous would mix edits into the new contacts).
 */
async function earlierContactsChangedSinceLastSnapshot(db: Executor, reportId: string, campaignIds: readonly string[]): Promise<boolean> {
  const previous = await repository.latestSnapshotReadStart(db, reportId);
  if (previous === undefined) return false;
  return previous.redacted || (await repository.contactsChangedSince(db, campaignIds, previous.readStart));
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
  let source = populationSource(definition);
  // With holdout customers, every figure but the holdout's describes the contacted ones.
  const withHoldout = source.kind === 'campaigns' && (await holdoutContacts(deps.readDb, source)) > 0;
  if (withHoldout && source.kind === 'campaigns') source = { ...source, arm: 'contacted' };
  const request: AggregationRequest = { source, dimensions: definition.dimensions, ageEdges: definition.age_bands, valueBasis: definition.value_basis };

  let transaction = deps.readDb.transaction();
  if (deps.dialect === 'postgres') transaction = transaction.setIsolationLevel('repeatable read');
  const readAggregates = transaction.execute(async (transactionExecutor) => {
    // Each query of the transaction lets other requests in before the next one starts.
    const trx = transactionExecutor.withPlugin(YIELD_AFTER_EACH_QUERY);
    // The data may have grown since the definition was saved. Checked first, so a dimension of
    // thousands of labels is refused before the cell query and its thousands of groups (on
    // SQLite the read connection, and /healthz, wait for this transaction): small bounded reads,
    // and the population's exact count only when one of them is past the limit.
    await refuseLabelsPastLimit(trx, reportId, request, deps.maxLabelsPerDimension);
    // A report on the kept counts reads its campaigns' rows once and derives every figure below
    // from them in code; a report on rows (an attribute, sales) groups them in the database.
    const kept = source.kind === 'campaigns' && source.table === 'contact_value_counts' ? await keptCountAggregates(trx, sqliteConnectionOf(deps.readDb), request, withHoldout) : null;
    const { shifts, cells, ageCounts, unconvertedByAge, arithmetic, strata } = kept?.population ?? (await shiftsAndCellAggregates(trx, request));
    // The cells' own labels settle it whatever the bounds said.
    refuseCellLabelsPastLimit(reportId, definition.dimensions, cells, deps.maxLabelsPerDimension);
    const scope = valueDistributionScope(cells, definition);
    const valueCounts = kept ? kept.valueCounts(scope) : await valueDistribution(trx, request, scope, cells);
    const ageAxis = ageGridAxis(ageCounts);
    const valuesByAgeBin = kept ? kept.valueCountsByAgeBin(ageAxis) : await valueCountsByAgeBin(trx, request, ageAxis, unconvertedByAge);
    const wholeValueCounts = valueCountsOf(valuesByAgeBin);
    const gridAxes = ageValueGridAxes(ageCounts, wholeValueCounts);
    const ageValueGrid = gridAxes === null ? null : { axes: gridAxes, counts: gridCountsOf(valuesByAgeBin, gridAxes) };
    const quality = await sourceQuality(trx, source);
    let previousWindow: PreviousWindow | null = null;
    if (source.kind === 'sales') {
      const window = precedingWindow(source.from, source.to);
      // Each window over the customers known at its start: later arrivals were not customers who failed to buy then.
      const previousSource: PopulationSource = { kind: 'sales', from: window.from, to: window.to, knownAt: window.from };
      const previous = await shiftsAndCellAggregates(trx, { ...request, source: previousSource });
      const current = await shiftsAndCellAggregates(trx, { ...request, source: { ...source, knownAt: source.from } });
      previousWindow = { ...window, cells: previous.cells, shifts: previous.shifts, current: { cells: current.cells, shifts: current.shifts } };
    }
    let holdout: HoldoutCells | null = null;
    if (withHoldout && source.kind === 'campaigns') {
      const arm = kept?.holdout ?? (await shiftsAndCellAggregates(trx, { ...request, source: { ...source, arm: 'holdout' } }));
      holdout = { cells: arm.cells, shifts: arm.shifts };
    }
    const earlierContactsChanged = source.kind === 'campaigns' && (await earlierContactsChangedSinceLastSnapshot(trx, reportId, source.campaignIds));
    return { shifts, cells, arithmetic, ageCounts, valueCounts, populationValueCounts: wholeValueCounts, ageValueGrid, quality, previousWindow, strata, holdout, earlierContactsChanged };
  });
  // A customer's spend past 2^63 cents overflows the database's sum: refused by name, not a 500.
  const windows = source.kind === 'sales' ? [source, precedingWindow(source.from, source.to)] : [];
  const data = await readAggregates.catch(async (error: unknown) => {
    throw await explainOverflow(deps.readDb, error, windows);
  });
  const queriesDone = performance.now();

  // The previous snapshot travels as its stored text and is parsed where the new one is built.
  const previousBody = await repository.findSnapshotBody(deps.readDb, reportId, 'latest');
  const snapshotId = randomUUID();
  let sequence = await repository.nextSnapshotSequence(deps.db, reportId);
  const built = await deps.snapshots.build({
    input: {
      identity: { snapshotId, reportId, reportName: row.name, sequence, createdAt: deps.now().toISOString(), trigger },
      definition,
      ...data,
      publicationThreshold: deps.publicationThreshold,
    },
    previousBody: previousBody ?? null,
    elapsedBeforeBuildMs: performance.now() - started,
  });
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
