/**
 * The ranking metric of a report as the page shows it: its name, the unit of differences, and
 * how a difference is written. Rates are drawn in percentage points, money in major units;
 * the words use the same formatters as the report's sentences.
 */
import { type ReportDefinition, verdictMetric } from '../report/definition/index.js';
import { formatConfidence, formatMoney, formatPercent, formatPoints, formatSignedMoney, vocabulary } from '../report/wording/index.js';
import type { SnapshotSegment } from '../report/shapes/index.js';

export interface MetricDisplay {
  /** e.g. "conversion rate" or "revenue per contacted customer" */
  name: string;
  /** the factor from the stored figure to the drawn one: 100 for rates (points), 1 for money */
  drawnScale: number;
  /** a difference, signed, in words: "+2.3 points" or "+4.10" */
  difference(value: number): string;
  /** a level: "12.4%" or "41.20" */
  level(value: number): string;
  /** the unit of a drawn difference, for axis titles */
  differenceUnit: string;
  /** the method of the difference's interval, for captions */
  intervalMethod: string;
  /** the segment's difference from the rest and its interval, stored units */
  differenceOf(segment: SnapshotSegment): { estimate: number | null; low: number | null; high: number | null };
  /** the segment's own level and interval, stored units */
  levelOf(segment: SnapshotSegment): { estimate: number | null; low: number | null; high: number | null };
}

/**
 * The display of a definition's ranking metric.
 * @example
 * rankingMetric(definition).difference(0.023); // '+2.3 points'
 */
export function rankingMetric(definition: ReportDefinition): MetricDisplay {
  const words = vocabulary(definition);
  if (verdictMetric(definition) === 'conversion_rate') {
    return {
      name: words.rateName,
      drawnScale: 100,
      difference: (value) => `${formatPoints(value)} points`,
      level: formatPercent,
      differenceUnit: 'percentage points',
      intervalMethod: 'Newcombe hybrid score interval',
      differenceOf: (segment) => ({ estimate: segment.rate_diff, low: segment.rate_diff_ci_low, high: segment.rate_diff_ci_high }),
      levelOf: (segment) => ({ estimate: segment.conversion_rate, low: segment.conversion_rate_ci_low, high: segment.conversion_rate_ci_high }),
    };
  }
  return {
    name: words.valueName,
    drawnScale: 1,
    difference: formatSignedMoney,
    level: formatMoney,
    differenceUnit: 'currency units',
    intervalMethod: 'Welch t interval',
    differenceOf: (segment) => ({ estimate: segment.value_diff, low: segment.value_diff_ci_low, high: segment.value_diff_ci_high }),
    levelOf: (segment) => ({ estimate: segment.value_mean, low: segment.value_ci_low, high: segment.value_ci_high }),
  };
}

/** "95% CI" for a definition. */
export function confidenceLabel(definition: ReportDefinition): string {
  return `${formatConfidence(definition.confidence)} CI`;
}
