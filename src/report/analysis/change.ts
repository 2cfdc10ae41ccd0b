/**
 * The change since last time, always between disjoint groups of units, so the two-sample
 * intervals and tests apply:
 * - campaign reports: the contacts stored since the previous snapshot against those the
 *   previous snapshot had. The new contacts' sufficient statistics are the current ones minus
 *   the previous snapshot's (contacts are only added between snapshots); when nothing was
 *   added there is no change to report (`change` null), and when the subtraction is impossible
 *   (contacts were changed or erased, not only added) neither, with a note saying so. The
 *   sums alone cannot always show an edit (an earlier contact converting while new ones
 *   arrive looks like an addition), so the service also says whether uploads or erasures
 *   touched earlier contacts since that snapshot, and then no change is computed either.
 * - sales reports: this window against the window of the same length just before it, each
 *   with the customers known at its start (see the service).
 * The changes' p-values are adjusted over their own family (every segment with a change).
 * Rank movement is against the previous snapshot.
 */
import { adjustPValues, newcombeDifferenceInterval, StatsInputError, subtractSummary, welchTTest, type Summary } from '../../stats/index.js';
import type { CellAggregate, Shifts } from '../../segments/index.js';
import { cellStats, rollUp } from '../../segments/index.js';
import type { ReportDefinition } from '../definition/index.js';
import type { Comparison, SegmentChange, Snapshot, SnapshotSegment } from '../shapes/index.js';
import { valueOrNull } from './outcome.js';
import { segmentLabel } from './segment-row.js';
import { rateTest, valueSummary } from './segment-tests.js';

/** The counts and value summary of one segment in one group of units. */
interface Figures {
  n: number;
  conversions: number;
  value: Summary;
}

/** The cells of a window, with its dates and the shifts its sums are centred on. */
interface WindowCells {
  from: string;
  to: string;
  cells: CellAggregate[];
  shifts: Shifts;
}

/**
 * Sales reports: the window of the same length just before this one, and this window again,
 * each over the customers known at its start (`current`; absent: this window's own cells).
 */
export interface PreviousWindow extends WindowCells {
  current?: Omit<WindowCells, 'from' | 'to'>;
}

/** What a snapshot is compared with, as fields; the note that words it is added by the caller. */
export type ComparisonBasis = Omit<Comparison, 'note'>;

/** The preceding window when there is one, else the previous snapshot, else nothing. */
export function comparisonBasis(previousWindow: PreviousWindow | null, previousSnapshot: Snapshot | null): ComparisonBasis {
  if (previousWindow) {
    return {
      compared_with: 'previous_window',
      previous_window: { from: previousWindow.from, to: previousWindow.to },
      previous_snapshot_id: previousSnapshot?.snapshot_id ?? null,
    };
  }
  if (previousSnapshot) return { compared_with: 'previous_snapshot', previous_window: null, previous_snapshot_id: previousSnapshot.snapshot_id };
  return { compared_with: null, previous_window: null, previous_snapshot_id: null };
}

/** Every segment's figures in a set of cells, rolled up the way the report's are. */
function figuresOfCells(cells: readonly CellAggregate[], shifts: Shifts, definition: ReportDefinition): Map<string, Figures> {
  const groups = rollUp(
    cells.map((cell) => ({ labels: cell.labels, stats: cellStats(cell, shifts) })),
    definition.dimensions,
    definition.crosses,
  ).segments;
  return new Map(
    groups.map((group) => [segmentLabel(group.dimensions, group.labels), { n: group.stats.n, conversions: group.stats.conversions, value: valueSummary(group.stats, definition.value_basis) }]),
  );
}

/** A segment's figures as its snapshot stored them; null when withheld (small cells keep none). */
function storedFigures(segment: SnapshotSegment): Figures | null {
  const stored = segment.sufficient_statistics;
  if (stored === null) return null;
  return { n: stored.n, conversions: stored.conversions, value: { n: stored.value.n, mean: stored.value.mean, sumSquaredDeviations: stored.value.sum_squared_deviations } };
}

const EMPTY: Figures = { n: 0, conversions: 0, value: { n: 0, mean: 0, sumSquaredDeviations: 0 } };

/**
 * Contacts held by the previous snapshot were edited or erased since (the service reads it from
 * the uploads and erasures after that snapshot): the differences of the sums would then mix
 * those edits into the new contacts, even where they look like additions.
 */
const EDITED_SINCE = {
  ok: false as const,
  reason:
    'The change since the previous snapshot is not computed: since then an upload changed contacts or customers stored before it (or a customer was erased), so the new contacts cannot be told apart from the earlier ones.',
};

