/**
 * Power and sample size for the two tests the reports run, following the conventions of R's
 * `power.prop.test` and `power.t.test` (two-sided, `strict = FALSE`: the rejection region in
 * the opposite tail is ignored), and the minimum detectable difference of rates for two
 * groups of unequal size.
 */
import { StatsInputError } from './errors.js';
import {
  noncentralTProbability,
  standardNormalCdf,
  standardNormalQuantile,
  studentTQuantile,
} from './distributions.js';
import { computed, notComputable } from './result.js';
import type { Outcome } from './result.js';
import { requireClosedUnitInterval, requireFiniteNumber, requireOpenUnitInterval } from './validate.js';

function requirePositiveSize(name: string, value: number, minimum: number): void {
  if (typeof value !== 'number' || !Number.isFinite(value) || value <= minimum) {
    throw new StatsInputError(name, `${name} must be a finite number greater than ${minimum}, got ${String(value)}`);
  }
}

function requirePositiveInteger(name: string, value: number): void {
  if (typeof value !== 'number' || !Number.isSafeInteger(value) || value < 1) {
    throw new StatsInputError(name, `${name} must be a positive integer, got ${String(value)}`);
  }
}

/** Inputs of `twoProportionPower`. */
export interface TwoProportionPowerInput {
  readonly p1: number;
  readonly p2: number;
  /** units in each group; need not be an integer (as in R) */
  readonly nPerGroup: number;
  /** two-sided significance level, default 0.05 */
  readonly alpha?: number;
}

/** Inputs of `twoProportionSampleSize`. */
export interface TwoProportionSampleSizeInput {
  readonly p1: number;
  readonly p2: number;
  readonly power: number;
  /** two-sided significance level, default 0.05 */
  readonly alpha?: number;
}

function proportionPowerTerms(p1: number, p2: number, alpha: number) {
  const criticalZ = standardNormalQuantile(1 - alpha / 2);
  const nullStandardDeviation = Math.sqrt((p1 + p2) * (1 - (p1 + p2) / 2));
  const alternativeStandardDeviation = Math.sqrt(p1 * (1 - p1) + p2 * (1 - p2));
  return { criticalZ, nullStandardDeviation, alternativeStandardDeviation, difference: Math.abs(p1 - p2) };
}

/**
 * Power of the two-sided pooled two-proportion z-test with n units per group, as R's
 * `power.prop.test` (strict = FALSE):
 * power = Φ((√n·|p₁ − p₂| − z(1 − α/2)·√((p₁ + p₂)(1 − (p₁ + p₂)/2))) / √(p₁q₁ + p₂q₂)).
 * Source: R `stats::power.prop.test`; Fleiss, Levin & Paik (2003), Statistical Methods for
 * Rates and Proportions, 3rd ed., §4.2 (from memory); conventions as Cohen (1988), ch. 6.
 * Undefined (with a reason) when p₁q₁ + p₂q₂ = 0 (both rates 0 or 1).
 * @throws StatsInputError when a rate is outside [0, 1], `nPerGroup` ≤ 0, or `alpha` outside (0, 1)
 * @example
 * twoProportionPower({ p1: 0.5, p2: 0.75, nPerGroup: 50 }); // { ok: true, value: 0.7401659… }
 */
export function twoProportionPower(input: TwoProportionPowerInput): Outcome<number> {
  const { p1, p2, nPerGroup, alpha = 0.05 } = input;
  requireClosedUnitInterval('p1', p1);
  requireClosedUnitInterval('p2', p2);
  requirePositiveSize('nPerGroup', nPerGroup, 0);
  requireOpenUnitInterval('alpha', alpha);
  const terms = proportionPowerTerms(p1, p2, alpha);
  if (terms.alternativeStandardDeviation === 0) {
    return notComputable('The power is undefined: both rates are 0 or 1, so the test statistic has no variance.');
  }
  return computed(
    standardNormalCdf(
      (Math.sqrt(nPerGroup) * terms.difference - terms.criticalZ * terms.nullStandardDeviation) /
        terms.alternativeStandardDeviation,
    ),
  );
}

