/**
 * The statistics of one segment against the rest of the population, from sufficient
 * statistics only. Every figure comes from the statistics core; this module decides which
 * method applies (z-test or Fisher's exact test) and what "the rest" is.
 */
import {
  cochranMantelHaenszelTest,
  cohensH,
  mantelHaenszelRiskDifference,
  meanEquivalenceTest,
  rateEquivalenceTest,
  fisherExactTest,
  hedgesG,
  katzRatioInterval,
  minimumDetectableRateDifference,
  newcombeDifferenceInterval,
  notComputable,
  computed,
  standardNormalQuantile,
  studentTTest,
  tInterval,
  twoPartTest,
  twoProportionZTest,
  welchTTest,
  wilsonInterval,
  type EquivalenceTestResult,
  type EstimateWithInterval,
  type RateStratum,
  type MeanInterval,
  type Outcome,
  type Interval,
  type Summary,
} from '../../stats/index.js';
import type { GroupStats } from '../../segments/index.js';
import type { ValueBasis } from '../definition/index.js';

/** Planning power of the minimum detectable difference: 80 %, the convention of Cohen (1988). */
const PLANNING_POWER = 0.8;

/**
 * Fisher's exact test replaces the z-test when an expected cell count of the 2×2 table is
 * below 5 (common practice: the rule of thumb for the normal approximation).
 */
const MIN_EXPECTED_CELL_COUNT = 5;

/**
 * The value is compared only when the segment and the rest each have at least this many
 * converted units: below it the segment's value is one or no purchase, which says nothing
 * about its customers (with none, every unit is worth 0 and a test would only restate the
 * conversion rate).
 */
const MIN_CONVERSIONS_FOR_VALUE_TEST = 2;

/**
 * The value comparison of a segment with the rest: the difference of means with Welch's
 * interval (unequal variances; its coverage under skewed revenue is measured in
 * bench/calibration/value-test.ts), and a test of no difference that keeps its size under
 * skewed revenue. When the logarithms of the positive values are known for both sides (from
 * the value counts), Lachenbruch's two-part test (`two_part`): share of positive values and
 * mean log of the positive values. Otherwise (groups too large to be read value by value,
 * where the sample mean is near normal) Student's pooled t (`pooled_t`), whose variance is the
 * one the null hypothesis implies (segment and rest drawn from one distribution): the
 * large-sample form of the Fisher–Pitman permutation test of the means. Welch's own test
 * divides by the segment's variance, which under skewed revenue is small exactly when the
 * segment's mean is small, so it called segments "worse" far too often.
 */
export interface ValueComparison {
  method: 'two_part' | 'pooled_t';
  difference: number;
  interval: Interval;
  /** Student's t (of the means for pooled_t, of the mean logs for two_part) */
  t: number;
  /** degrees of freedom of pooled_t; null for two_part (referred to chi-square with 2) */
  degreesOfFreedom: number | null;
  pValue: number;
}

/** One side of a value comparison: the metric's summary, the converted units, and the summary of the logs of its positive values when known. */
export interface ValueSide {
  summary: Summary;
  conversions: number;
  logPositive: Summary | null;
}

export interface RateTest {
  kind: 'z' | 'fisher' | 'cmh';
  pValue: number;
  /** the z statistic (z-test only) */
  z: number | null;
}

export interface SegmentStatistics {
  tested: boolean;
  /** why the segment was not tested, when it was not */
  untestedReason: 'segment_too_small' | 'rest_too_small' | null;
  rate: Outcome<EstimateWithInterval>;
  restRate: number | null;
  difference: Outcome<EstimateWithInterval>;
  lift: Outcome<EstimateWithInterval>;
  rateTest: Outcome<RateTest>;
  cohensH: number | null;
  segmentValue: Summary;
  restValue: Summary;
  valueMean: Outcome<MeanInterval>;
  valueComparison: Outcome<ValueComparison>;
  hedgesG: Outcome<number>;
  /** minimum detectable rate difference upwards and downwards at 80 % power, at the per-test level */
  rateMdd: { increase: Outcome<number>; decrease: Outcome<number> };
  /** minimum detectable difference of the value mean (either direction) at 80 % power, at the per-test level */
  valueMdd: Outcome<number>;
  /** two one-sided tests of the rate difference against ± the equivalence margin */
  rateEquivalence: Outcome<EquivalenceTestResult>;
  /** the same for the value; null when the report sets no value margin */
  valueEquivalence: Outcome<EquivalenceTestResult> | null;
  /** campaigns the rate comparison was made within, or null for one sample */
  strata: number | null;
}

