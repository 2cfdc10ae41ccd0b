/**
 * Rates (proportions): the Wilson interval for one rate, the Newcombe hybrid score interval
 * for a difference of two rates, the pooled two-proportion z-test, Fisher's exact test, the
 * Katz log interval for a ratio of rates, and Cohen's h.
 */
import { hypergeometricPmf, standardNormalTwoSidedPValue, twoSidedCriticalZ } from './distributions.js';
import { computed, notComputable } from './result.js';
import type { EstimateWithInterval, Interval, Outcome } from './result.js';
import { requireClosedUnitInterval, requireSuccessesWithinTrials } from './validate.js';

function wilsonBounds(successes: number, trials: number, criticalZ: number): Interval {
  const rate = successes / trials;
  const zSquared = criticalZ * criticalZ;
  const denominator = 1 + zSquared / trials;
  const centre = (rate + zSquared / (2 * trials)) / denominator;
  const halfWidth =
    (criticalZ * Math.sqrt((rate * (1 - rate)) / trials + zSquared / (4 * trials * trials))) / denominator;
  // At x = 0 and x = n the bounds are exactly 0 and 1; computing them would leave ±1e-17.
  return {
    low: successes === 0 ? 0 : Math.max(0, centre - halfWidth),
    high: successes === trials ? 1 : Math.min(1, centre + halfWidth),
  };
}

/**
 * Wilson score interval for a proportion: the set of p for which the score test
 * |x/n − p| ≤ z·√(p(1 − p)/n) does not reject, i.e.
 * (p̂ + z²/2n ± z·√(p̂(1 − p̂)/n + z²/4n²)) / (1 + z²/n). Source: Wilson, E. B. (1927).
 * Probable inference, the law of succession, and statistical inference. JASA 22, 209–212;
 * method 3 of Newcombe (1998a), Statistics in Medicine 17, 857–872.
 * Undefined (with a reason) when `trials` is 0.
 * @param successes - number of successes x, an integer 0 ≤ x ≤ trials
 * @param trials - number of trials n, a non-negative integer
 * @param confidence - confidence level in (0, 1), default 0.95
 * @throws StatsInputError for negative or non-integer counts, successes > trials, or a
 * confidence outside (0, 1)
 * @example
 * wilsonInterval(81, 263, 0.95);
 * // { ok: true, value: { estimate: 0.30798…, interval: { low: 0.25529…, high: 0.36621… } } }
 */
export function wilsonInterval(successes: number, trials: number, confidence = 0.95): Outcome<EstimateWithInterval> {
  requireSuccessesWithinTrials('successes', successes, 'trials', trials);
  const criticalZ = twoSidedCriticalZ(confidence);
  if (trials === 0) return notComputable('The rate is undefined: the group has no trials (n = 0).');
  return computed({ estimate: successes / trials, interval: wilsonBounds(successes, trials, criticalZ) });
}

/**
 * Newcombe's hybrid score interval for the difference of two independent proportions
 * θ = p₁ − p₂ (method 10): with Wilson limits (l₁, u₁) and (l₂, u₂) for each proportion,
 * L = θ̂ − √((p̂₁ − l₁)² + (u₂ − p̂₂)²) and U = θ̂ + √((u₁ − p̂₁)² + (p̂₂ − l₂)²).
 * Source: Newcombe, R. G. (1998b). Interval estimation for the difference between
 * independent proportions: comparison of eleven methods. Statistics in Medicine 17, 873–890.
 * Undefined (with a reason) when either group has no trials.
 * @throws StatsInputError for invalid counts or a confidence outside (0, 1)
 * @example
 * newcombeDifferenceInterval(56, 70, 48, 80, 0.95);
 * // { ok: true, value: { estimate: 0.2, interval: { low: 0.05243…, high: 0.33387… } } }
 */
