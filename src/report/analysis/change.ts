/**
 * The change since last time: each segment against the same segment in the window of equal
 * length just before (sales reports) or in the previous snapshot (campaign reports), and its
 * rank movement against the previous snapshot.
 */
import { newcombeDifferenceInterval, welchTTest, type Summary } from '../../stats/index.js';
import type { CellAggregate, Shifts } from '../../segments/index.js';
import { cellStats, rollUp } from '../../segments/index.js';
import type { ReportDefinition } from '../definition/index.js';
import { isPublished, type Comparison, type PublishedSegment, type SegmentChange, type Snapshot, type SnapshotSegment } from '../shapes/index.js';
import { valueOrNull } from './outcome.js';
import { segmentLabel } from './segment-row.js';
import { valueSummary } from './segment-tests.js';

/** The counts and value summary of one segment at the earlier time. */
interface PreviousFigures {
  n: number;
  conversions: number;
  value: Summary;
}

/** The cells of the preceding window, with its dates and the shifts its sums are centred on. */
export interface PreviousWindow {
  from: string;
  to: string;
  cells: CellAggregate[];
  shifts: Shifts;
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

/** Every segment's figures in the preceding window, rolled up from its cells the way the current ones are. */
function figuresOfWindow(previousWindow: PreviousWindow, definition: ReportDefinition): Map<string, PreviousFigures> {
  const groups = rollUp(
    previousWindow.cells.map((cell) => ({ labels: cell.labels, stats: cellStats(cell, previousWindow.shifts) })),
    definition.dimensions,
    definition.crosses,
  ).segments;
  return new Map(
    groups.map((group) => [segmentLabel(group.dimensions, group.labels), { n: group.stats.n, conversions: group.stats.conversions, value: valueSummary(group.stats, definition.value_basis) }]),
  );
}

/** Every segment's figures as the previous snapshot stored them. */
function figuresOfSnapshot(previousSnapshot: Snapshot): Map<string, PreviousFigures> {
  return new Map(
    previousSnapshot.segments.flatMap((segment): Array<[string, PreviousFigures]> => {
      // A withheld segment keeps no figures, so a later snapshot has nothing to compare it with.
      const stored = segment.sufficient_statistics;
      if (stored === null) return [];
      return [[segment.segment, { n: stored.n, conversions: stored.conversions, value: { n: stored.value.n, mean: stored.value.mean, sumSquaredDeviations: stored.value.sum_squared_deviations } }]];
    }),
  );
}

function summaryOf(segment: PublishedSegment): Summary {
  const stored = segment.sufficient_statistics.value;
  return { n: stored.n, mean: stored.mean, sumSquaredDeviations: stored.sum_squared_deviations };
}

function computeChange(current: PreviousFigures, previous: PreviousFigures | undefined, comparedWith: SegmentChange['compared_with'], confidence: number): SegmentChange {
  const before = previous ?? { n: 0, conversions: 0, value: { n: 0, mean: 0, sumSquaredDeviations: 0 } };
  const rateChange = current.n > 0 && before.n > 0 ? valueOrNull(newcombeDifferenceInterval(current.conversions, current.n, before.conversions, before.n, confidence)) : null;
  const valueChange = valueOrNull(welchTTest(current.value, before.value, confidence));
  return {
    compared_with: comparedWith,
    previous_n: before.n,
    previous_conversions: before.conversions,
    previous_conversion_rate: before.n > 0 ? before.conversions / before.n : null,
    rate_change: rateChange?.estimate ?? null,
    rate_change_ci_low: rateChange?.interval.low ?? null,
    rate_change_ci_high: rateChange?.interval.high ?? null,
    previous_value_mean: before.value.n > 0 ? before.value.mean : null,
    value_change: valueChange?.difference ?? null,
    value_change_ci_low: valueChange?.interval.low ?? null,
    value_change_ci_high: valueChange?.interval.high ?? null,
  };
}

/**
 * Fills each ranked segment's rank movement (against the previous snapshot, when there is
 * one) and its change against what `basis` names: the preceding window or the previous snapshot.
 */
export function recordChanges(
  segments: readonly SnapshotSegment[],
  earlier: { basis: ComparisonBasis; window: PreviousWindow | null; snapshot: Snapshot | null },
  definition: ReportDefinition,
): void {
  const { basis, window: previousWindow, snapshot: previousSnapshot } = earlier;
  const previousRanks = new Map((previousSnapshot?.segments ?? []).map((segment) => [segment.segment, segment.rank]));
  const previousFigures = previousWindow ? figuresOfWindow(previousWindow, definition) : previousSnapshot ? figuresOfSnapshot(previousSnapshot) : null;
  for (const segment of segments) {
    if (previousSnapshot) {
      const previousRank = previousRanks.get(segment.segment) ?? null;
      segment.previous_rank = previousRank;
      segment.rank_movement = previousRank !== null && segment.rank !== null ? previousRank - segment.rank : null;
    }
    if (previousFigures && basis.compared_with !== null && isPublished(segment)) {
      const current = { n: segment.n, conversions: segment.conversions, value: summaryOf(segment) };
      segment.change = computeChange(current, previousFigures.get(segment.segment), basis.compared_with, definition.confidence);
    }
  }
}