/** What the comparison of one segment needs to know about the report. */
export interface AnalysisSettings {
  confidence: number;
  minN: number;
  valueBasis: ValueBasis;
  /**
   * The per-test level of the minimum detectable difference: α/m when the report adjusts
   * over m tests (bh or holm), α when it does not, so its 80 % power holds after adjustment.
   */
  detectionAlpha: number;
  equivalenceMargin: number;
  valueEquivalenceMargin: number | null;
}

const notTested = (what: string) => notComputable(`${what} is not computed: the segment was not tested.`);

/** The value summary the report's value basis uses. */
export function valueSummary(stats: GroupStats, basis: ValueBasis): Summary {
  return basis === 'per_unit' ? stats.unitValue : stats.convertedValue;
}

/**
 * Chooses and runs the test of two rates: the pooled two-proportion z-test, or Fisher's
 * exact test when any expected count of the 2×2 table (converted / not converted × segment /
 * rest) is below 5.
 * @throws StatsInputError for invalid counts (from the statistics core)
 * @example
 * rateTest(3, 10, 40, 400); // Fisher: the expected conversions in the segment are 10·43/410 ≈ 1.05
 */
export function rateTest(x1: number, n1: number, x2: number, n2: number): Outcome<RateTest> {
  const total = n1 + n2;
  const successes = x1 + x2;
  if (n1 === 0 || n2 === 0) return notComputable('The rate test is undefined: one of the two groups is empty.');
  const expected = [n1 * successes, n1 * (total - successes), n2 * successes, n2 * (total - successes)].map((product) => product / total);
  if (Math.min(...expected) < MIN_EXPECTED_CELL_COUNT) {
    const fisher = fisherExactTest(x1, n1, x2, n2);
    return fisher.ok ? computed({ kind: 'fisher', pValue: fisher.value.pValue, z: null }) : fisher;
  }
  const z = twoProportionZTest(x1, n1, x2, n2);
  return z.ok ? computed({ kind: 'z', pValue: z.value.pValue, z: z.value.z }) : z;
}

/**
 * The value comparison described at `ValueComparison`, or the reason it is not made: too few
 * converted units in the segment or the rest, or values that do not vary.
 * @throws StatsInputError for an invalid summary (from the statistics core)
 */
export function valueTest(segment: ValueSide, rest: ValueSide, confidence: number): Outcome<ValueComparison> {
  const fewest = Math.min(segment.conversions, rest.conversions);
  if (fewest < MIN_CONVERSIONS_FOR_VALUE_TEST) {
    const who = segment.conversions < MIN_CONVERSIONS_FOR_VALUE_TEST ? 'the segment' : 'the rest';
    const count = segment.conversions < MIN_CONVERSIONS_FOR_VALUE_TEST ? segment.conversions : rest.conversions;
    return notComputable(
      `The value comparison is not made: ${who} has ${count} converted ${count === 1 ? 'unit' : 'units'}, fewer than the ${MIN_CONVERSIONS_FOR_VALUE_TEST} it needs to say anything about value.`,
    );
  }
  const interval = welchTTest(segment.summary, rest.summary, confidence);
  if (!interval.ok) return interval;
  const { difference } = interval.value;
  if (segment.logPositive !== null && rest.logPositive !== null && segment.logPositive.n >= 2 && rest.logPositive.n >= 2) {
    const twoPart = twoPartTest({ n: segment.summary.n, logPositive: segment.logPositive }, { n: rest.summary.n, logPositive: rest.logPositive });
    if (twoPart.ok) {
      return computed({ method: 'two_part', difference, interval: interval.value.interval, t: twoPart.value.t, degreesOfFreedom: null, pValue: twoPart.value.pValue });
    }
  }
  const test = studentTTest(segment.summary, rest.summary, confidence);
  if (!test.ok) return test;
  return computed({ method: 'pooled_t', difference, interval: interval.value.interval, t: test.value.t, degreesOfFreedom: test.value.degreesOfFreedom, pValue: test.value.pValue });
}