/**
 * Units per group for the two-sided pooled two-proportion z-test to reach a given power, as
 * R's `power.prop.test` (strict = FALSE), solved in closed form (R finds the same root with
 * `uniroot`):
 * n = ((z(1 − α/2)·√((p₁ + p₂)(1 − (p₁ + p₂)/2)) + z(power)·√(p₁q₁ + p₂q₂)) / |p₁ − p₂|)².
 * Not rounded: round up for planning. Source: R `stats::power.prop.test`; Fleiss, Levin &
 * Paik (2003), §4.2 (from memory). Undefined (with a reason) when p₁ = p₂ or the target power
 * is below what the smallest sample already gives.
 * @throws StatsInputError when a rate is outside [0, 1] or `alpha`/`power` outside (0, 1)
 * @example
 * twoProportionSampleSize({ p1: 0.5, p2: 0.75, power: 0.9 }); // { ok: true, value: 76.70692… }
 */
export function twoProportionSampleSize(input: TwoProportionSampleSizeInput): Outcome<number> {
  const { p1, p2, power, alpha = 0.05 } = input;
  requireClosedUnitInterval('p1', p1);
  requireClosedUnitInterval('p2', p2);
  requireOpenUnitInterval('power', power);
  requireOpenUnitInterval('alpha', alpha);
  if (p1 === p2) return notComputable('The sample size is undefined: the two rates are equal, so there is no difference to detect.');
  const terms = proportionPowerTerms(p1, p2, alpha);
  const numerator =
    terms.criticalZ * terms.nullStandardDeviation + standardNormalQuantile(power) * terms.alternativeStandardDeviation;
  if (numerator <= 0) {
    return notComputable('The sample size is undefined: the target power is lower than any sample size gives.');
  }
  return computed((numerator / terms.difference) ** 2);
}

/** Inputs of `twoSampleTPower`. */
export interface TwoSampleTPowerInput {
  /** true difference of means */
  readonly delta: number;
  /** common standard deviation, default 1 */
  readonly sd?: number;
  /** units in each group, > 1; need not be an integer (as in R) */
  readonly nPerGroup: number;
  /** two-sided significance level, default 0.05 */
  readonly alpha?: number;
}

/** Inputs of `twoSampleTSampleSize`. */
export interface TwoSampleTSampleSizeInput {
  readonly delta: number;
  readonly sd?: number;
  readonly power: number;
  readonly alpha?: number;
}

function tPowerAt(nPerGroup: number, effect: number, alpha: number): number {
  const degreesOfFreedom = 2 * (nPerGroup - 1);
  const critical = studentTQuantile(1 - alpha / 2, degreesOfFreedom);
  return noncentralTProbability(critical, degreesOfFreedom, Math.sqrt(nPerGroup / 2) * effect, 'upper');
}

/**
 * Power of the two-sided two-sample t-test (equal variances, n per group), as R's
 * `power.t.test(type = "two.sample", strict = FALSE)`: with ν = 2(n − 1) and
 * q = t(1 − α/2; ν), power = P(T′ > q) where T′ is noncentral t with ν degrees of freedom
 * and noncentrality √(n/2)·|δ|/σ. The noncentral t is integrated numerically
 * (`noncentralTProbability`). Source: R `stats::power.t.test`; Cohen (1988), ch. 2.
 * @throws StatsInputError when `delta` is not finite, `sd` ≤ 0, `nPerGroup` ≤ 1, or `alpha` outside (0, 1)
 * @example
 * twoSampleTPower({ delta: 1, sd: 1, nPerGroup: 20 }); // { ok: true, value: 0.8689528… }
 */
export function twoSampleTPower(input: TwoSampleTPowerInput): Outcome<number> {
  const { delta, sd = 1, nPerGroup, alpha = 0.05 } = input;
  requireFiniteNumber('delta', delta);
  requirePositiveSize('sd', sd, 0);
  requirePositiveSize('nPerGroup', nPerGroup, 1);
  requireOpenUnitInterval('alpha', alpha);
  return computed(tPowerAt(nPerGroup, Math.abs(delta) / sd, alpha));
}

const T_SAMPLE_SIZE_MINIMUM = 2;
const T_SAMPLE_SIZE_MAXIMUM = 1e7;
const T_SAMPLE_SIZE_RELATIVE_TOLERANCE = 1e-10;

/**
 * Units per group for the two-sided two-sample t-test to reach a given power, as R's
 * `power.t.test(type = "two.sample", strict = FALSE)`: the n in [2, 10⁷] at which the power
 * of `twoSampleTPower` equals the target, found by bisection (power rises with n) to a
 * relative tolerance of 1e-10. R's default `uniroot` tolerance (about 1.2e-4) leaves its
 * printed n slightly off (22.0210977 against 22.0210956 for δ = 1, power 0.9; with
 * `tol = 1e-12` R gives 22.021095570094, as here). Not rounded: round up for planning. If even 2 per group reach the
 * power, 2 is returned, the smallest design the test allows. Source: R `stats::power.t.test`;
 * Cohen (1988), ch. 2. Undefined (with a reason) when δ = 0 or more than 10⁷ per group would
 * be needed.
 * @throws StatsInputError when `delta` is not finite, `sd` ≤ 0, or `alpha`/`power` outside (0, 1)
 * @example
 * twoSampleTSampleSize({ delta: 1, sd: 1, power: 0.9 }); // { ok: true, value: 22.0211… }
 */
