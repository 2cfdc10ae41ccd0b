/**
 * The shapes a snapshot is made of, declared once: the TypeScript types, the JSON Schemas and
 * the OpenAPI components all come from here. `SegmentRow` is the flat row of the BI pull, its
 * fields in the fixed column order of the design (`SEGMENT_ROW_FIELDS` is read from it); a
 * snapshot's segments carry those fields first and the detail (rest, effect sizes, change)
 * after them. Rates and shares are fractions; money is in major units.
 */
import { Type, type Static, type TSchema } from 'typebox';
import { ReportDefinition } from '../definition/index.js';

const nullable = <T extends TSchema>(schema: T, options: { description?: string } = {}) => Type.Union([schema, Type.Null()], options);
const NullableNumber = (description?: string) => nullable(Type.Number(), description === undefined ? {} : { description });
const strings = () => Type.Array(Type.String());

export const VERDICTS = ['better', 'worse', 'equivalent', 'inconclusive', 'too_small'] as const;
export const Verdict = Type.Unsafe<(typeof VERDICTS)[number]>({ type: 'string', enum: [...VERDICTS] });
export type Verdict = Static<typeof Verdict>;

/** One flat row of the ranked table; the order of its fields is the order of the BI columns. */
/**
 * A campaign report whose population has holdout customers (kept out on purpose) appends these
 * to each segment; n, conversions and the vs-the-rest figures then describe the contacted
 * customers. Null in every other report, and absent from its CSV.
 */
const HOLDOUT_FIELDS = {
  holdout_n: nullable(Type.Integer(), { description: "the segment's holdout customers" }),
  holdout_conversions: nullable(Type.Integer()),
  holdout_rate: NullableNumber(),
  uplift: NullableNumber('conversion rate of the contacted − rate of the holdout within the segment (Newcombe hybrid score interval)'),
  uplift_ci_low: NullableNumber(),
  uplift_ci_high: NullableNumber(),
  uplift_p_value: NullableNumber('pooled two-proportion z-test, or Fisher exact test when an expected count is below 5'),
  uplift_p_adjusted: NullableNumber('adjusted over the uplift tests of the report, a family of their own'),
  uplift_vs_rest: NullableNumber("the segment's uplift − the rest's uplift, as the difference of two independent estimates (Altman & Bland 2003)"),
  uplift_vs_rest_ci_low: NullableNumber(),
  uplift_vs_rest_ci_high: NullableNumber(),
  uplift_vs_rest_p_value: NullableNumber(),
  incremental_value_per_contact: NullableNumber('mean revenue per contacted customer − per holdout customer, zeros included (Welch interval), major currency units'),
  incremental_value_ci_low: NullableNumber(),
  incremental_value_ci_high: NullableNumber(),
  incremental_profit_per_contact: NullableNumber('margin × incremental value − cost per contact (definition economics); null without economics'),
  incremental_profit_ci_low: NullableNumber(),
  incremental_profit_ci_high: NullableNumber(),
  advice: Type.Unsafe<'contact' | 'hold_back' | 'undecided' | null>({
    type: ['string', 'null'],
    enum: ['contact', 'hold_back', 'undecided', null],
    description:
      'contact: the lower end of incremental profit (or of uplift, without economics), at the confidence the adjustment of the uplift family implies, is above 0; hold_back: the upper end is below 0; undecided otherwise; null when not measured',
  }),
};

