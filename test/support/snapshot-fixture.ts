/**
 * A small snapshot written out by hand for the view tests: an invented campaign with four
 * tested segments (one of each tested verdict), one segment too small to test, and segment
 * names that try to break out of HTML. Its figures are made up; the view only draws them.
 */
import { withoutHoldout } from '../../src/report/analysis/index.js';
import type { ReportDefinition } from '../../src/report/definition/index.js';
import type { Descriptives, Snapshot, SnapshotSegment, Verdict } from '../../src/report/shapes/index.js';

export const HOSTILE_SCRIPT = '<script>alert("segment")</script>';
export const HOSTILE_IMAGE = '"><img src=x onerror=alert(1)>';

const definition: ReportDefinition = {
  name: 'Winter <b>bulbs</b>',
  source: { campaign_ids: ['winter-bulbs'] },
  dimensions: ['region', 'channel'],
  crosses: [],
  age_bands: [18, 25, 35, 45, 55, 65],
  min_n: 30,
  confidence: 0.95,
  equivalence_margin: 0.02,
  value_equivalence_margin: null,
  adjustment: 'bh',
  value_basis: 'per_unit',
  rank_by: 'conversion_rate',
  rank_order: 'lower_bound',
  refresh: 'manual',
  economics: null,
};

function descriptives(n: number, mean: number | null): Descriptives {
  return { n, mean, median: mean, modes: null, standard_deviation: mean === null ? null : 1, coefficient_of_variation: null, skewness: 0.5, q1: mean, q3: mean, notes: [] };
}

export interface SegmentFigures {
  rank: number | null;
  dimension: string;
  value: string;
  n: number;
  conversions: number;
  /** rate difference and its interval (fractions), or null when not tested */
  difference: [number, number, number] | null;
  verdict: Verdict;
}

function segment(figures: SegmentFigures): SnapshotSegment {
  const rate = figures.conversions / figures.n;
  const tested = figures.verdict !== 'too_small';
  const [difference, low, high] = figures.difference ?? [null, null, null];
  return {
    rank: figures.rank,
    segment: `${figures.dimension}=${figures.value}`,
    dimensions: figures.dimension,
    n: figures.n,
    share: figures.n / 1000,
    conversions: figures.conversions,
    conversion_rate: rate,
    conversion_rate_ci_low: rate * 0.8,
    conversion_rate_ci_high: rate * 1.2,
    rate_expected: rate * 0.95,
    rate_expected_ci_low: rate * 0.85,
    rate_expected_ci_high: rate * 1.1,
    rate_diff: difference,
    rate_diff_ci_low: low,
    rate_diff_ci_high: high,
    lift: tested ? 1.1 : null,
    lift_ci_low: tested ? 0.9 : null,
    lift_ci_high: tested ? 1.3 : null,
    rate_test: tested ? 'z' : null,
    rate_p_value: tested ? 0.02 : null,
    rate_p_adjusted: tested ? 0.04 : null,
    value_mean: 5,
    value_ci_low: 4,
    value_ci_high: 6,
    value_expected: 5,
    value_expected_ci_low: 4.2,
    value_expected_ci_high: 5.8,
    value_diff: tested ? 0.5 : null,
    value_diff_ci_low: tested ? -0.5 : null,
    value_diff_ci_high: tested ? 1.5 : null,
    value_p_value: tested ? 0.3 : null,
    value_p_adjusted: tested ? 0.5 : null,
    min_detectable_diff: 0.05,
    verdict: figures.verdict,
    explained_by: null,
    summary: `Sentence about ${figures.dimension} ${figures.value}.`,
    withheld_below: null,
    ...withoutHoldout(),
    values: { [figures.dimension]: figures.value },
    tested,
    mirror_of: null,
    equivalence: {
      conversion_rate: tested ? { margin: 0.02, margin_source: 'default', p_value: figures.verdict === 'equivalent' ? 0.004 : 0.4, p_adjusted: figures.verdict === 'equivalent' ? 0.012 : 0.6 } : null,
      value: null,
    },
    strata: null,
    rest: { n: 1000 - figures.n, conversions: 100, conversion_rate: 0.1, value_n: 1000 - figures.n, value_mean: 5 },
    value_n: figures.n,
    rate_z: tested ? 2.1 : null,
    value_test: tested ? 'two_part' : null,
    value_t: tested ? 1 : null,
    value_degrees_of_freedom: tested ? 300 : null,
    effect_sizes: { cohens_h: tested ? 0.1 : null, hedges_g: tested ? 0.05 : null },
    sufficient_statistics: { n: figures.n, conversions: figures.conversions, value: { n: figures.n, mean: 5, sum_squared_deviations: 100 } },
    previous_rank: null,
    rank_movement: null,
    change: null,
    notes: [],
  };
}

/** The tested segments in rank order, with their rate differences (segment − rest) and intervals. */
export const TESTED: readonly SegmentFigures[] = [
  { rank: 1, dimension: 'channel', value: 'catalogue', n: 250, conversions: 60, difference: [0.12, 0.07, 0.17], verdict: 'better' },
  { rank: 2, dimension: 'region', value: HOSTILE_SCRIPT, n: 120, conversions: 18, difference: [0.03, -0.02, 0.09], verdict: 'inconclusive' },
  { rank: 3, dimension: 'region', value: 'Northmoor', n: 400, conversions: 44, difference: [0.005, -0.02, 0.03], verdict: 'equivalent' },
  { rank: 4, dimension: 'region', value: HOSTILE_IMAGE, n: 200, conversions: 8, difference: [-0.07, -0.1, -0.035], verdict: 'worse' },
];