export function twoSampleTSampleSize(input: TwoSampleTSampleSizeInput): Outcome<number> {
  const { delta, sd = 1, power, alpha = 0.05 } = input;
  requireFiniteNumber('delta', delta);
  requirePositiveSize('sd', sd, 0);
  requireOpenUnitInterval('power', power);
  requireOpenUnitInterval('alpha', alpha);
  const effect = Math.abs(delta) / sd;
  if (effect === 0) return notComputable('The sample size is undefined: the difference to detect is 0.');
  if (tPowerAt(T_SAMPLE_SIZE_MINIMUM, effect, alpha) >= power) return computed(T_SAMPLE_SIZE_MINIMUM);
  if (tPowerAt(T_SAMPLE_SIZE_MAXIMUM, effect, alpha) < power) {
    return notComputable('The sample size is undefined: more than 10 million units per group would be needed.');
  }
  // Start from the normal approximation 2((z(1−α/2) + z(power))/effect)², which the t answer
  // slightly exceeds, to narrow the bracket before bisecting.
  const normalApproximation =
    2 * ((standardNormalQuantile(1 - alpha / 2) + standardNormalQuantile(power)) / effect) ** 2;
  let low = T_SAMPLE_SIZE_MINIMUM;
  let high = T_SAMPLE_SIZE_MAXIMUM;
  const guessLow = Math.max(T_SAMPLE_SIZE_MINIMUM, normalApproximation);
  const guessHigh = Math.min(T_SAMPLE_SIZE_MAXIMUM, 1.5 * normalApproximation + 10);
  if (tPowerAt(guessLow, effect, alpha) < power) low = guessLow;
  if (tPowerAt(guessHigh, effect, alpha) >= power) high = guessHigh;
  while (high - low > T_SAMPLE_SIZE_RELATIVE_TOLERANCE * high) {
    const middle = (low + high) / 2;
    if (tPowerAt(middle, effect, alpha) < power) low = middle;
    else high = middle;
  }
  return computed((low + high) / 2);
}

/** Inputs of `minimumDetectableRateDifference`. */
export interface MinimumDetectableRateDifferenceInput {
  /** units in group 1 (the segment), whose rate would be baselineRate ± d */
  readonly n1: number;
  /** units in group 2 (the rest), at the baseline rate */
  readonly n2: number;
  readonly baselineRate: number;
  /** two-sided significance level, default 0.05 */
  readonly alpha?: number;
  /** target power, default 0.8 */
  readonly power?: number;
  /** look for a rise (default) or a fall of group 1's rate */
  readonly direction?: 'increase' | 'decrease';
  /**
   * the standard error the test statistic is divided by: `unpooled` (default, as above) or
   * `pooled-null`, the pooled two-proportion z-test's, under the null (see below)
   */
  readonly nullVariance?: 'unpooled' | 'pooled-null';
}

/**
 * Power of the pooled two-proportion z-test (two-sided, opposite tail ignored) when group 1's
 * rate is p₁ and group 2's p₀: Φ((|p₁ − p₀| − z(1 − α/2)·SE₀)/SE₁), with the null standard
 * error SE₀ = √(p̄(1 − p̄)(1/n₁ + 1/n₂)), p̄ = (n₁p₁ + n₂p₀)/(n₁ + n₂), and the alternative's
 * SE₁ = √(p₁(1 − p₁)/n₁ + p₀(1 − p₀)/n₂). Source: Fleiss, Levin & Paik (2003), Statistical
 * Methods for Rates and Proportions, 3rd ed., §4.2 (from memory); as statsmodels'
 * `power_proportions_2indep` (checked in the tests).
 */
function pooledTestPower(p1: number, p0: number, n1: number, n2: number, criticalZ: number): number {
  const pooled = (n1 * p1 + n2 * p0) / (n1 + n2);
  const nullError = Math.sqrt(pooled * (1 - pooled) * (1 / n1 + 1 / n2));
  const alternativeError = Math.sqrt((p1 * (1 - p1)) / n1 + (p0 * (1 - p0)) / n2);
  if (alternativeError === 0) return Math.abs(p1 - p0) > criticalZ * nullError ? 1 : 0;
  return standardNormalCdf((Math.abs(p1 - p0) - criticalZ * nullError) / alternativeError);
}

