/**
 * Means from sufficient statistics (`Summary`): the one-sample t interval, Welch's and
 * Student's two-sample t-tests with the interval for the difference of means, and Hedges' g.
 */
import { studentTQuantile, studentTTwoSidedPValue } from './distributions.js';
import { computed, notComputable } from './result.js';
import type { EstimateWithInterval, Interval, Outcome } from './result.js';
import { validateSummary } from './summary.js';
import type { Summary } from './summary.js';
import { requireOpenUnitInterval } from './validate.js';

/** A mean with its t interval. */
export interface MeanInterval extends EstimateWithInterval {
  readonly standardError: number;
  readonly degreesOfFreedom: number;
}

/** Result of a two-sample t-test; the difference is mean(a) − mean(b). */
export interface TwoSampleTTestResult {
  readonly difference: number;
  readonly interval: Interval;
  readonly standardError: number;
  readonly t: number;
  readonly degreesOfFreedom: number;
  /** two-sided */
  readonly pValue: number;
}

function tCriticalValue(confidence: number, degreesOfFreedom: number): number {
  return studentTQuantile(1 - (1 - confidence) / 2, degreesOfFreedom);
}

/**
 * One-sample t interval for a mean: x̄ ± t(1 − α/2; n − 1) · s/√n. Source: Student (1908),
 * The probable error of a mean, Biometrika 6, 1–25 (from memory); as R's
 * `t.test(x)$conf.int`. Undefined (with a reason) for n < 2. When all values are equal the
 * interval has zero width, which is what the data say.
 * @throws StatsInputError for an invalid summary or a confidence outside (0, 1)
 * @example
 * tInterval(summarize([5.1, 4.9, 5.6, 5.8, 6.0]), 0.95);
 * // { ok: true, value: { estimate: 5.48, interval: { low: 4.90159…, high: 6.05841… }, … } }
 */
export function tInterval(summary: Summary, confidence = 0.95): Outcome<MeanInterval> {
  validateSummary('summary', summary);
  requireOpenUnitInterval('confidence', confidence);
  if (summary.n < 2) {
    return notComputable(`The interval for the mean is undefined: it needs at least 2 values, got ${summary.n}.`);
  }
  const degreesOfFreedom = summary.n - 1;
  const standardError = Math.sqrt(summary.sumSquaredDeviations / degreesOfFreedom / summary.n);
  const margin = tCriticalValue(confidence, degreesOfFreedom) * standardError;
  return computed({
    estimate: summary.mean,
    interval: { low: summary.mean - margin, high: summary.mean + margin },
    standardError,
    degreesOfFreedom,
  });
}

function twoSampleResult(
  a: Summary,
  b: Summary,
  standardError: number,
  degreesOfFreedom: number,
  confidence: number,
): TwoSampleTTestResult {
  const difference = a.mean - b.mean;
  const t = difference / standardError;
  const margin = tCriticalValue(confidence, degreesOfFreedom) * standardError;
  return {
    difference,
    interval: { low: difference - margin, high: difference + margin },
    standardError,
    t,
    degreesOfFreedom,
    pValue: studentTTwoSidedPValue(t, degreesOfFreedom),
  };
}

/**
 * Welch's two-sample t-test (unequal variances), two-sided, with the interval for the
 * difference of means a − b: t = (x̄_a − x̄_b)/√(s²_a/n_a + s²_b/n_b), with the
 * Welch–Satterthwaite degrees of freedom
 * ν = (s²_a/n_a + s²_b/n_b)² / ((s²_a/n_a)²/(n_a − 1) + (s²_b/n_b)²/(n_b − 1)).
 * Sources: Welch, B. L. (1947), Biometrika 34, 28–35; Satterthwaite, F. E. (1946),
 * Biometrics Bulletin 2, 110–114. Undefined (with a reason) when a group has fewer than 2
 * values or when both groups have zero variance.
 * @throws StatsInputError for an invalid summary or a confidence outside (0, 1)
 * @example
 * welchTTest(summarize([19.1, 20.3, 22.0, 18.7]), summarize([17.2, 18.0, 16.9, 19.5, 17.7]), 0.95);
 * // { ok: true, value: { difference: 2.165, t: 2.49402…, degreesOfFreedom: 5.11959…, pValue: 0.053759…, … } }
 */