/**
 * Minimum detectable difference of two means at the given power, by the normal
 * approximation d = (z(1 − α/2) + z(power))·√(s₁²/n₁ + s₂²/n₂) with the observed standard
 * deviations (unpooled, as Welch's test). Source: Cohen, J. (1988), Statistical Power
 * Analysis for the Behavioral Sciences, 2nd ed., ch. 2 (the normal approximation to the power
 * of the t-test, from memory). Undefined (with a reason) when a group has fewer than 2 values
 * or both have no spread.
 * @throws StatsInputError when alpha or power is outside (0, 1) (from the statistics core)
 * @example
 * minimumDetectableMeanDifference({ n: 100, mean: 10, sumSquaredDeviations: 99 * 4 }, { n: 100, mean: 9, sumSquaredDeviations: 99 * 4 }, 0.05, 0.8);
 * // { ok: true, value: 0.7923… } (2.8016 · √(4/100 + 4/100))
 */
function minimumDetectableMeanDifference(a: Summary, b: Summary, alpha: number, power: number): Outcome<number> {
  const criticalSum = standardNormalQuantile(1 - alpha / 2) + standardNormalQuantile(power);
  if (a.n < 2 || b.n < 2) return notComputable('The minimum detectable difference of the means is undefined: each group needs at least 2 values.');
  const varianceOfDifference = a.sumSquaredDeviations / (a.n - 1) / a.n + b.sumSquaredDeviations / (b.n - 1) / b.n;
  if (varianceOfDifference === 0) return notComputable('The minimum detectable difference of the means is undefined: neither group varies.');
  return computed(criticalSum * Math.sqrt(varianceOfDifference));
}

/**
 * Every statistic of one segment against the rest. Segments (or rests) smaller than `minN`
 * are not tested: their own rate and mean with intervals are given, comparisons are not.
 * The minimum detectable differences are computed for untested segments too, so a report can
 * say what such a group could have shown.
 * @throws StatsInputError when the counts are inconsistent (from the statistics core)
 * @example
 * analyzeSegment(segmentStats, restStats, { confidence: 0.95, minN: 30, valueBasis: 'per_unit' });
 */