/** Bisection steps for the pooled-null minimum detectable difference: 2⁻⁶⁰ of the range, below binary64 resolution. */
const POOLED_BISECTION_STEPS = 60;

/**
 * Minimum detectable difference of rates for two groups of unequal size: the smallest d > 0
 * such that a two-sided test at level α has the target power when group 1's rate is
 * p₁ = p₀ ± d and group 2's is p₀ (the baseline). Normal approximation with unpooled
 * variances and the opposite tail ignored (as R's strict = FALSE):
 * power(d) = Φ(d/SE(d) − z(1 − α/2)), SE(d) = √(p₁(1 − p₁)/n₁ + p₀(1 − p₀)/n₂).
 * Setting d = c·SE(d) with c = z(1 − α/2) + z(power) and squaring gives a quadratic in d,
 * (1 + c²/n₁)·d² ∓ (c²(1 − 2p₀)/n₁)·d − c²·p₀(1 − p₀)(1/n₁ + 1/n₂) = 0 (− for an increase,
 * + for a decrease). The quadratic is convex and not positive at d = 0, so the power is
 * reached exactly from its positive root on: that root is the answer. Source: the
 * normal-approximation power of the two-sample test of proportions, e.g. Fleiss, Levin & Paik
 * (2003), §4.2, and Cohen (1988), ch. 6 (from memory); the closed-form root is elementary
 * algebra. Undefined (with a reason) when the difference would take the rate beyond 0 or 1.
 * @throws StatsInputError when n₁ or n₂ is not a positive integer, the baseline rate is
 * outside [0, 1], alpha or power is outside (0, 1), or power ≤ alpha/2 (no difference needed)
 * @example
 * minimumDetectableRateDifference({ n1: 400, n2: 3600, baselineRate: 0.1, alpha: 0.05, power: 0.8 });
 * // { ok: true, value: 0.052236… }
 */
export function minimumDetectableRateDifference(input: MinimumDetectableRateDifferenceInput): Outcome<number> {
  const { n1, n2, baselineRate, alpha = 0.05, power = 0.8, direction = 'increase' } = input;
  requirePositiveInteger('n1', n1);
  requirePositiveInteger('n2', n2);
  requireClosedUnitInterval('baselineRate', baselineRate);
  requireOpenUnitInterval('alpha', alpha);
  requireOpenUnitInterval('power', power);
  if (direction !== 'increase' && direction !== 'decrease') {
    throw new StatsInputError('direction', `direction must be 'increase' or 'decrease', got ${JSON.stringify(direction)}`);
  }
  const combinedZ = standardNormalQuantile(1 - alpha / 2) + standardNormalQuantile(power);
  if (combinedZ <= 0) {
    throw new StatsInputError('power', `power must be greater than alpha/2 (${alpha / 2}), got ${power}`);
  }
  // A fall from p₀ is a rise from 1 − p₀ on the complementary outcome.
  const baseline = direction === 'increase' ? baselineRate : 1 - baselineRate;
  if (input.nullVariance === 'pooled-null') {
    const criticalZ = standardNormalQuantile(1 - alpha / 2);
    if (pooledTestPower(1, baseline, n1, n2, criticalZ) < power) {
      return notComputable(
        `No ${direction} of the rate is detectable with this power: even a rate of ${direction === 'increase' ? 1 : 0} in group 1 would not reach it with ${n1} and ${n2} units.`,
      );
    }
    // The power rises with the difference over (0, 1 − p₀]; bisection finds where it reaches the target.
    let low = 0;
    let high = 1 - baseline;
    for (let step = 0; step < POOLED_BISECTION_STEPS; step += 1) {
      const middle = (low + high) / 2;
      if (pooledTestPower(baseline + middle, baseline, n1, n2, criticalZ) < power) low = middle;
      else high = middle;
    }
    return computed(high);
  }
  const combinedZSquared = combinedZ * combinedZ;
  const quadratic = 1 + combinedZSquared / n1;
  const linear = -(combinedZSquared * (1 - 2 * baseline)) / n1;
  const constant = -combinedZSquared * baseline * (1 - baseline) * (1 / n1 + 1 / n2);
  const difference = (-linear + Math.sqrt(linear * linear - 4 * quadratic * constant)) / (2 * quadratic);
  if (difference > 1 - baseline) {
    return notComputable(
      `No ${direction} of the rate is detectable with this power: even a rate of ${direction === 'increase' ? 1 : 0} in group 1 would not reach it with ${n1} and ${n2} units.`,
    );
  }
  return computed(difference);
}

