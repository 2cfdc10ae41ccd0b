/**
 * Builds a snapshot from the aggregates of the database: roll the cells up to segments, test
 * each against its rest, adjust the p-values over the report's family of tests, decide the
 * verdicts, rank, compare with the previous window or snapshot, and write the sentences.
 * Pure: numbers in, snapshot out; the service around it does the I/O.
 */
import { createHash } from 'node:crypto';
import {
  adjustPValues,
  newcombeDifferenceInterval,
  tInterval,
  welchTTest,
  wilsonInterval,
  type Outcome,
  type Summary,
} from '../stats/index.js';
import {
  cellStats,
  compareText,
  compareValueLists,
  groupBy,
  rollUp,
  subtractGroup,
  type AgeCount,
  type AgeValueBinCount,
  type AgeValueGridAxes,
  type CellAggregate,
  type Group,
  type GroupStats,
  type PopulationValueCount,
  type Shifts,
  type SourceQuality,
  type ValueCount,
} from '../segments/index.js';
import { analyzeSegment, valueSummary, type SegmentStatistics } from './analysis.js';
import type { ReportDefinition } from './definition.js';
import { ageValueGridCells, correlationFromSums, dimensionProfiles, populationDescriptives, populationHistograms } from './descriptives.js';
import { findReversals } from './reversals.js';
import { VERDICTS, type Comparison, type DataQuality, type PopulationFigures, type Reversal, type SegmentChange, type Snapshot, type SnapshotSegment, type Verdict } from './rows.js';
import { decideVerdict } from './verdict.js';
import { CAUTIONS, reportSummary, reversalSentence, segmentSummary, vocabulary, type SentenceContext } from './wording.js';

export interface SnapshotIdentity {
  snapshotId: string;
  reportId: string;
  reportName: string;
  sequence: number;
  createdAt: string;
  trigger: Snapshot['trigger'];
}

export interface PreviousWindow {
  from: string;
  to: string;
  cells: CellAggregate[];
  shifts: Shifts;
}

export interface SnapshotInput {
  identity: SnapshotIdentity;
  definition: ReportDefinition;
  shifts: Shifts;
  arithmetic: 'exact' | 'floating';
  cells: CellAggregate[];
  ageCounts: AgeCount[];
  valueCounts: ValueCount[];
  /**
   * Value counts over the whole population (`valueCountsOf(valueCountsByAgeBin(…))`), for its histogram and descriptives.
   * Absent: the cell value counts are used when they cover every unit of the value metric.
   */
  populationValueCounts?: PopulationValueCount[];
  /** Counts of the age × value grid (`gridCountsOf`) with the axes they were binned on; null or absent: no grid. */
  ageValueGrid?: { axes: AgeValueGridAxes; counts: AgeValueBinCount[] } | null;
  quality: SourceQuality;
  /** sales reports: the window of the same length just before this one */
  previousWindow: PreviousWindow | null;
  previousSnapshot: Snapshot | null;
}

function segmentLabel(dimensions: readonly string[], values: readonly string[]): string {
  return dimensions.map((dimension, index) => `${dimension}=${values[index] as string}`).join(' & ');
}

function valueOf<T>(outcome: Outcome<T>): T | null {
  return outcome.ok ? outcome.value : null;
}

function collectNotes(statistics: SegmentStatistics): string[] {
  const outcomes: Array<Outcome<unknown>> = [
    statistics.rate,
    statistics.difference,
    statistics.lift,
    statistics.rateTest,
    statistics.valueMean,
    statistics.valueComparison,
    statistics.hedgesG,
    statistics.rateMdd.increase,
    statistics.rateMdd.decrease,
    statistics.valueMdd,
  ];
  const notes: string[] = [];
  for (const outcome of outcomes) {
    if (!outcome.ok && !outcome.reason.endsWith('the segment was not tested.') && !notes.includes(outcome.reason)) notes.push(outcome.reason);
  }
  return notes;
}