const TOO_SMALL: SegmentFigures = { rank: null, dimension: 'channel', value: 'kiosk', n: 12, conversions: 1, difference: null, verdict: 'too_small' };

/**
 * The known snapshot; `overrides` replace top-level fields (a later sequence, another id).
 * @example
 * knownSnapshot({ sequence: 2, snapshot_id: 'snap-2' });
 */
export function knownSnapshot(overrides: Partial<Snapshot> = {}): Snapshot {
  const segments = [...TESTED, TOO_SMALL].map(segment);
  return {
    snapshot_id: 'snap-1',
    report_id: 'report-1',
    report_name: definition.name,
    sequence: 1,
    created_at: '2026-03-02T06:00:00.000Z',
    trigger: 'manual',
    duration_ms: 12,
    fingerprint: 'f'.repeat(64),
    definition,
    population: {
      unit: 'contact',
      campaign_ids: ['winter-bulbs'],
      window: null,
      n: 1000,
      conversions: 131,
      conversion_rate: 0.131,
      conversion_rate_ci_low: 0.11,
      conversion_rate_ci_high: 0.153,
      value_basis: 'per_unit',
      value_n: 1000,
      value_mean: 5.2,
      value_ci_low: 4.6,
      value_ci_high: 5.8,
      value_descriptives: descriptives(1000, 5.2),
      age_descriptives: descriptives(950, 44.5),
      age_value_correlation: { n: 950, r: 0.12, ci_low: 0.06, ci_high: 0.18, p_value: 0.0002, note: null },
    },
    row_counts: { population: 1000, cells: 10, segments: 5, tested: 4, too_small: 1, rate_tests: 4, value_tests: 4 },
    summary: 'The population holds 1,000 contacted customers <with a summary that mentions a tag>.',
    cautions: ['Targeting by age may be restricted; check local law.', 'Birth dates are personal data.'],
    verdict_counts: { better: 1, worse: 1, equivalent: 1, inconclusive: 1, too_small: 1 },
    segments,
    dimensions: [
      {
        dimension: 'region',
        values: [
          { value: 'Northmoor', n: 400, share: 0.4, cumulative_share: 0.4, value_descriptives: descriptives(400, 5), age_descriptives: descriptives(380, 44), age_value_correlation: { n: 380, r: 0.1, ci_low: 0, ci_high: 0.2, p_value: 0.05, note: null } },
          { value: HOSTILE_IMAGE, n: 200, share: 0.2, cumulative_share: 0.6, value_descriptives: descriptives(200, 5), age_descriptives: descriptives(190, 44), age_value_correlation: { n: 190, r: 0.1, ci_low: 0, ci_high: 0.2, p_value: 0.05, note: null } },
          { value: 'Eastfen', n: 280, share: 0.28, cumulative_share: 0.88, value_descriptives: descriptives(280, 5), age_descriptives: descriptives(270, 44), age_value_correlation: { n: 270, r: 0.1, ci_low: 0, ci_high: 0.2, p_value: 0.05, note: null } },
          { value: HOSTILE_SCRIPT, n: 120, share: 0.12, cumulative_share: 1, value_descriptives: descriptives(120, 5), age_descriptives: descriptives(110, 44), age_value_correlation: { n: 110, r: 0.1, ci_low: 0, ci_high: 0.2, p_value: 0.05, note: null } },
        ],
      },
      {
        dimension: 'channel',
        values: [
          { value: 'web', n: 738, share: 0.738, cumulative_share: 0.738, value_descriptives: descriptives(738, 5), age_descriptives: descriptives(700, 44), age_value_correlation: { n: 700, r: 0.1, ci_low: 0, ci_high: 0.2, p_value: 0.05, note: null } },
          { value: 'catalogue', n: 250, share: 0.25, cumulative_share: 0.988, value_descriptives: descriptives(250, 5), age_descriptives: descriptives(240, 44), age_value_correlation: { n: 240, r: 0.1, ci_low: 0, ci_high: 0.2, p_value: 0.05, note: null } },
          { value: 'kiosk', n: 12, share: 0.012, cumulative_share: 1, value_descriptives: descriptives(12, 5), age_descriptives: descriptives(10, 44), age_value_correlation: { n: 10, r: 0.1, ci_low: 0, ci_high: 0.2, p_value: 0.05, note: null } },
        ],
      },
    ],
    reversals: [],
    comparison: { compared_with: null, previous_window: null, previous_snapshot_id: null, note: 'This is the first snapshot of the report: there is nothing earlier to compare with.' },
    data_quality: {
      units: 1000,
      unknown_age: 50,
      unknown_age_share: 0.05,
      customers_outside_population: 0,
      customers_without_any_sale: null,
      rejected_rows: [],
      arithmetic: 'exact',
    },
    ...overrides,
  };
}
