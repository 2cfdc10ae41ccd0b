/**
 * One segment's row of the snapshot, filled from its statistics against the rest. The
 * p-values are adjusted, the verdict decided and the rank given later, over all segments.
 */
import type { Group, GroupStats } from '../../segments/index.js';
import { DEFAULT_EQUIVALENCE_MARGIN, type ReportDefinition, verdictMetric } from '../definition/index.js';
import type { PublishedSegment } from '../shapes/index.js';
import { valueOrNull } from './outcome.js';
import { statisticNotes, type SegmentStatistics } from './segment-tests.js';
import { withoutHoldout } from './uplift.js';

/**
 * The name of a segment: each dimension with its value.
 * @example
 * segmentLabel(['region', 'channel'], ['North', 'web']); // 'region=North & channel=web'
 */
export function segmentLabel(dimensions: readonly string[], values: readonly string[]): string {
  return dimensions.map((dimension, index) => `${dimension}=${values[index] as string}`).join(' & ');
}

/** The segment's row before adjustment, expected figures, verdict and ranking (their fields hold placeholders until then). */
export function segmentRow(group: Group, rest: GroupStats, statistics: SegmentStatistics, total: GroupStats, definition: ReportDefinition): PublishedSegment {
  const rate = valueOrNull(statistics.rate);
  const difference = valueOrNull(statistics.difference);
  const lift = valueOrNull(statistics.lift);
  const test = valueOrNull(statistics.rateTest);
  const valueMean = valueOrNull(statistics.valueMean);
  const comparison = valueOrNull(statistics.valueComparison);
  const segmentValue = statistics.segmentValue;
  const observedRateDifference = difference?.estimate ?? (rate !== null && statistics.restRate !== null ? rate.estimate - statistics.restRate : 0);
  const rateMdd = observedRateDifference >= 0 ? valueOrNull(statistics.rateMdd.increase) : valueOrNull(statistics.rateMdd.decrease);
  const values: Record<string, string> = {};
  group.dimensions.forEach((dimension, index) => {
    values[dimension] = group.labels[index] as string;
  });
  return {
    rank: null,
    segment: segmentLabel(group.dimensions, group.labels),
    dimensions: group.dimensions.join(' & '),
    n: group.stats.n,
    share: total.n > 0 ? group.stats.n / total.n : 0,
    conversions: group.stats.conversions,
    conversion_rate: rate?.estimate ?? null,
    conversion_rate_ci_low: rate?.interval.low ?? null,
    conversion_rate_ci_high: rate?.interval.high ?? null,
    rate_expected: null,
    rate_expected_ci_low: null,
    rate_expected_ci_high: null,
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
    value_expected: null,
    value_expected_ci_low: null,
    value_expected_ci_high: null,
    value_diff: comparison?.difference ?? null,
    value_diff_ci_low: comparison?.interval.low ?? null,
    value_diff_ci_high: comparison?.interval.high ?? null,
    value_p_value: comparison?.pValue ?? null,
    value_p_adjusted: null,
    min_detectable_diff: verdictMetric(definition) === 'conversion_rate' ? rateMdd : valueOrNull(statistics.valueMdd),
    verdict: 'too_small',
    explained_by: null,
    summary: '',
    withheld_below: null,
    ...withoutHoldout(),
    values,
    tested: statistics.tested,
    mirror_of: null,
    equivalence: {
      conversion_rate: statistics.tested
        ? {
            margin: definition.equivalence_margin,
            margin_source: definition.equivalence_margin === DEFAULT_EQUIVALENCE_MARGIN ? 'default' : 'definition',
            p_value: valueOrNull(statistics.rateEquivalence)?.pValue ?? null,
            p_adjusted: null,
          }
        : null,
      value:
        statistics.tested && statistics.valueEquivalence !== null && definition.value_equivalence_margin !== null
          ? { margin: definition.value_equivalence_margin, margin_source: 'definition', p_value: valueOrNull(statistics.valueEquivalence)?.pValue ?? null, p_adjusted: null }
          : null,
    },
    strata: statistics.strata,
    rest: {
      n: rest.n,
      conversions: rest.conversions,
      conversion_rate: statistics.restRate,
      value_n: statistics.restValue.n,
      value_mean: statistics.restValue.n > 0 ? statistics.restValue.mean : null,
    },
    value_n: segmentValue.n,
    rate_z: test?.z ?? null,
    value_test: comparison?.method ?? null,
    value_t: comparison?.t ?? null,
    value_degrees_of_freedom: comparison?.degreesOfFreedom ?? null,
    effect_sizes: { cohens_h: statistics.cohensH, hedges_g: valueOrNull(statistics.hedgesG) },
    sufficient_statistics: {
      n: group.stats.n,
      conversions: group.stats.conversions,
      value: { n: segmentValue.n, mean: segmentValue.mean, sum_squared_deviations: segmentValue.sumSquaredDeviations },
    },
    previous_rank: null,
    rank_movement: null,
    change: null,
    notes: statisticNotes(statistics),
  };
}