/** The ranking key of a tested segment: the lower confidence bound or the estimate of the ranking metric. */
function rankingKey(segment: SnapshotSegment, definition: ReportDefinition): number | null {
  if (definition.rank_by === 'conversion_rate') {
    return definition.rank_order === 'lower_bound' ? segment.conversion_rate_ci_low : segment.conversion_rate;
  }
  return definition.rank_order === 'lower_bound' ? segment.value_ci_low : segment.value_mean;
}

/**
 * Orders segments: tested ones by the ranking key (higher first; a missing key last), ties by
 * n (larger first) and then by name; untested ones after them by n and name, without a rank.
 */
export function rankSegments(segments: SnapshotSegment[], definition: ReportDefinition): SnapshotSegment[] {
  const byNameAndSize = (left: SnapshotSegment, right: SnapshotSegment) => right.n - left.n || compareText(left.segment, right.segment);
  const tested = segments.filter((segment) => segment.tested);
  const untested = segments.filter((segment) => !segment.tested);
  tested.sort((left, right) => {
    const leftKey = rankingKey(left, definition);
    const rightKey = rankingKey(right, definition);
    if (leftKey === null && rightKey !== null) return 1;
    if (rightKey === null && leftKey !== null) return -1;
    if (leftKey !== null && rightKey !== null && leftKey !== rightKey) return rightKey - leftKey;
    return byNameAndSize(left, right);
  });
  untested.sort(byNameAndSize);
  tested.forEach((segment, index) => {
    segment.rank = index + 1;
  });
  for (const segment of untested) segment.rank = null;
  return [...tested, ...untested];
}

interface PreviousFigures {
  n: number;
  conversions: number;
  value: Summary;
}

