/**
 * The read half of a refresh: every aggregate a snapshot is built from, read in one consistent
 * read transaction (a snapshot of the data on both engines). The same function runs on the
 * main thread's read connection, or in a build worker on its own read-only SQLite connection
 * (read-build.ts), so that a campaign report's refresh leaves the event loop free.
 */
import type SqliteDatabase from 'better-sqlite3';
import type { Kysely } from 'kysely';
import type { Dialect } from '../../db/connect.js';
import type { Executor } from '../../db/executor.js';
import type { Database } from '../../db/tables.js';
import { YIELD_AFTER_EACH_QUERY } from '../../db/yield-after-query.js';
import {
  campaignPopulationTable,
  explainOverflow,
  holdoutContacts,
  keptCountAggregates,
  shiftsAndCellAggregates,
  sourceQuality,
  valueCountsByAgeBin,
  valuesByAgeOf,
  valueDistribution,
  type AggregationRequest,
  type CellAggregate,
  type PopulationSource,
  type ValueDistributionScope,
} from '../../segments/index.js';
import type { PreviousWindow } from '../analysis/index.js';
import type { ReportDefinition } from '../definition/index.js';
import * as repository from '../store/index.js';
import type { HoldoutCells } from './holdout.js';
import type { SnapshotInput } from './input.js';
import { refuseCellLabelsPastLimit, refuseLabelsPastLimit } from './label-limit.js';
import { ageGridAxis, ageValueGridAxes, isExpandable } from './profiles.js';

/** What a snapshot is built from besides its identity, definition, threshold and previous snapshot. */
export type ReportAggregates = Pick<
  SnapshotInput,
  'shifts' | 'cells' | 'arithmetic' | 'ageCounts' | 'valueCounts' | 'populationValueCounts' | 'ageValueGrid' | 'quality' | 'previousWindow' | 'strata' | 'holdout' | 'earlierContactsChanged'
>;

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
export function populationSource(definition: ReportDefinition): PopulationSource {
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

export interface AggregateReadOptions {
  dialect: Dialect;
  /** The raw connection behind `readDb` on SQLite (its prepared statements read the kept rows), else null. */
  sqlite: SqliteDatabase.Database | null;
  /** Most distinct labels a dimension of a report may have. */
  maxLabelsPerDimension: number;
}

/**
 * Reads every aggregate of a report's snapshot in one read transaction on `readDb`.
 * @throws TooManyLabelsError when a dimension is past the limit; SpendBeyondLimitError when a customer's spend overflows the sum
 */
export async function readReportAggregates(readDb: Kysely<Database>, reportId: string, definition: ReportDefinition, options: AggregateReadOptions): Promise<ReportAggregates> {
  const fullSource = populationSource(definition);
  const keptSource = fullSource.kind === 'campaigns' && fullSource.table === 'contact_value_counts';
  // With holdout customers, every figure but the holdout's describes the contacted ones. A report
  // on the kept counts learns it from its one read of them (the arms are split as they are read);
  // a report on rows asks first.
  const probedHoldout = !keptSource && fullSource.kind === 'campaigns' && (await holdoutContacts(readDb, fullSource)) > 0;
  const source: PopulationSource = probedHoldout && fullSource.kind === 'campaigns' ? { ...fullSource, arm: 'contacted' } : fullSource;
  const request: AggregationRequest = { source, dimensions: definition.dimensions, ageEdges: definition.age_bands, valueBasis: definition.value_basis };

  let transaction = readDb.transaction();
  if (options.dialect === 'postgres') transaction = transaction.setIsolationLevel('repeatable read');
  const readAggregates = transaction.execute(async (transactionExecutor): Promise<ReportAggregates> => {
    // Each query of the transaction lets other requests in before the next one starts.
    const trx = transactionExecutor.withPlugin(YIELD_AFTER_EACH_QUERY);
    // The data may have grown since the definition was saved. A report on rows checks first, so
    // a dimension of thousands of labels is refused before the cell query and its thousands of
    // groups (on SQLite the read connection, and /healthz, wait for this transaction): small
    // bounded reads, and the population's exact count only when one of them is past the limit.
    // A report on the kept counts reads no more rows for a label more or less (the kept rows
    // are read once either way), so its cells' labels are the check.
    if (!keptSource) await refuseLabelsPastLimit(trx, reportId, request, options.maxLabelsPerDimension);
    // A report on the kept counts reads its campaigns' rows once and derives every figure below
    // from them in code; a report on rows (an attribute, sales) groups them in the database.
    const kept = keptSource ? await keptCountAggregates(trx, options.sqlite, request, true) : null;
    const withHoldout = kept === null ? probedHoldout : kept.holdoutUnits > 0;
    const { shifts, cells, ageCounts, unconvertedByAge, arithmetic, strata } = kept?.population ?? (await shiftsAndCellAggregates(trx, request));
    // The cells' own labels settle it whatever the bounds said.
    refuseCellLabelsPastLimit(reportId, definition.dimensions, cells, options.maxLabelsPerDimension);
    const scope = valueDistributionScope(cells, definition);
    const valueCounts = kept ? kept.valueCounts(scope) : await valueDistribution(trx, request, scope, cells);
    const ageAxis = ageGridAxis(ageCounts);
    const valuesByAge = kept ? kept.valuesByAge(ageAxis) : valuesByAgeOf(await valueCountsByAgeBin(trx, request, ageAxis, unconvertedByAge));
    const wholeValueCounts = valuesByAge.wholeValueCounts;
    const gridAxes = ageValueGridAxes(ageCounts, wholeValueCounts);
    const ageValueGrid = gridAxes === null ? null : { axes: gridAxes, counts: valuesByAge.gridCounts(gridAxes) };
    const quality = await sourceQuality(trx, source, options.dialect);
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
  return readAggregates.catch(async (error: unknown) => {
    throw await explainOverflow(readDb, error, windows);
  });
}
