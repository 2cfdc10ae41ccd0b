/** The ranking metric of a segment, seen through one interface whichever metric it is. */
import type { VerdictMetric } from '../definition/index.js';
import type { SnapshotSegment } from '../shapes/index.js';
import { formatMoney, formatPercent, formatPoints, formatPointsMagnitude, formatSignedMoney } from './format.js';
import type { Vocabulary } from './vocabulary.js';

export interface MetricView {
  name: string;
  estimate: number | null;
  low: number | null;
  high: number | null;
  rest: number | null;
  difference: number | null;
  differenceLow: number | null;
  differenceHigh: number | null;
  adjustedP: number | null;
  mdd: number | null;
  level(value: number): string;
  signed(value: number): string;
  magnitude(value: number): string;
  unit: string;
}

export function metricView(segment: SnapshotSegment, metric: VerdictMetric, words: Vocabulary): MetricView {
  if (metric === 'conversion_rate') {
    return {
      name: words.rateName,
      estimate: segment.conversion_rate,
      low: segment.conversion_rate_ci_low,
      high: segment.conversion_rate_ci_high,
      rest: segment.rest?.conversion_rate ?? null,
      difference: segment.rate_diff,
      differenceLow: segment.rate_diff_ci_low,
      differenceHigh: segment.rate_diff_ci_high,
      adjustedP: segment.rate_p_adjusted,
      mdd: segment.min_detectable_diff,
      level: formatPercent,
      signed: formatPoints,
      magnitude: formatPointsMagnitude,
      unit: ' percentage points',
    };
  }
  return {
    name: words.valueName,
    estimate: segment.value_mean,
    low: segment.value_ci_low,
    high: segment.value_ci_high,
    rest: segment.rest?.value_mean ?? null,
    difference: segment.value_diff,
    differenceLow: segment.value_diff_ci_low,
    differenceHigh: segment.value_diff_ci_high,
    adjustedP: segment.value_p_adjusted,
    mdd: segment.min_detectable_diff,
    level: formatMoney,
    signed: formatSignedMoney,
    magnitude: (value) => formatMoney(Math.abs(value)),
    unit: '',
  };
}