function computeChange(current: PreviousFigures, previous: PreviousFigures | undefined, comparedWith: SegmentChange['compared_with'], confidence: number): SegmentChange {
  const before = previous ?? { n: 0, conversions: 0, value: { n: 0, mean: 0, sumSquaredDeviations: 0 } };
  const rateChange = current.n > 0 && before.n > 0 ? valueOf(newcombeDifferenceInterval(current.conversions, current.n, before.conversions, before.n, confidence)) : null;
  const valueChange = valueOf(welchTTest(current.value, before.value, confidence));
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

function buildSegment(group: Group, rest: GroupStats, statistics: SegmentStatistics, total: GroupStats, definition: ReportDefinition): SnapshotSegment {
  const rate = valueOf(statistics.rate);
  const difference = valueOf(statistics.difference);
  const lift = valueOf(statistics.lift);
  const test = valueOf(statistics.rateTest);
  const valueMean = valueOf(statistics.valueMean);
  const comparison = valueOf(statistics.valueComparison);
  const segmentValue = statistics.segmentValue;
  const observedRateDifference = difference?.estimate ?? (rate !== null && statistics.restRate !== null ? rate.estimate - statistics.restRate : 0);
  const rateMdd = observedRateDifference >= 0 ? valueOf(statistics.rateMdd.increase) : valueOf(statistics.rateMdd.decrease);
  const values: Record<string, string> = {};
  group.dimensions.forEach((dimension, index) => {
    values[dimension] = group.values[index] as string;
  });
  return {
    rank: null,
    segment: segmentLabel(group.dimensions, group.values),
    dimensions: group.dimensions.join(' & '),
    n: group.stats.n,
    share: total.n > 0 ? group.stats.n / total.n : 0,
    conversions: group.stats.conversions,
    conversion_rate: rate?.estimate ?? null,
    conversion_rate_ci_low: rate?.interval.low ?? null,
    conversion_rate_ci_high: rate?.interval.high ?? null,
    rate_diff: difference?.estimate ?? null,
    rate_diff_ci_low: difference?.interval.low ?? null,
    rate_diff_ci_high: difference?.interval.high ?? null,
    lift: lift?.estimate ?? null,
    lift_ci_low: lift?.interval.low ?? null,
    lift_ci_high: lift?.interval.high ?? null,
    rate_test: test?.kind ?? null,
    rate_p_value: test?.pValue ?? null,
    rate_p_adjusted: null,
    value_mean: segmentValue.n > 0 ? segmentValue.mean : null,
    value_ci_low: valueMean?.interval.low ?? null,
    value_ci_high: valueMean?.interval.high ?? null,
    value_diff: comparison?.difference ?? null,
    value_diff_ci_low: comparison?.interval.low ?? null,
    value_diff_ci_high: comparison?.interval.high ?? null,
    value_p_value: comparison?.pValue ?? null,
    value_p_adjusted: null,
    min_detectable_diff: definition.rank_by === 'conversion_rate' ? rateMdd : valueOf(statistics.valueMdd),
    verdict: 'too_small',
    summary: '',
    values,
    tested: statistics.tested,
    rest: {
      n: rest.n,
      conversions: rest.conversions,
      conversion_rate: statistics.restRate,
      value_n: statistics.restValue.n,
      value_mean: statistics.restValue.n > 0 ? statistics.restValue.mean : null,
    },
    value_n: segmentValue.n,
    rate_z: test?.z ?? null,
    value_t: comparison?.t ?? null,
    value_degrees_of_freedom: comparison?.degreesOfFreedom ?? null,
    effect_sizes: { cohens_h: statistics.cohensH, hedges_g: valueOf(statistics.hedgesG) },
    sufficient_statistics: {
      n: group.stats.n,
      conversions: group.stats.conversions,
      value: { n: segmentValue.n, mean: segmentValue.mean, sum_squared_deviations: segmentValue.sumSquaredDeviations },
    },
    previous_rank: null,
    rank_movement: null,
    change: null,
    notes: collectNotes(statistics),
  };
}

function verdictOf(segment: SnapshotSegment, statistics: SegmentStatistics, definition: ReportDefinition): Verdict {
  const alpha = 1 - definition.confidence;
  if (definition.rank_by === 'conversion_rate') {
    return decideVerdict({
      tested: segment.tested,
      difference:
        segment.rate_diff === null || segment.rate_diff_ci_low === null || segment.rate_diff_ci_high === null
          ? null
          : { estimate: segment.rate_diff, low: segment.rate_diff_ci_low, high: segment.rate_diff_ci_high },
      adjustedPValue: segment.rate_p_adjusted,
      alpha,
      mddIncrease: valueOf(statistics.rateMdd.increase),
      mddDecrease: valueOf(statistics.rateMdd.decrease),
    });
  }
  const mdd = valueOf(statistics.valueMdd);
  return decideVerdict({
    tested: segment.tested,
    difference:
      segment.value_diff === null || segment.value_diff_ci_low === null || segment.value_diff_ci_high === null
        ? null
        : { estimate: segment.value_diff, low: segment.value_diff_ci_low, high: segment.value_diff_ci_high },
    adjustedPValue: segment.value_p_adjusted,
    alpha,
    mddIncrease: mdd,
    mddDecrease: mdd,
  });
}

function sortedCounts<T extends { values: string[] }>(rows: readonly T[], tail: (row: T) => number | null): T[] {
  return [...rows].sort((left, right) => compareValueLists(left.values, right.values) || (tail(left) ?? -1) - (tail(right) ?? -1));
}

/**
 * A SHA-256 over everything the snapshot was computed from: the definition, the shifts and
 * every cell aggregate and grouped count (sorted), and the previous window's cells. Equal data
 * give an equal fingerprint on either database engine.
 */
export function fingerprintOf(input: SnapshotInput): string {
  const hash = createHash('sha256');
  hash.update(JSON.stringify({ definition: input.definition, shifts: input.shifts, arithmetic: input.arithmetic }));
  for (const cell of input.cells) hash.update(JSON.stringify(cell));
  for (const entry of sortedCounts(input.ageCounts, (row) => row.age)) hash.update(JSON.stringify(entry));
  for (const entry of sortedCounts(input.valueCounts, (row) => row.valueCents)) hash.update(JSON.stringify(entry));
  if (input.populationValueCounts) {
    for (const entry of [...input.populationValueCounts].sort((left, right) => left.valueCents - right.valueCents)) hash.update(JSON.stringify(entry));
  }
  if (input.ageValueGrid) {
    hash.update(JSON.stringify(input.ageValueGrid.axes));
    for (const entry of [...input.ageValueGrid.counts].sort((left, right) => left.ageBin - right.ageBin || left.valueBin - right.valueBin)) hash.update(JSON.stringify(entry));
  }
  if (input.previousWindow) {
    hash.update(JSON.stringify({ from: input.previousWindow.from, to: input.previousWindow.to, shifts: input.previousWindow.shifts }));
    for (const cell of input.previousWindow.cells) hash.update(JSON.stringify(cell));
  }
  return hash.digest('hex');
}

/**
 * Computes a whole snapshot (all but `duration_ms`, which the caller measures).
 * @throws StatsInputError when the aggregates are inconsistent (a cell with more conversions than units)
 * @example
 * const snapshot = buildSnapshot({ identity, definition, shifts, arithmetic: 'exact', cells, ageCounts, valueCounts, quality, previousWindow: null, previousSnapshot: null });
 */
export function buildSnapshot(input: SnapshotInput): Snapshot {
  const { definition } = input;
  const words = vocabulary(definition);
  const basis = definition.value_basis;
  const cellGroups = input.cells.map((cell) => ({ values: cell.values, stats: cellStats(cell, input.shifts) }));
  const { total, segments: groups } = rollUp(cellGroups, definition.dimensions, definition.crosses);
  const settings = { confidence: definition.confidence, minN: definition.min_n, valueBasis: basis };

  const analysed = groups.map((group) => {
    const rest = subtractGroup(total, group.stats);
    const statistics = analyzeSegment(group.stats, rest, settings);
    return { group, statistics, segment: buildSegment(group, rest, statistics, total, definition) };
  });

  const rateAdjusted = adjustPValues(analysed.map(({ segment }) => (segment.tested ? segment.rate_p_value : null)), definition.adjustment);
  const valueAdjusted = adjustPValues(analysed.map(({ segment }) => (segment.tested ? segment.value_p_value : null)), definition.adjustment);
  analysed.forEach(({ segment, statistics }, index) => {
    segment.rate_p_adjusted = rateAdjusted[index] ?? null;
    segment.value_p_adjusted = valueAdjusted[index] ?? null;
    segment.verdict = verdictOf(segment, statistics, definition);
  });
  const rateTests = rateAdjusted.filter((value) => value !== null).length;
  const valueTests = valueAdjusted.filter((value) => value !== null).length;

  const segments = rankSegments(
    analysed.map(({ segment }) => segment),
    definition,
  );

  // Change and rank movement.
  const previous = input.previousSnapshot;
  const previousRanks = new Map((previous?.segments ?? []).map((segment) => [segment.segment, segment.rank]));
  let comparison: Comparison;
  let previousFigures: Map<string, PreviousFigures> | null = null;
  if (input.previousWindow) {
    const previousGroups = rollUp(
      input.previousWindow.cells.map((cell) => ({ values: cell.values, stats: cellStats(cell, input.previousWindow!.shifts) })),
      definition.dimensions,
      definition.crosses,
    ).segments;
    previousFigures = new Map(
      previousGroups.map((group) => [segmentLabel(group.dimensions, group.values), { n: group.stats.n, conversions: group.stats.conversions, value: valueSummary(group.stats, basis) }]),
    );
    comparison = {
      compared_with: 'previous_window',
      previous_window: { from: input.previousWindow.from, to: input.previousWindow.to },
      previous_snapshot_id: previous?.snapshot_id ?? null,
      note: `Each segment is compared with the same segment in the window of the same length just before this one (${input.previousWindow.from} to ${input.previousWindow.to}); rank movement is against the previous snapshot.`,
    };
  } else if (previous) {
    previousFigures = new Map(
      previous.segments.map((segment) => {
        const stored = segment.sufficient_statistics;
        return [segment.segment, { n: stored.n, conversions: stored.conversions, value: { n: stored.value.n, mean: stored.value.mean, sumSquaredDeviations: stored.value.sum_squared_deviations } }];
      }),
    );
    comparison = {
      compared_with: 'previous_snapshot',
      previous_window: null,
      previous_snapshot_id: previous.snapshot_id,
      note: 'A campaign report has no time window, so each segment is compared with its counts in the previous snapshot.',
    };
  } else {
    comparison = { compared_with: null, previous_window: null, previous_snapshot_id: null, note: 'This is the first snapshot of the report: there is nothing earlier to compare with.' };
  }
  for (const segment of segments) {
    if (previous) {
      const previousRank = previousRanks.get(segment.segment) ?? null;
      segment.previous_rank = previousRank;
      segment.rank_movement = previousRank !== null && segment.rank !== null ? previousRank - segment.rank : null;
    }
    if (previousFigures && comparison.compared_with !== null) {
      const current = { n: segment.n, conversions: segment.conversions, value: summaryOf(segment) };
      segment.change = computeChange(current, previousFigures.get(segment.segment), comparison.compared_with, definition.confidence);
    }
  }

  const counts = Object.fromEntries(VERDICTS.map((verdict) => [verdict, 0])) as Record<Verdict, number>;
  for (const segment of segments) counts[segment.verdict] += 1;
  const context: SentenceContext = {
    definition,
    vocabulary: words,
    familySizes: { conversion_rate: rateTests, value: valueTests },
    hasPreviousSnapshot: previous !== null,
  };
  for (const segment of segments) segment.summary = segmentSummary(segment, context);

  const metric = (stats: GroupStats): number | null => {
    if (definition.rank_by === 'conversion_rate') return stats.n > 0 ? stats.conversions / stats.n : null;
    const summary = valueSummary(stats, basis);
    return summary.n > 0 ? summary.mean : null;
  };
  const reversals: Reversal[] = findReversals({ dimensions: definition.dimensions, cells: cellGroups, minN: definition.min_n, metric }).map((reversal) => ({
    ...reversal,
    sentence: reversalSentence(reversal, words, definition.rank_by, definition.min_n),
  }));

  const oneWay = definition.dimensions.flatMap((_dimension, index) => groupBy(cellGroups, definition.dimensions, [index]));
  const dimensions = dimensionProfiles({
    dimensions: definition.dimensions,
    oneWay,
    ageCounts: input.ageCounts,
    valueCounts: input.valueCounts,
    valueSummary: (stats) => valueSummary(stats, basis),
    shifts: input.shifts,
    confidence: definition.confidence,
  });

  const population = populationFigures(input, total, definition);
  const testedCount = segments.filter((segment) => segment.tested).length;
  const dataQuality: DataQuality = {
    units: total.n,
    unknown_age: total.n - total.age.n,
    unknown_age_share: total.n > 0 ? (total.n - total.age.n) / total.n : null,
    customers_outside_population: input.quality.customersOutsidePopulation,
    customers_without_any_sale: 'campaign_ids' in definition.source ? null : input.quality.customersWithoutAnySale,
    rejected_rows: input.quality.rejectedRows,
    arithmetic: input.arithmetic,
  };
  const cautions = [...CAUTIONS];
  if (input.arithmetic === 'floating') {
    cautions.push('The value sums were too large for exact integer arithmetic and were computed in floating point; the last digits of value figures may differ between database engines.');
  }

  return {
    snapshot_id: input.identity.snapshotId,
    report_id: input.identity.reportId,
    report_name: input.identity.reportName,
    sequence: input.identity.sequence,
    created_at: input.identity.createdAt,
    trigger: input.identity.trigger,
    duration_ms: 0,
    fingerprint: fingerprintOf(input),
    definition,
    population,
    row_counts: {
      population: total.n,
      cells: input.cells.length,
      segments: segments.length,
      tested: testedCount,
      too_small: counts.too_small,
      rate_tests: rateTests,
      value_tests: valueTests,
    },
    summary: reportSummary({
      definition,
      vocabulary: words,
      population,
      counts,
      familySize: definition.rank_by === 'conversion_rate' ? rateTests : valueTests,
      top: segments[0] ?? null,
      reversals: reversals.length,
    }),
    cautions,
    verdict_counts: counts,
    segments,
    dimensions,
    reversals,
    comparison,
    data_quality: dataQuality,
  };
}

function summaryOf(segment: SnapshotSegment): Summary {
  const stored = segment.sufficient_statistics.value;
  return { n: stored.n, mean: stored.mean, sumSquaredDeviations: stored.sum_squared_deviations };
}

function populationFigures(input: SnapshotInput, total: GroupStats, definition: ReportDefinition): PopulationFigures {
  const rate = total.n > 0 ? valueOf(wilsonInterval(total.conversions, total.n, definition.confidence)) : null;
  const valueSummaryOfTotal = valueSummary(total, definition.value_basis);
  const valueInterval = valueOf(tInterval(valueSummaryOfTotal, definition.confidence));
  const wholeValueCounts = wholePopulationValueCounts(input, valueSummaryOfTotal.n);
  const descriptives = populationDescriptives(input.ageCounts, wholeValueCounts, valueSummaryOfTotal, total.age);
  const histograms = populationHistograms(input.ageCounts, wholeValueCounts);
  const source = definition.source;
  return {
    unit: 'campaign_ids' in source ? 'contact' : 'customer',
    campaign_ids: 'campaign_ids' in source ? source.campaign_ids : null,
    window: 'campaign_ids' in source ? null : { from: source.sales_from, to: source.sales_to },
    n: total.n,
    conversions: total.conversions,
    conversion_rate: rate?.estimate ?? null,
    conversion_rate_ci_low: rate?.interval.low ?? null,
    conversion_rate_ci_high: rate?.interval.high ?? null,
    value_basis: definition.value_basis,
    value_n: valueSummaryOfTotal.n,
    value_mean: valueSummaryOfTotal.n > 0 ? valueSummaryOfTotal.mean : null,
    value_ci_low: valueInterval?.interval.low ?? null,
    value_ci_high: valueInterval?.interval.high ?? null,
    value_descriptives: descriptives.value,
    age_descriptives: descriptives.age,
    age_value_correlation: correlationFromSums(total.ageValue, input.shifts, definition.confidence),
    age_histogram: histograms.age,
    value_histogram: histograms.value,
    age_value_grid: input.ageValueGrid ? nullIfEmpty(ageValueGridCells(input.ageValueGrid.axes, input.ageValueGrid.counts)) : null,
  };
}

function nullIfEmpty<T>(items: T[]): T[] | null {
  return items.length === 0 ? null : items;
}

/**
 * The value counts of every unit of the value metric, or null when they were not read: the
 * whole-population counts when given, else the cell counts when they add up to every unit
 * (a narrowed `valueDistribution` leaves some out, and a histogram of part would mislead).
 */
function wholePopulationValueCounts(input: SnapshotInput, valueUnits: number): PopulationValueCount[] | null {
  if (input.populationValueCounts) return input.populationValueCounts;
  const merged = new Map<number, number>();
  for (const entry of input.valueCounts) merged.set(entry.valueCents, (merged.get(entry.valueCents) ?? 0) + entry.count);
  const covered = [...merged.values()].reduce((sum, count) => sum + count, 0);
  return covered === valueUnits ? [...merged].map(([valueCents, count]) => ({ valueCents, count })) : null;
}