export function welchTTest(a: Summary, b: Summary, confidence = 0.95): Outcome<TwoSampleTTestResult> {
  validateSummary('a', a);
  validateSummary('b', b);
  requireOpenUnitInterval('confidence', confidence);
  if (a.n < 2 || b.n < 2) {
    return notComputable(
      `Welch's t-test is undefined: each group needs at least 2 values to estimate its variance, got ${a.n} and ${b.n}.`,
    );
  }
  const varianceOfMeanA = a.sumSquaredDeviations / (a.n - 1) / a.n;
  const varianceOfMeanB = b.sumSquaredDeviations / (b.n - 1) / b.n;
  const varianceOfDifference = varianceOfMeanA + varianceOfMeanB;
  if (varianceOfDifference === 0) {
    return notComputable("Welch's t-test is undefined: both groups have zero variance (all values equal within each group).");
  }
  const degreesOfFreedom =
    (varianceOfDifference * varianceOfDifference) /
    ((varianceOfMeanA * varianceOfMeanA) / (a.n - 1) + (varianceOfMeanB * varianceOfMeanB) / (b.n - 1));
  return computed(twoSampleResult(a, b, Math.sqrt(varianceOfDifference), degreesOfFreedom, confidence));
}

/**
 * Student's two-sample t-test with pooled variance, two-sided, with the interval for the
 * difference of means a − b: s²_p = (SSD_a + SSD_b)/(n_a + n_b − 2),
 * t = (x̄_a − x̄_b)/(s_p·√(1/n_a + 1/n_b)), ν = n_a + n_b − 2. Source: Student (1908),
 * Biometrika 6, 1–25; Fisher, R. A. (1925), Statistical Methods for Research Workers (from
 * memory); as R's `t.test(var.equal = TRUE)`. Undefined (with a reason) when a group is
 * empty, when there are fewer than 3 values in all, or when the pooled variance is 0.
 * @throws StatsInputError for an invalid summary or a confidence outside (0, 1)
 * @example
 * studentTTest(summarize([19.1, 20.3, 22.0, 18.7]), summarize([17.2, 18.0, 16.9, 19.5, 17.7]), 0.95);
 * // { ok: true, value: { difference: 2.165, t: 2.61291…, degreesOfFreedom: 7, pValue: 0.034766…, … } }
 */
export function studentTTest(a: Summary, b: Summary, confidence = 0.95): Outcome<TwoSampleTTestResult> {
  validateSummary('a', a);
  validateSummary('b', b);
  requireOpenUnitInterval('confidence', confidence);
  if (a.n < 1 || b.n < 1 || a.n + b.n < 3) {
    return notComputable(
      `Student's t-test is undefined: it needs at least 1 value in each group and 3 in all, got ${a.n} and ${b.n}.`,
    );
  }
  const degreesOfFreedom = a.n + b.n - 2;
  const pooledVariance = (a.sumSquaredDeviations + b.sumSquaredDeviations) / degreesOfFreedom;
  if (pooledVariance === 0) {
    return notComputable("Student's t-test is undefined: both groups have zero variance (all values equal within each group).");
  }
  const pooledStandardError = Math.sqrt(pooledVariance * (1 / a.n + 1 / b.n));
  return computed(twoSampleResult(a, b, pooledStandardError, degreesOfFreedom, confidence));
}

/**
 * Hedges' g, the standardized difference of means a − b with the small-sample correction:
 * d = (x̄_a − x̄_b)/s_p with the pooled standard deviation s_p (denominator n_a + n_b − 2),
 * g = J·d with J = 1 − 3/(4ν − 1), ν = n_a + n_b − 2 (Hedges' approximation to the exact
 * gamma-function factor; compared in R with Γ(ν/2)/(√(ν/2)·Γ((ν − 1)/2)) it is 1.3 % high at
 * ν = 2, 0.27 % at ν = 4 and 0.04 % at ν = 10). Source: Hedges,
 * L. V. (1981). Distribution theory for Glass's estimator of effect size and related
 * estimators. Journal of Educational Statistics 6, 107–128. Undefined (with a reason) when a
 * group has fewer than 2 values or the pooled variance is 0.
 * @throws StatsInputError for an invalid summary
 * @example
 * hedgesG(summarize([19.1, 20.3, 22.0, 18.7]), summarize([17.2, 18.0, 16.9, 19.5, 17.7]));
 * // { ok: true, value: 1.55804… }
 */
export function hedgesG(a: Summary, b: Summary): Outcome<number> {
  validateSummary('a', a);
  validateSummary('b', b);
  if (a.n < 2 || b.n < 2) {
    return notComputable(`Hedges' g is undefined: each group needs at least 2 values, got ${a.n} and ${b.n}.`);
  }
  const degreesOfFreedom = a.n + b.n - 2;
  const pooledVariance = (a.sumSquaredDeviations + b.sumSquaredDeviations) / degreesOfFreedom;
  if (pooledVariance === 0) {
    return notComputable("Hedges' g is undefined: both groups have zero variance, so there is no scale to standardize by.");
  }
  const cohensD = (a.mean - b.mean) / Math.sqrt(pooledVariance);
  const smallSampleCorrection = 1 - 3 / (4 * degreesOfFreedom - 1);
  return computed(smallSampleCorrection * cohensD);
}