export function analyzeSegment(
  segment: GroupStats,
  rest: GroupStats,
  settings: AnalysisSettings,
  campaignStrata: readonly RateStratum[] | null = null,
  logPositive: { segment: Summary | null; rest: Summary | null } = { segment: null, rest: null },
): SegmentStatistics {
  const { confidence, minN, valueBasis, detectionAlpha: alpha } = settings;
  const untestedReason = segment.n < minN ? 'segment_too_small' : rest.n < minN ? 'rest_too_small' : null;
  const tested = untestedReason === null;
  const segmentValue = valueSummary(segment, valueBasis);
  const restValue = valueSummary(rest, valueBasis);
  const restRate = rest.n > 0 ? rest.conversions / rest.n : null;

  const bothPresent = segment.n > 0 && rest.n > 0;
  const rateMdd = {
    increase: bothPresent
      ? minimumDetectableRateDifference({ n1: segment.n, n2: rest.n, baselineRate: restRate as number, alpha, power: PLANNING_POWER, direction: 'increase', nullVariance: 'pooled-null' })
      : notComputable('The minimum detectable difference is undefined: the segment or the rest is empty.'),
    decrease: bothPresent
      ? minimumDetectableRateDifference({ n1: segment.n, n2: rest.n, baselineRate: restRate as number, alpha, power: PLANNING_POWER, direction: 'decrease', nullVariance: 'pooled-null' })
      : notComputable('The minimum detectable difference is undefined: the segment or the rest is empty.'),
  };

  const rate = wilsonInterval(segment.conversions, segment.n, confidence);
  const valueMean = tInterval(segmentValue, confidence);
  const valueMdd = minimumDetectableMeanDifference(segmentValue, restValue, alpha, PLANNING_POWER);
  if (!tested) {
    return {
      tested,
      untestedReason,
      rate,
      restRate,
      difference: notTested('The difference of rates'),
      lift: notTested('The lift'),
      rateTest: notTested('The rate test'),
      cohensH: null,
      segmentValue,
      restValue,
      valueMean,
      valueComparison: notTested('The value comparison'),
      hedgesG: notTested("Hedges' g"),
      rateMdd,
      valueMdd,
      rateEquivalence: notTested('The equivalence test'),
      valueEquivalence: settings.valueEquivalenceMargin === null ? null : notTested('The equivalence test'),
      strata: null,
    };
  }
  const stratified = campaignStrata !== null && campaignStrata.length > 1;
  const segmentRate = segment.conversions / segment.n;
  return {
    tested,
    untestedReason,
    rate,
    restRate,
    difference: stratified
      ? mantelHaenszelRiskDifference(campaignStrata, confidence)
      : newcombeDifferenceInterval(segment.conversions, segment.n, rest.conversions, rest.n, confidence),
    lift: stratified
      ? notComputable('The lift is not given for a report over several campaigns: a ratio of pooled rates would mix the campaigns; the difference is compared within campaign.')
      : katzRatioInterval(segment.conversions, segment.n, rest.conversions, rest.n, confidence),
    rateTest: stratified ? stratifiedRateTest(campaignStrata) : rateTest(segment.conversions, segment.n, rest.conversions, rest.n),
    cohensH: cohensH(segmentRate, restRate as number),
    segmentValue,
    restValue,
    valueMean,
    valueComparison: valueTest(
      { summary: segmentValue, conversions: segment.conversions, logPositive: logPositive.segment },
      { summary: restValue, conversions: rest.conversions, logPositive: logPositive.rest },
      confidence,
    ),
    hedgesG: hedgesG(segmentValue, restValue),
    rateMdd,
    valueMdd,
    rateEquivalence: rateEquivalenceTest(segment.conversions, segment.n, rest.conversions, rest.n, settings.equivalenceMargin),
    valueEquivalence: settings.valueEquivalenceMargin === null ? null : meanEquivalenceTest(segmentValue, restValue, settings.valueEquivalenceMargin),
    strata: stratified ? campaignStrata.length : null,
  };
}

/** The Cochran–Mantel–Haenszel test within campaigns, as a rate test. */
function stratifiedRateTest(strata: readonly RateStratum[]): Outcome<RateTest> {
  const test = cochranMantelHaenszelTest(strata);
  return test.ok ? computed({ kind: 'cmh', pValue: test.value.pValue, z: test.value.z }) : test;
}

/**
 * Why figures of a segment could not be computed, in plain words, each reason once, in the
 * order of the figures. The comparisons an untested segment skips are left out:
 * `untestedReason` already says why they are missing.
 */
export function statisticNotes(statistics: SegmentStatistics): string[] {
  const compared = statistics.tested;
  const outcomes: Array<Outcome<unknown>> = [
    statistics.rate,
    ...(compared ? [statistics.difference, statistics.lift, statistics.rateTest] : []),
    statistics.valueMean,
    ...(compared ? [statistics.valueComparison, statistics.hedgesG, statistics.rateEquivalence] : []),
    ...(compared && statistics.valueEquivalence !== null ? [statistics.valueEquivalence] : []),
    statistics.rateMdd.increase,
    statistics.rateMdd.decrease,
    statistics.valueMdd,
  ];
  const notes: string[] = [];
  for (const outcome of outcomes) {
    if (!outcome.ok && !notes.includes(outcome.reason)) notes.push(outcome.reason);
  }
  return notes;
}