export const SegmentRow = Type.Object({
  rank: nullable(Type.Integer(), { description: '1 = first; null for segments that were not tested (they are listed after the tested ones)' }),
  segment: Type.String({ description: 'dimension=value, joined by " & " for a two-way segment, e.g. age_band=25-34 & region=North' }),
  dimensions: Type.String({ description: 'the dimension names, joined by " & "' }),
  n: nullable(Type.Integer(), { description: 'units; null when the segment is withheld (see withheld_below)' }),
  share: NullableNumber('n / population, a fraction; null when withheld'),
  conversions: nullable(Type.Integer(), { description: 'null when withheld' }),
  conversion_rate: NullableNumber(),
  conversion_rate_ci_low: NullableNumber(),
  conversion_rate_ci_high: NullableNumber(),
  rate_expected: NullableNumber(
    "the segment's conversion rate after allowing for chance: an empirical-Bayes estimate drawn toward what its parents predict (the population for a one-way segment); the ranking uses it",
  ),
  rate_expected_ci_low: NullableNumber('lower end of the interval of rate_expected, at the report confidence'),
  rate_expected_ci_high: NullableNumber('upper end of the interval of rate_expected, at the report confidence'),
  rate_diff: NullableNumber('segment rate − rest rate (Newcombe hybrid score interval)'),
  rate_diff_ci_low: NullableNumber(),
  rate_diff_ci_high: NullableNumber(),
  lift: NullableNumber('segment rate / rest rate (Katz log interval)'),
  lift_ci_low: NullableNumber(),
  lift_ci_high: NullableNumber(),
  rate_test: Type.Unsafe<'z' | 'fisher' | 'cmh' | null>({
    type: ['string', 'null'],
    enum: ['z', 'fisher', 'cmh', null],
    description: 'z: pooled two-proportion z-test; fisher: Fisher exact test; cmh: Cochran–Mantel–Haenszel test within campaign (reports over several campaigns)',
  }),
  rate_p_value: NullableNumber(),
  rate_p_adjusted: NullableNumber(),
  value_mean: NullableNumber('major currency units, per the report value_basis'),
  value_ci_low: NullableNumber(),
  value_ci_high: NullableNumber(),
  value_expected: NullableNumber("the segment's value mean after allowing for chance (empirical Bayes, as rate_expected), major currency units"),
  value_expected_ci_low: NullableNumber(),
  value_expected_ci_high: NullableNumber(),
  value_diff: NullableNumber('segment mean − rest mean; the interval is Welch\'s'),
  value_diff_ci_low: NullableNumber(),
  value_diff_ci_high: NullableNumber(),
  value_p_value: NullableNumber(
    "Lachenbruch's two-part test (share of positive values and mean log of the positive values), or Student's pooled t when the values were not read one by one; null when the segment or the rest has fewer than 2 converted units",
  ),
  value_p_adjusted: NullableNumber(),
  min_detectable_diff: NullableNumber(
    'at 80% power at the per-test level the adjustment implies (α/m for bh and holm, α for none), in the direction of the observed difference, in the unit of the ranking metric: a rate difference (fraction) or money (major units)',
  ),
  verdict: Verdict,
  explained_by: nullable(Type.String(), {
    description:
      'two-way segments: the label of the parent (one-way) segment that explains its better or worse verdict, because within that parent the segment shows no difference; null otherwise',
  }),
  summary: Type.String(),
  withheld_below: nullable(Type.Integer(), {
    description:
      'null for a published segment; otherwise the publication threshold: the segment (or its rest) has fewer units than this, or its figures would let a smaller one be recovered by subtraction, so every figure is null and it is not tested',
  }),
  ...HOLDOUT_FIELDS,
});
export type SegmentRow = Static<typeof SegmentRow>;

export type SegmentRowField = keyof SegmentRow;
export const SEGMENT_ROW_FIELDS = Object.keys(SegmentRow.properties) as SegmentRowField[];

/** The same metrics for the rest of the population (everyone outside the segment). */
const RestFigures = Type.Object({
  n: Type.Integer(),
  conversions: Type.Integer(),
  conversion_rate: NullableNumber(),
  value_n: Type.Integer(),
  value_mean: NullableNumber(),
});
export type RestFigures = Static<typeof RestFigures>;

/**
 * Change of a segment: campaign reports compare the contacts stored since the previous
 * snapshot (new_*) with those it had (previous_*); sales reports compare this window (new_*)
 * with the window of the same length before it (previous_*). The groups are disjoint, so the
 * two-sample intervals and tests apply; p-values are adjusted over the family of changes.
 */