export function newcombeDifferenceInterval(
  x1: number,
  n1: number,
  x2: number,
  n2: number,
  confidence = 0.95,
): Outcome<EstimateWithInterval> {
  requireSuccessesWithinTrials('x1', x1, 'n1', n1);
  requireSuccessesWithinTrials('x2', x2, 'n2', n2);
  const criticalZ = twoSidedCriticalZ(confidence);
  if (n1 === 0 || n2 === 0) {
    return notComputable(
      `The difference of rates is undefined: ${n1 === 0 ? 'group 1' : 'group 2'} has no trials (n = 0).`,
    );
  }
  const rate1 = x1 / n1;
  const rate2 = x2 / n2;
  const bounds1 = wilsonBounds(x1, n1, criticalZ);
  const bounds2 = wilsonBounds(x2, n2, criticalZ);
  const difference = rate1 - rate2;
  const lowerDistance = Math.hypot(rate1 - bounds1.low, bounds2.high - rate2);
  const upperDistance = Math.hypot(bounds1.high - rate1, rate2 - bounds2.low);
  return computed({
    estimate: difference,
    interval: { low: Math.max(-1, difference - lowerDistance), high: Math.min(1, difference + upperDistance) },
  });
}

/** Result of the pooled two-proportion z-test. */
export interface TwoProportionZTestResult {
  /** p̂₁ − p̂₂ */
  readonly difference: number;
  /** (x₁ + x₂)/(n₁ + n₂), the common rate under the null hypothesis */
  readonly pooledRate: number;
  readonly pooledStandardError: number;
  readonly z: number;
  /** two-sided */
  readonly pValue: number;
}

/**
 * Pooled two-proportion z-test, two-sided: z = (p̂₁ − p̂₂) / √(p̄(1 − p̄)(1/n₁ + 1/n₂)) with
 * the pooled rate p̄ = (x₁ + x₂)/(n₁ + n₂), p = 2Φ(−|z|). Equal to Pearson's chi-square test
 * without continuity correction (z² = X², as R's `prop.test(correct = FALSE)`). Source: the
 * large-sample test of two proportions, e.g. Fleiss, Levin & Paik (2003), Statistical Methods
 * for Rates and Proportions, 3rd ed., ch. 2 (from memory). Undefined (with a reason) when a
 * group has no trials, or when every unit in both groups has the same outcome (pooled rate 0
 * or 1, so the standard error is 0).
 * @throws StatsInputError for invalid counts
 * @example
 * twoProportionZTest(56, 70, 48, 80);
 * // { ok: true, value: { difference: 0.2, z: 2.65017…, pValue: 0.0080451…, … } }
 */
export function twoProportionZTest(x1: number, n1: number, x2: number, n2: number): Outcome<TwoProportionZTestResult> {
  requireSuccessesWithinTrials('x1', x1, 'n1', n1);
  requireSuccessesWithinTrials('x2', x2, 'n2', n2);
  if (n1 === 0 || n2 === 0) {
    return notComputable(`The z-test is undefined: ${n1 === 0 ? 'group 1' : 'group 2'} has no trials (n = 0).`);
  }
  const pooledRate = (x1 + x2) / (n1 + n2);
  if (pooledRate === 0 || pooledRate === 1) {
    return notComputable(
      `The z-test is undefined: every unit in both groups has the same outcome (${pooledRate === 0 ? 'no successes' : 'all successes'}), so there is no variation to test.`,
    );
  }
  const difference = x1 / n1 - x2 / n2;
  const pooledStandardError = Math.sqrt(pooledRate * (1 - pooledRate) * (1 / n1 + 1 / n2));
  const z = difference / pooledStandardError;
  return computed({ difference, pooledRate, pooledStandardError, z, pValue: standardNormalTwoSidedPValue(z) });
}

// R's fisher.test treats tables whose probability is within a factor 1 + 1e-7 of the
// observed one as "as extreme", so that ties are not lost to rounding.
const FISHER_RELATIVE_TOLERANCE = 1 + 1e-7;

/** Result of Fisher's exact test. */
export interface FisherExactTestResult {
  /** two-sided */
  readonly pValue: number;
  /** probability of the observed table under the null hypothesis */
  readonly observedTableProbability: number;
}

/**
 * Fisher's exact test for a 2×2 table (x₁ successes of n₁ against x₂ of n₂), two-sided:
 * conditional on the margins, x₁ is hypergeometric; the p-value is the sum of the
 * probabilities of all tables no more probable than the observed one, with a relative
 * tolerance of 1e-7 as in R's `fisher.test`. Source: Fisher, R. A. (1935). The logic of
 * inductive inference. JRSS 98, 39–82 (from memory); the two-sided rule is R's
 * `fisher.test` (stats package). The hypergeometric probabilities come from stdlib.
 * Undefined (with a reason) when a group has no trials.
 * @throws StatsInputError for invalid counts
 * @example
 * fisherExactTest(3, 4, 1, 4); // { ok: true, value: { pValue: 0.48571…, … } } (R: fisher.test(matrix(c(3,1,1,3),2)))
 */
