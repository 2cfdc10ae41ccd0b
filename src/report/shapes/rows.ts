/**
 * The shapes a snapshot is made of. `SEGMENT_ROW_FIELDS` is the flat row of the BI pull, in
 * the fixed order of the design; a snapshot's segments carry those fields first and the
 * detail (rest, effect sizes, change) after them.
 */
import type { ReportDefinition } from '../definition/index.js';

export const SEGMENT_ROW_FIELDS = [
  'rank',
  'segment',
  'dimensions',
  'n',
  'share',
  'conversions',
  'conversion_rate',
  'conversion_rate_ci_low',
  'conversion_rate_ci_high',
  'rate_diff',
  'rate_diff_ci_low',
  'rate_diff_ci_high',
  'lift',
  'lift_ci_low',
  'lift_ci_high',
  'rate_test',
  'rate_p_value',
  'rate_p_adjusted',
  'value_mean',
  'value_ci_low',
  'value_ci_high',
  'value_diff',
  'value_diff_ci_low',
  'value_diff_ci_high',
  'value_p_value',
  'value_p_adjusted',
  'min_detectable_diff',
  'verdict',
  'summary',
] as const;

export type SegmentRowField = (typeof SEGMENT_ROW_FIELDS)[number];

export const VERDICTS = ['better', 'worse', 'no_detectable_difference', 'inconclusive', 'too_small'] as const;
export type Verdict = (typeof VERDICTS)[number];

/** One flat row of the ranked table. Rates and shares are fractions; money is in major units. */
export interface SegmentRow {
  /** 1 = first; null for segments that were not tested (they are listed after the tested ones) */
  rank: number | null;
  /** e.g. `region=North` or `age_band=25-34 & region=North` */
  segment: string;
  /** e.g. `region` or `age_band & region` */
  dimensions: string;
  n: number;
  share: number;
  conversions: number;
  conversion_rate: number | null;
  conversion_rate_ci_low: number | null;
  conversion_rate_ci_high: number | null;
  rate_diff: number | null;
  rate_diff_ci_low: number | null;
  rate_diff_ci_high: number | null;
  lift: number | null;
  lift_ci_low: number | null;
  lift_ci_high: number | null;
  rate_test: 'z' | 'fisher' | null;
  rate_p_value: number | null;
  rate_p_adjusted: number | null;
  value_mean: number | null;
  value_ci_low: number | null;
  value_ci_high: number | null;
  value_diff: number | null;
  value_diff_ci_low: number | null;
  value_diff_ci_high: number | null;
  value_p_value: number | null;
  value_p_adjusted: number | null;
  /** in the unit of the ranking metric: a rate difference (fraction) or money (major units) */
  min_detectable_diff: number | null;
  verdict: Verdict;
  summary: string;
}

/** The same metrics for the rest of the population (everyone outside the segment). */
export interface RestFigures {
  n: number;
  conversions: number;
  conversion_rate: number | null;
  value_n: number;
  value_mean: number | null;
}

/** Change of a segment since the previous window (sales reports) or snapshot (campaign reports). */
export interface SegmentChange {
  compared_with: 'previous_window' | 'previous_snapshot';
  previous_n: number;
  previous_conversions: number;
  previous_conversion_rate: number | null;
  rate_change: number | null;
  rate_change_ci_low: number | null;
  rate_change_ci_high: number | null;
  previous_value_mean: number | null;
  value_change: number | null;
  value_change_ci_low: number | null;
  value_change_ci_high: number | null;
}

/** A segment as the full snapshot holds it: the flat row, then its detail. */
export interface SnapshotSegment extends SegmentRow {
  values: Record<string, string>;
  tested: boolean;
  rest: RestFigures;
  /** units behind value_mean: every unit (per_unit) or the converted ones (per_conversion) */
  value_n: number;
  rate_z: number | null;
  value_t: number | null;
  value_degrees_of_freedom: number | null;
  effect_sizes: { cohens_h: number | null; hedges_g: number | null };
  /** sufficient statistics, so a later snapshot can compare with this one */
  sufficient_statistics: { n: number; conversions: number; value: { n: number; mean: number; sum_squared_deviations: number } };
  previous_rank: number | null;
  /** positive: moved up (towards rank 1) since the previous snapshot */
  rank_movement: number | null;
  change: SegmentChange | null;
  /** why figures are missing, as the statistics core states it */
  notes: string[];
}