export const SegmentChange = Type.Object({
  compared_with: Type.Unsafe<'previous_window' | 'previous_snapshot'>({ type: 'string', enum: ['previous_window', 'previous_snapshot'] }),
  previous_n: Type.Integer(),
  previous_conversions: Type.Integer(),
  previous_conversion_rate: NullableNumber(),
  new_n: Type.Integer({ description: 'units since the previous snapshot (campaign reports) or in this window (sales reports, customers known at its start)' }),
  new_conversions: Type.Integer(),
  new_conversion_rate: NullableNumber(),
  rate_change: NullableNumber('new rate − previous rate (Newcombe hybrid score interval)'),
  rate_change_ci_low: NullableNumber(),
  rate_change_ci_high: NullableNumber(),
  rate_change_p_value: NullableNumber('pooled two-proportion z-test, or Fisher exact test for small expected counts'),
  rate_change_p_adjusted: NullableNumber('adjusted over the changes of all segments'),
  previous_value_mean: NullableNumber(),
  new_value_mean: NullableNumber(),
  value_change: NullableNumber('new mean − previous mean (Welch)'),
  value_change_ci_low: NullableNumber(),
  value_change_ci_high: NullableNumber(),
  value_change_p_value: NullableNumber(),
  value_change_p_adjusted: NullableNumber(),
});
export type SegmentChange = Static<typeof SegmentChange>;

/** One equivalence test (two one-sided tests against ± the margin) of one metric. */
const EquivalenceTest = Type.Object({
  margin: Type.Number({ description: 'rates: a fraction; value: major currency units' }),
  margin_source: Type.Unsafe<'default' | 'definition'>({ type: 'string', enum: ['default', 'definition'], description: "default: the product's default margin; definition: set in the report definition" }),
  p_value: NullableNumber('TOST p-value: the larger of the two one-sided p-values (Agresti–Caffo for rates, Welch for values)'),
  p_adjusted: NullableNumber('adjusted over the equivalence tests of this metric, with the report adjustment'),
});
export type EquivalenceTest = Static<typeof EquivalenceTest>;

/** A segment as the full snapshot holds it: the flat row, then its detail. */
export const SnapshotSegment = Type.Object({
  ...SegmentRow.properties,
  values: Type.Record(Type.String(), Type.String()),
  tested: Type.Boolean(),
  mirror_of: nullable(Type.String(), {
    description: 'for the second value of a yes/no dimension (two values, no unknowns): the segment whose comparison this one mirrors; its tests are counted once, under that segment',
  }),
  equivalence: Type.Object(
    { conversion_rate: nullable(EquivalenceTest), value: nullable(EquivalenceTest, { description: 'null when value_equivalence_margin is null or the test cannot be computed' }) },
    { description: 'whether the difference from the rest lies within ± the margin; the verdict uses the ranking metric' },
  ),
  strata: nullable(Type.Integer(), { description: 'campaigns the rate comparison was made within (reports over several campaigns); null: one sample' }),
  rest: nullable(RestFigures, { description: 'null when the segment is withheld' }),
  value_n: nullable(Type.Integer(), { description: 'units behind value_mean: every unit (per_unit) or the converted ones (per_conversion); null when withheld' }),
  rate_z: NullableNumber(),
  value_test: Type.Unsafe<'two_part' | 'pooled_t' | null>({
    type: ['string', 'null'],
    enum: ['two_part', 'pooled_t', null],
    description: 'the test behind value_p_value: two_part (Lachenbruch) or pooled_t (Student); null when not compared',
  }),
  value_t: NullableNumber('t of the mean logs (two_part) or of the means (pooled_t)'),
  value_degrees_of_freedom: NullableNumber('of pooled_t; null for two_part (chi-square with 2 degrees of freedom)'),
  effect_sizes: Type.Object({ cohens_h: NullableNumber(), hedges_g: NullableNumber() }),
  sufficient_statistics: nullable(
    Type.Object({
      n: Type.Integer(),
      conversions: Type.Integer(),
      value: Type.Object({ n: Type.Integer(), mean: Type.Number(), sum_squared_deviations: Type.Number() }),
    }),
    { description: 'so a later snapshot can compare with this one; null when withheld' },
  ),
  previous_rank: nullable(Type.Integer()),
  rank_movement: nullable(Type.Integer(), { description: 'positive: moved up (towards rank 1) since the previous snapshot' }),
  change: nullable(SegmentChange),
  notes: Type.Array(Type.String(), { description: 'why figures are missing, as the statistics core states it' }),
});
export type SnapshotSegment = Static<typeof SnapshotSegment>;

export const Descriptives = Type.Object({
  n: Type.Integer(),
  mean: NullableNumber(),
  median: NullableNumber(),
  modes: nullable(Type.Array(Type.Number())),
  standard_deviation: NullableNumber(),
  coefficient_of_variation: NullableNumber(),
  skewness: NullableNumber(),
  q1: NullableNumber(),
  q3: NullableNumber(),
  notes: strings(),
});
export type Descriptives = Static<typeof Descriptives>;