export function fisherExactTest(x1: number, n1: number, x2: number, n2: number): Outcome<FisherExactTestResult> {
  requireSuccessesWithinTrials('x1', x1, 'n1', n1);
  requireSuccessesWithinTrials('x2', x2, 'n2', n2);
  if (n1 === 0 || n2 === 0) {
    return notComputable(
      `Fisher's exact test is undefined: ${n1 === 0 ? 'group 1' : 'group 2'} has no trials (n = 0).`,
    );
  }
  const populationSize = n1 + n2;
  const totalSuccesses = x1 + x2;
  const smallest = Math.max(0, n1 + totalSuccesses - populationSize);
  const largest = Math.min(n1, totalSuccesses);
  const observedTableProbability = hypergeometricPmf(x1, populationSize, totalSuccesses, n1);
  const threshold = observedTableProbability * FISHER_RELATIVE_TOLERANCE;
  let pValue = 0;
  for (let k = smallest; k <= largest; k += 1) {
    const probability = hypergeometricPmf(k, populationSize, totalSuccesses, n1);
    if (probability <= threshold) pValue += probability;
  }
  return computed({ pValue: Math.min(1, pValue), observedTableProbability });
}

/**
 * Katz log interval for the ratio of two proportions (relative risk, "lift") p₁/p₂:
 * exp(ln(p̂₁/p̂₂) ± z·√(1/x₁ − 1/n₁ + 1/x₂ − 1/n₂)). Source: Katz, D., Baptista, J., Azen,
 * S. P. & Pike, M. C. (1978). Obtaining confidence intervals for the risk ratio in cohort
 * studies. Biometrics 34, 469–474. Undefined (with a reason) when a group has no trials or
 * no successes (the logarithm of a zero rate does not exist).
 * @throws StatsInputError for invalid counts or a confidence outside (0, 1)
 * @example
 * katzRatioInterval(56, 70, 48, 80, 0.95);
 * // { ok: true, value: { estimate: 1.3333…, interval: { low: 1.07663…, high: 1.65125… } } }
 */
export function katzRatioInterval(
  x1: number,
  n1: number,
  x2: number,
  n2: number,
  confidence = 0.95,
): Outcome<EstimateWithInterval> {
  requireSuccessesWithinTrials('x1', x1, 'n1', n1);
  requireSuccessesWithinTrials('x2', x2, 'n2', n2);
  const criticalZ = twoSidedCriticalZ(confidence);
  if (n1 === 0 || n2 === 0) {
    return notComputable(`The ratio of rates is undefined: ${n1 === 0 ? 'group 1' : 'group 2'} has no trials (n = 0).`);
  }
  if (x2 === 0) {
    return notComputable('The ratio of rates is undefined: group 2 has no successes, so its rate is 0 and cannot be divided by.');
  }
  if (x1 === 0) {
    return notComputable('The interval for the ratio of rates is undefined: group 1 has no successes, so the logarithm of its rate does not exist.');
  }
  const ratio = x1 / n1 / (x2 / n2);
  const logStandardError = Math.sqrt(1 / x1 - 1 / n1 + 1 / x2 - 1 / n2);
  const logRatio = Math.log(ratio);
  return computed({
    estimate: ratio,
    interval: {
      low: Math.exp(logRatio - criticalZ * logStandardError),
      high: Math.exp(logRatio + criticalZ * logStandardError),
    },
  });
}

/**
 * Cohen's h, the effect size of a difference of two proportions on the arcsine scale:
 * h = 2·arcsin√p₁ − 2·arcsin√p₂ (0.2 small, 0.5 medium, 0.8 large by Cohen's conventions).
 * Source: Cohen, J. (1988). Statistical Power Analysis for the Behavioral Sciences, 2nd ed.,
 * ch. 6.
 * @throws StatsInputError when a proportion is outside [0, 1]
 * @example
 * cohensH(0.5, 0.25); // ≈ 0.5235987755982989 (π/2 − π/3 = π/6)
 */
export function cohensH(p1: number, p2: number): number {
  requireClosedUnitInterval('p1', p1);
  requireClosedUnitInterval('p2', p2);
  return 2 * Math.asin(Math.sqrt(p1)) - 2 * Math.asin(Math.sqrt(p2));
}