/** Inputs of `unequalTwoProportionSampleSize`. */
export interface UnequalTwoProportionSampleSizeInput {
  /** rate of group 1 (for a campaign: the holdout) */
  readonly p1: number;
  /** rate of group 2 (the contacted customers) */
  readonly p2: number;
  /** r = n₂ / n₁, the size of group 2 per unit of group 1 */
  readonly ratio: number;
  readonly power: number;
  /** two-sided significance level, default 0.05 */
  readonly alpha?: number;
}

/**
 * Units in each of two groups of unequal size for the two-sided pooled two-proportion z-test
 * to reach a given power, normal approximation without continuity correction, the opposite
 * tail ignored (as R's strict = FALSE). With r = n₂/n₁, p̄ = (p₁ + r·p₂)/(1 + r), q = 1 − p:
 * n₁ = (z(1 − α/2)·√((r + 1)·p̄q̄) + z(power)·√(r·p₁q₁ + p₂q₂))² / (r·(p₂ − p₁)²), n₂ = r·n₁.
 * Source: Fleiss, Levin & Paik (2003), Statistical Methods for Rates and Proportions, 3rd
 * ed., §4.4 "unequal sample sizes" (the formula before their continuity correction; section
 * number from memory). With r = 1 it is R's `power.prop.test`; at the answer the power of the
 * pooled test (`pooledTestPower`) is exactly the target. Not rounded: round each group up.
 * Undefined (with a reason) when p₁ = p₂ or the target power is below what any size gives.
 * @throws StatsInputError when a rate is outside [0, 1], `ratio` ≤ 0, or `alpha`/`power` outside (0, 1)
 * @example
 * unequalTwoProportionSampleSize({ p1: 0.1, p2: 0.15, ratio: 4, power: 0.8 }); // { ok: true, value: { n1: 444.50967…, n2: 1778.0387… } }
 */
export function unequalTwoProportionSampleSize(input: UnequalTwoProportionSampleSizeInput): Outcome<{ n1: number; n2: number }> {
  const { p1, p2, ratio, power, alpha = 0.05 } = input;
  requireClosedUnitInterval('p1', p1);
  requireClosedUnitInterval('p2', p2);
  requirePositiveSize('ratio', ratio, 0);
  requireOpenUnitInterval('power', power);
  requireOpenUnitInterval('alpha', alpha);
  if (p1 === p2) return notComputable('The sample size is undefined: the two rates are equal, so there is no difference to detect.');
  const pooled = (p1 + ratio * p2) / (1 + ratio);
  const numerator =
    standardNormalQuantile(1 - alpha / 2) * Math.sqrt((ratio + 1) * pooled * (1 - pooled)) +
    standardNormalQuantile(power) * Math.sqrt(ratio * p1 * (1 - p1) + p2 * (1 - p2));
  if (numerator <= 0) {
    return notComputable('The sample size is undefined: the target power is lower than any sample size gives.');
  }
  const n1 = numerator ** 2 / (ratio * (p2 - p1) ** 2);
  return computed({ n1, n2: ratio * n1 });
}

/**
 * Power of the two-sided pooled two-proportion z-test for groups of n₁ and n₂ units with rates
 * p₁ and p₂ (opposite tail ignored), the quantity `unequalTwoProportionSampleSize` solves for.
 * Source: as `pooledTestPower` above (Fleiss, Levin & Paik 2003, §4.2; statsmodels'
 * `power_proportions_2indep`).
 * @throws StatsInputError when a rate is outside [0, 1], a size ≤ 0, or `alpha` outside (0, 1)
 */
export function unequalTwoProportionPower(input: { p1: number; p2: number; n1: number; n2: number; alpha?: number }): number {
  const { p1, p2, n1, n2, alpha = 0.05 } = input;
  requireClosedUnitInterval('p1', p1);
  requireClosedUnitInterval('p2', p2);
  requirePositiveSize('n1', n1, 0);
  requirePositiveSize('n2', n2, 0);
  requireOpenUnitInterval('alpha', alpha);
  return pooledTestPower(p2, p1, n2, n1, standardNormalQuantile(1 - alpha / 2));
}