export const Correlation = Type.Object({
  n: Type.Integer(),
  r: NullableNumber(),
  ci_low: NullableNumber(),
  ci_high: NullableNumber(),
  p_value: NullableNumber(),
  note: nullable(Type.String()),
});
export type Correlation = Static<typeof Correlation>;

export const DimensionValueProfile = Type.Object({
  value: Type.String(),
  n: Type.Integer(),
  share: Type.Number(),
  cumulative_share: Type.Number(),
  value_descriptives: Descriptives,
  age_descriptives: Descriptives,
  age_value_correlation: Correlation,
});
export type DimensionValueProfile = Static<typeof DimensionValueProfile>;

export const DimensionProfile = Type.Object({
  dimension: Type.String(),
  values: Type.Array(DimensionValueProfile, { description: 'in Pareto order: most units first' }),
});
export type DimensionProfile = Static<typeof DimensionProfile>;

export const Reversal = Type.Object({
  dimension: Type.String(),
  within: Type.String(),
  higher_overall: Type.String(),
  lower_overall: Type.String(),
  higher_overall_metric: Type.Number(),
  lower_overall_metric: Type.Number(),
  levels_compared: Type.Integer(),
  sentence: Type.String(),
});
export type Reversal = Static<typeof Reversal>;

export const DataQuality = Type.Object({
  units: Type.Integer(),
  unknown_age: Type.Integer(),
  unknown_age_share: NullableNumber(),
  customers_outside_population: Type.Integer({
    description: 'campaign reports: stored customers never contacted in these campaigns (no outcome recorded); sales reports: 0',
  }),
  customers_without_any_sale: nullable(Type.Integer(), { description: 'sales reports: customers with no sale at all, counted as not buying; campaign reports: null' }),
  rejected_rows: Type.Array(Type.Object({ kind: Type.String(), ingests: Type.Integer(), rejected: Type.Integer() })),
  arithmetic: Type.Unsafe<'exact' | 'floating'>({ type: 'string', enum: ['exact', 'floating'] }),
});
export type DataQuality = Static<typeof DataQuality>;

/**
 * A histogram as the statistics core's `histogram` returns it: equal bins, each holding
 * values from `low` up to but not including `high`, the last also holding `high`.
 */
export const HistogramFigure = Type.Object({
  rule: Type.String({ description: "how the number of bins was chosen: 'sturges', 'freedman-diaconis' or 'fixed'" }),
  bin_width: Type.Number(),
  bins: Type.Array(
    Type.Object({ low: Type.Number(), high: Type.Number(), count: nullable(Type.Integer(), { description: 'null when withheld: fewer units than the publication threshold' }) }),
  ),
  note: nullable(Type.String(), { description: 'why the rule was not applied as asked (or all values are equal), or null' }),
});
export type HistogramFigure = Static<typeof HistogramFigure>;

/** One occupied cell of the age × value grid: ages in years, value in major currency units. */
export const AgeValueGridCell = Type.Object({
  age_low: Type.Number(),
  age_high: Type.Number(),
  value_low: Type.Number(),
  value_high: Type.Number(),
  count: Type.Integer(),
});
export type AgeValueGridCell = Static<typeof AgeValueGridCell>;

const DateWindow = Type.Object({ from: Type.String({ format: 'date' }), to: Type.String({ format: 'date' }) });

export const PopulationFigures = Type.Object({
  unit: Type.Unsafe<'contact' | 'customer'>({ type: 'string', enum: ['contact', 'customer'] }),
  campaign_ids: nullable(strings()),
  window: nullable(DateWindow),
  n: Type.Integer(),
  conversions: Type.Integer(),
  conversion_rate: NullableNumber(),
  conversion_rate_ci_low: NullableNumber(),
  conversion_rate_ci_high: NullableNumber(),
  value_basis: ReportDefinition.properties.value_basis,
  value_n: Type.Integer(),
  value_mean: NullableNumber(),
  value_ci_low: NullableNumber(),
  value_ci_high: NullableNumber(),
  value_descriptives: Descriptives,
  age_descriptives: Descriptives,
  age_value_correlation: Correlation,
  age_histogram: Type.Optional(
    nullable(HistogramFigure, { description: 'units with a known age; null when there are none; absent from snapshots stored before it existed' }),
  ),
  value_histogram: Type.Optional(
    nullable(HistogramFigure, {
      description: 'units of the value metric, major currency units; null when there are none or their values were not read; absent from snapshots stored before it existed',
    }),
  ),
  age_value_grid: Type.Optional(
    nullable(Type.Array(AgeValueGridCell), {
      description: 'occupied cells of the age × value grid (age in years, value in major currency units); null when there are none; absent from snapshots stored before it existed',
    }),
  ),
});
export type PopulationFigures = Static<typeof PopulationFigures>;