/** The units added since `before`, or the reason they cannot be told apart. */
function addedSince(now: Figures, before: Figures): { ok: true; value: Figures } | { ok: false; reason: string } {
  const n = now.n - before.n;
  const conversions = now.conversions - before.conversions;
  const impossible = {
    ok: false as const,
    reason: 'The change since the previous snapshot is not computed: contacts stored then were changed or erased since, so the new contacts cannot be told apart from the earlier ones.',
  };
  if (n < 0 || conversions < 0 || conversions > n || now.value.n < before.value.n) return impossible;
  try {
    return { ok: true, value: { n, conversions, value: subtractSummary(now.value, before.value) } };
  } catch (error) {
    if (error instanceof StatsInputError) return impossible;
    throw error;
  }
}

function computeChange(added: Figures, before: Figures, comparedWith: SegmentChange['compared_with'], confidence: number): SegmentChange {
  const bothPresent = added.n > 0 && before.n > 0;
  const rateChange = bothPresent ? valueOrNull(newcombeDifferenceInterval(added.conversions, added.n, before.conversions, before.n, confidence)) : null;
  const rateComparison = bothPresent ? valueOrNull(rateTest(added.conversions, added.n, before.conversions, before.n)) : null;
  const valueChange = valueOrNull(welchTTest(added.value, before.value, confidence));
  return {
    compared_with: comparedWith,
    previous_n: before.n,
    previous_conversions: before.conversions,
    previous_conversion_rate: before.n > 0 ? before.conversions / before.n : null,
    new_n: added.n,
    new_conversions: added.conversions,
    new_conversion_rate: added.n > 0 ? added.conversions / added.n : null,
    rate_change: rateChange?.estimate ?? null,
    rate_change_ci_low: rateChange?.interval.low ?? null,
    rate_change_ci_high: rateChange?.interval.high ?? null,
    rate_change_p_value: rateComparison?.pValue ?? null,
    rate_change_p_adjusted: null,
    previous_value_mean: before.value.n > 0 ? before.value.mean : null,
    new_value_mean: added.value.n > 0 ? added.value.mean : null,
    value_change: valueChange?.difference ?? null,
    value_change_ci_low: valueChange?.interval.low ?? null,
    value_change_ci_high: valueChange?.interval.high ?? null,
    value_change_p_value: valueChange?.pValue ?? null,
    value_change_p_adjusted: null,
  };
}

/**
 * Fills each ranked segment's rank movement (against the previous snapshot, when there is
 * one) and its change against what `basis` names, then adjusts the changes' p-values over
 * their family with the report's adjustment.
 */
export function recordChanges(
  segments: readonly SnapshotSegment[],
  earlier: { basis: ComparisonBasis; window: PreviousWindow | null; snapshot: Snapshot | null; earlierUnitsChanged?: boolean },
  definition: ReportDefinition,
): void {
  const { basis, window: previousWindow, snapshot: previousSnapshot } = earlier;
  const previousRanks = new Map((previousSnapshot?.segments ?? []).map((segment) => [segment.segment, segment.rank]));
  for (const segment of segments) {
    if (!previousSnapshot) continue;
    const previousRank = previousRanks.get(segment.segment) ?? null;
    segment.previous_rank = previousRank;
    segment.rank_movement = previousRank !== null && segment.rank !== null ? previousRank - segment.rank : null;
  }
  if (basis.compared_with === 'previous_window' && previousWindow) {
    const before = figuresOfCells(previousWindow.cells, previousWindow.shifts, definition);
    const now = previousWindow.current ? figuresOfCells(previousWindow.current.cells, previousWindow.current.shifts, definition) : null;
    for (const segment of segments) {
      const current = now ? (now.get(segment.segment) ?? EMPTY) : storedFigures(segment);
      if (current === null) continue;
      segment.change = computeChange(current, before.get(segment.segment) ?? EMPTY, 'previous_window', definition.confidence);
    }
  } else if (basis.compared_with === 'previous_snapshot' && previousSnapshot) {
    const before = new Map(previousSnapshot.segments.map((segment) => [segment.segment, storedFigures(segment)]));
    for (const segment of segments) {
      const earlierFigures = before.has(segment.segment) ? before.get(segment.segment) : EMPTY;
      const currentFigures = storedFigures(segment);
      // A segment withheld now or then has no figures to compare.
      if (earlierFigures === null || earlierFigures === undefined || currentFigures === null) continue;
      const added = earlier.earlierUnitsChanged === true ? EDITED_SINCE : addedSince(currentFigures, earlierFigures);
      if (!added.ok) {
        segment.notes.push(added.reason);
        continue;
      }
      // No contact added: nothing has changed, and there is nothing to compare.
      if (added.value.n === 0) continue;
      segment.change = computeChange(added.value, earlierFigures, 'previous_snapshot', definition.confidence);
    }
  }
  const changes = segments.map((segment) => segment.change);
  const rateAdjusted = adjustPValues(changes.map((change) => change?.rate_change_p_value ?? null), definition.adjustment);
  const valueAdjusted = adjustPValues(changes.map((change) => change?.value_change_p_value ?? null), definition.adjustment);
  changes.forEach((change, index) => {
    if (!change) return;
    change.rate_change_p_adjusted = rateAdjusted[index] ?? null;
    change.value_change_p_adjusted = valueAdjusted[index] ?? null;
  });
}