export interface Descriptives {
  n: number;
  mean: number | null;
  median: number | null;
  modes: number[] | null;
  standard_deviation: number | null;
  coefficient_of_variation: number | null;
  skewness: number | null;
  q1: number | null;
  q3: number | null;
  notes: string[];
}

export interface Correlation {
  n: number;
  r: number | null;
  ci_low: number | null;
  ci_high: number | null;
  p_value: number | null;
  note: string | null;
}

export interface DimensionValueProfile {
  value: string;
  n: number;
  share: number;
  cumulative_share: number;
  value_descriptives: Descriptives;
  age_descriptives: Descriptives;
  age_value_correlation: Correlation;
}

export interface DimensionProfile {
  dimension: string;
  /** in Pareto order: most units first */
  values: DimensionValueProfile[];
}

export interface Reversal {
  dimension: string;
  within: string;
  higher_overall: string;
  lower_overall: string;
  higher_overall_metric: number;
  lower_overall_metric: number;
  levels_compared: number;
  sentence: string;
}

export interface DataQuality {
  units: number;
  unknown_age: number;
  unknown_age_share: number | null;
  /** campaign reports: stored customers never contacted in these campaigns (no outcome recorded); sales reports: 0 */
  customers_outside_population: number;
  /** sales reports: customers with no sale at all, counted as not buying; campaign reports: null */
  customers_without_any_sale: number | null;
  rejected_rows: Array<{ kind: string; ingests: number; rejected: number }>;
  arithmetic: 'exact' | 'floating';
}

/**
 * A histogram as the statistics core's `histogram` returns it: equal bins, each holding
 * values from `low` up to but not including `high`, the last also holding `high`.
 */
export interface HistogramFigure {
  /** how the number of bins was chosen: 'sturges', 'freedman-diaconis' or 'fixed' */
  rule: string;
  bin_width: number;
  bins: Array<{ low: number; high: number; count: number }>;
  /** why the rule was not applied as asked (or all values are equal), or null */
  note: string | null;
}

/** One occupied cell of the age × value grid: ages in years, value in major currency units. */
export interface AgeValueGridCell {
  age_low: number;
  age_high: number;
  value_low: number;
  value_high: number;
  count: number;
}

export interface PopulationFigures {
  unit: 'contact' | 'customer';
  campaign_ids: string[] | null;
  window: { from: string; to: string } | null;
  n: number;
  conversions: number;
  conversion_rate: number | null;
  conversion_rate_ci_low: number | null;
  conversion_rate_ci_high: number | null;
  value_basis: ReportDefinition['value_basis'];
  value_n: number;
  value_mean: number | null;
  value_ci_low: number | null;
  value_ci_high: number | null;
  value_descriptives: Descriptives;
  age_descriptives: Descriptives;
  age_value_correlation: Correlation;
  /** Units with a known age. Null when there are none; absent from snapshots stored before it existed. */
  age_histogram?: HistogramFigure | null;
  /** Units of the value metric, major currency units. Null when there are none or their values were not read. */
  value_histogram?: HistogramFigure | null;
  /** Units of the value metric with a known age, occupied cells only. Null when there are none. */
  age_value_grid?: AgeValueGridCell[] | null;
}

export interface Comparison {
  compared_with: 'previous_window' | 'previous_snapshot' | null;
  previous_window: { from: string; to: string } | null;
  previous_snapshot_id: string | null;
  note: string;
}

export interface RowCounts {
  population: number;
  cells: number;
  segments: number;
  tested: number;
  too_small: number;
  /** size of the multiplicity family of each metric: tested segments whose test could be computed */
  rate_tests: number;
  value_tests: number;
}

/** The whole snapshot, as stored and as `GET …/snapshots/{id}` returns it. */
export interface Snapshot {
  snapshot_id: string;
  report_id: string;
  report_name: string;
  sequence: number;
  created_at: string;
  trigger: 'manual' | 'schedule' | 'command';
  duration_ms: number;
  fingerprint: string;
  definition: ReportDefinition;
  population: PopulationFigures;
  row_counts: RowCounts;
  summary: string;
  cautions: string[];
  verdict_counts: Record<Verdict, number>;
  segments: SnapshotSegment[];
  dimensions: DimensionProfile[];
  reversals: Reversal[];
  comparison: Comparison;
  data_quality: DataQuality;
}

/** The flat row of a snapshot segment, fields in the fixed order. */
export function toSegmentRow(segment: SegmentRow): SegmentRow {
  const row: Record<string, unknown> = {};
  for (const field of SEGMENT_ROW_FIELDS) row[field] = segment[field];
  return row as unknown as SegmentRow;
}