export const Comparison = Type.Object({
  compared_with: Type.Unsafe<'previous_window' | 'previous_snapshot' | null>({ type: ['string', 'null'], enum: ['previous_window', 'previous_snapshot', null] }),
  previous_window: nullable(DateWindow),
  previous_snapshot_id: nullable(Type.String()),
  note: Type.String(),
});
export type Comparison = Static<typeof Comparison>;

const RowCounts = Type.Object({
  population: Type.Integer(),
  cells: Type.Integer(),
  segments: Type.Integer(),
  tested: Type.Integer(),
  too_small: Type.Integer(),
  rate_tests: Type.Integer({ description: 'size of the multiplicity family of each metric: tested segments whose test could be computed' }),
  value_tests: Type.Integer(),
});
export type RowCounts = Static<typeof RowCounts>;

/** What the publication threshold withheld from a snapshot (Hundepool et al. 2012, small-cell suppression). */
export const Disclosure = Type.Object({
  threshold: Type.Integer({ description: 'no published figure describes fewer units than this' }),
  withheld_segments: Type.Integer(),
  withheld_dimension_values: Type.Integer({ description: 'dimension values left out of the dimension profiles' }),
  withheld_histogram_bars: Type.Integer(),
  withheld_grid_cells: Type.Integer({ description: 'cells of the age × value grid left out' }),
  withheld_reversals: Type.Integer(),
  redacted_at: nullable(Type.String({ format: 'date-time' }), {
    description: 'when an erasure last removed from this stored snapshot the labels of withheld segments the erased customer belonged to; null if never',
  }),
});
export type Disclosure = Static<typeof Disclosure>;

export const SnapshotTrigger = Type.Unsafe<'manual' | 'schedule' | 'command'>({ type: 'string', enum: ['manual', 'schedule', 'command'] });

/** The whole snapshot, as stored and as `GET …/snapshots/{id}` returns it. */
export const Snapshot = Type.Object({
  snapshot_id: Type.String(),
  report_id: Type.String(),
  report_name: Type.String(),
  sequence: Type.Integer(),
  created_at: Type.String({ format: 'date-time' }),
  trigger: SnapshotTrigger,
  duration_ms: Type.Integer(),
  fingerprint: Type.String({ description: 'SHA-256 of the definition and every aggregate the snapshot was computed from' }),
  definition: ReportDefinition,
  population: PopulationFigures,
  row_counts: RowCounts,
  summary: Type.String(),
  cautions: strings(),
  verdict_counts: Type.Object(Object.fromEntries(VERDICTS.map((verdict) => [verdict, Type.Integer()])) as Record<Verdict, ReturnType<typeof Type.Integer>>),
  segments: Type.Array(SnapshotSegment),
  dimensions: Type.Array(DimensionProfile),
  reversals: Type.Array(Reversal),
  comparison: Comparison,
  data_quality: DataQuality,
  disclosure: Type.Optional(Disclosure),
});
export type Snapshot = Static<typeof Snapshot>;

/** A segment whose figures are published: every count is there. */
export type PublishedSegment = SnapshotSegment & {
  n: number;
  share: number;
  conversions: number;
  value_n: number;
  rest: RestFigures;
  sufficient_statistics: NonNullable<SnapshotSegment['sufficient_statistics']>;
};

/** Whether the segment's figures are published (not withheld by the publication threshold). */
export function isPublished(segment: SnapshotSegment): segment is PublishedSegment {
  return segment.withheld_below === null && segment.n !== null && segment.rest !== null && segment.sufficient_statistics !== null;
}
