/**
 * Builds a snapshot from the aggregates of the database: roll the cells up to segments, test
 * each against its rest, adjust the p-values over the report's family of tests, decide the
 * verdicts, rank, compare with the previous window or snapshot, and write the sentences.
 * Pure: numbers in, snapshot out; the service around it does the I/O.
 */
import { adjustPValues } from '../../stats/index.js';
import { cellStats, groupBy, rollUp, subtractGroup, type GroupStats } from '../../segments/index.js';
import {
  analyzeSegment,
  comparisonBasis,
  expectedFigures,
  explainingParent,
  findReversals,
  positiveLogSummaries,
  rankSegments,
  recordChanges,
  campaignStrata,
  mirroredSegments,
  segmentLabel,
  segmentRow,
  segmentVerdict,
  valueSummary,
} from '../analysis/index.js';
import { VERDICTS, type Comparison, type Reversal, type Snapshot, type SnapshotSegment, type Verdict } from '../shapes/index.js';
import { comparisonNote, reportSummary, reversalSentence, segmentSummary, snapshotCautions, vocabulary, type SentenceContext } from '../wording/index.js';
import { fingerprintOf } from './fingerprint.js';
import { addHoldoutFigures } from './holdout.js';
import type { SnapshotInput } from './input.js';
import { dataQualityOf, populationFigures } from './population.js';
import { dimensionProfiles } from './profiles.js';
import { withholdSnapshot } from './withholding.js';
import { DEFAULT_PUBLICATION_THRESHOLD } from '../../config.js';
import { verdictMetric } from '../definition/index.js';

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
  const cellGroups = input.cells.map((cell) => ({ labels: cell.labels, stats: cellStats(cell, input.shifts) }));
  const { total, segments: groups } = rollUp(cellGroups, definition.dimensions, definition.crosses);
  const threshold = input.publicationThreshold ?? DEFAULT_PUBLICATION_THRESHOLD;
  // A segment below the publication threshold is withheld, so it is not tested either: the
  // adjustment's family then holds only segments whose figures can be shown.
  const minN = Math.max(definition.min_n, threshold);
  const mirrors = mirroredSegments(groups);
  const isTested = (stats: GroupStats) => stats.n >= minN && total.n - stats.n >= minN;
  const plannedTests = groups.filter((group) => isTested(group.stats) && !mirrors.has(segmentLabel(group.dimensions, group.labels))).length;
  const alpha = 1 - definition.confidence;
  const settings = {
    confidence: definition.confidence,
    minN,
    valueBasis: basis,
    detectionAlpha: definition.adjustment === 'none' ? alpha : alpha / Math.max(1, plannedTests),
    equivalenceMargin: definition.equivalence_margin,
    valueEquivalenceMargin: definition.value_equivalence_margin,
  };
  const strataOf = campaignStrata(input.strata ?? [], definition.dimensions);

  const logs = positiveLogSummaries({
    dimensions: definition.dimensions,
    cells: cellGroups,
    valueCounts: input.valueCounts,
    populationValueCounts: input.populationValueCounts,
    basis,
  });
  const analysed = groups.map((group) => {
    const rest = subtractGroup(total, group.stats);
    const segmentLogs = logs.of(group);
    const statistics = analyzeSegment(group.stats, rest, settings, strataOf(group), { segment: logs.summary(segmentLogs), rest: logs.summary(logs.without(logs.total, segmentLogs)) });
    const segment = segmentRow(group, rest, statistics, total, definition);
    segment.mirror_of = mirrors.get(segment.segment) ?? null;
    return { group, statistics, segment };
  });

  // A mirror repeats its twin's comparison: it is left out of every family and takes the twin's adjusted values.
  const family = analysed.map(({ segment }) => segment.tested && segment.mirror_of === null);
  const adjusted = (pick: (segment: SnapshotSegment) => number | null) =>
    adjustPValues(
      analysed.map(({ segment }, index) => (family[index] ? pick(segment) : null)),
      definition.adjustment,
    );
  const rateAdjusted = adjusted((segment) => segment.rate_p_value);
  const valueAdjusted = adjusted((segment) => segment.value_p_value);
  const rateEquivalenceAdjusted = adjusted((segment) => segment.equivalence.conversion_rate?.p_value ?? null);
  const valueEquivalenceAdjusted = adjusted((segment) => segment.equivalence.value?.p_value ?? null);
  analysed.forEach(({ segment }, index) => {
    segment.rate_p_adjusted = rateAdjusted[index] ?? null;
    segment.value_p_adjusted = valueAdjusted[index] ?? null;
    if (segment.equivalence.conversion_rate) segment.equivalence.conversion_rate.p_adjusted = rateEquivalenceAdjusted[index] ?? null;
    if (segment.equivalence.value) segment.equivalence.value.p_adjusted = valueEquivalenceAdjusted[index] ?? null;
  });
  const byLabel = new Map(analysed.map(({ segment }) => [segment.segment, segment]));
  for (const { segment } of analysed) {
    const twin = segment.mirror_of === null ? undefined : byLabel.get(segment.mirror_of);
    if (!twin || !segment.tested) continue;
    segment.rate_p_adjusted = twin.rate_p_adjusted;
    segment.value_p_adjusted = twin.value_p_adjusted;
    if (segment.equivalence.conversion_rate) segment.equivalence.conversion_rate.p_adjusted = twin.equivalence.conversion_rate?.p_adjusted ?? null;
    if (segment.equivalence.value) segment.equivalence.value.p_adjusted = twin.equivalence.value?.p_adjusted ?? null;
  }
  if (input.holdout) addHoldoutFigures(analysed.map(({ group, segment }) => ({ stats: group.stats, segment })), total, input.holdout, definition, minN);
  for (const { segment } of analysed) segment.verdict = segmentVerdict(segment, definition);
  const expected = expectedFigures(
    analysed.map(({ group }) => group),
    total,
    { confidence: definition.confidence, valueBasis: basis },
  );
  analysed.forEach(({ segment }, index) => {
    const { rate, value } = expected[index] ?? { rate: null, value: null };
    segment.rate_expected = rate?.estimate ?? null;
    segment.rate_expected_ci_low = rate?.low ?? null;
    segment.rate_expected_ci_high = rate?.high ?? null;
    segment.value_expected = value?.estimate ?? null;
    segment.value_expected_ci_low = value?.low ?? null;
    segment.value_expected_ci_high = value?.high ?? null;
  });
  const oneWayByLabel = new Map(analysed.filter(({ group }) => group.dimensions.length === 1).map((entry) => [entry.segment.segment, entry]));
  for (const entry of analysed) entry.segment.explained_by = explainingParent(entry, oneWayByLabel, definition, logs);
  const rateTests = rateAdjusted.filter((value) => value !== null).length;
  const valueTests = valueAdjusted.filter((value) => value !== null).length;

  const segments = rankSegments(
    analysed.map(({ segment }) => segment),
    definition,
  );

  const previous = input.previousSnapshot;
  const comparedWith = comparisonBasis(input.previousWindow, previous);
  const comparison: Comparison = { ...comparedWith, note: comparisonNote(comparedWith) };
  recordChanges(segments, { basis: comparedWith, window: input.previousWindow, snapshot: previous, earlierUnitsChanged: input.earlierContactsChanged ?? false }, definition);

  const counts = Object.fromEntries(VERDICTS.map((verdict) => [verdict, 0])) as Record<Verdict, number>;
  for (const segment of segments) counts[segment.verdict] += 1;
  const context: SentenceContext = {
    definition,
    vocabulary: words,
    familySizes: { conversion_rate: rateTests, value: valueTests },
    hasPreviousSnapshot: previous !== null,
    comparedWith: comparedWith.compared_with,
  };
  for (const segment of segments) segment.summary = segmentSummary(segment, context);

  const metric = (stats: GroupStats): number | null => {
    if (verdictMetric(definition) === 'conversion_rate') return stats.n > 0 ? stats.conversions / stats.n : null;
    const summary = valueSummary(stats, basis);
    return summary.n > 0 ? summary.mean : null;
  };
  const reversals: Reversal[] = findReversals({ dimensions: definition.dimensions, cells: cellGroups, minN: definition.min_n, metric }).map((reversal) => ({
    ...reversal,
    sentence: reversalSentence(reversal, words, verdictMetric(definition), definition.min_n),
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

  return withholdSnapshot({
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
      familySize: verdictMetric(definition) === 'conversion_rate' ? rateTests : valueTests,
      top: segments[0] ?? null,
      reversals: reversals.length,
    }),
    cautions: snapshotCautions(input.arithmetic),
    verdict_counts: counts,
    segments,
    dimensions,
    reversals,
    comparison,
    data_quality: dataQualityOf(input, total, definition),
  }, threshold);
}
