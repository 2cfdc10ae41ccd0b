/**
 * Association between two paired variables: covariance and Pearson's correlation with the
 * Fisher-z interval and the t-test of zero correlation.
 */
import { StatsInputError } from './errors.js';
import { studentTTwoSidedPValue, twoSidedCriticalZ } from './distributions.js';
import { computed, notComputable } from './result.js';
import type { Interval, Outcome } from './result.js';
import { readVarianceBasis } from './summary.js';
import type { VarianceBasis } from './summary.js';
import { requireCount, requireFiniteNumber, requireFiniteValues, requireOpenUnitInterval, requireSameLength } from './validate.js';

/**
 * Centred second moments of paired values, the sufficient statistics of Pearson's r:
 * Σ(x − x̄)², Σ(y − ȳ)² and Σ(x − x̄)(y − ȳ).
 */
export interface PairedMoments {
  readonly n: number;
  readonly sumSquaredDeviationsX: number;
  readonly sumSquaredDeviationsY: number;
  readonly sumCrossDeviations: number;
}

/**
 * Centred moments of paired values by a two-pass algorithm (means first, then deviations),
 * which avoids the cancellation of Σxy − ΣxΣy/n on large values; the first-pass means are
 * refined by the mean deviation as in Chan, Golub & LeVeque (1983), The American
 * Statistician 37, 242–247.
 * @throws StatsInputError when a value is not finite or the lists differ in length
 * @example
 * pairedMoments([1, 2, 3], [2, 4, 7]);
 * // { n: 3, sumSquaredDeviationsX: 2, sumSquaredDeviationsY: 12.666…, sumCrossDeviations: 5 }
 */
export function pairedMoments(xs: ReadonlyArray<number>, ys: ReadonlyArray<number>): PairedMoments {
  requireFiniteValues('xs', xs);
  requireFiniteValues('ys', ys);
  requireSameLength('xs', xs, 'ys', ys);
  const n = xs.length;
  if (n === 0) return { n: 0, sumSquaredDeviationsX: 0, sumSquaredDeviationsY: 0, sumCrossDeviations: 0 };
  let totalX = 0;
  let totalY = 0;
  for (let index = 0; index < n; index += 1) {
    totalX += xs[index] as number;
    totalY += ys[index] as number;
  }
  const firstPassMeanX = totalX / n;
  const firstPassMeanY = totalY / n;
  let deviationSumX = 0;
  let deviationSumY = 0;
  for (let index = 0; index < n; index += 1) {
    deviationSumX += (xs[index] as number) - firstPassMeanX;
    deviationSumY += (ys[index] as number) - firstPassMeanY;
  }
  const meanX = firstPassMeanX + deviationSumX / n;
  const meanY = firstPassMeanY + deviationSumY / n;
  let sumSquaredDeviationsX = 0;
  let sumSquaredDeviationsY = 0;
  let sumCrossDeviations = 0;
  for (let index = 0; index < n; index += 1) {
    const deviationX = (xs[index] as number) - meanX;
    const deviationY = (ys[index] as number) - meanY;
    sumSquaredDeviationsX += deviationX * deviationX;
    sumSquaredDeviationsY += deviationY * deviationY;
    sumCrossDeviations += deviationX * deviationY;
  }
  return { n, sumSquaredDeviationsX, sumSquaredDeviationsY, sumCrossDeviations };
}

/**
 * Covariance Σ(x − x̄)(y − ȳ)/(n − 1) for `basis: 'sample'` (default) or /n for
 * `'population'`, from two-pass centred sums. Common practice (as R's `cov`). Undefined (with
 * a reason) for n < 2 (sample) or n = 0 (population).
 * @throws StatsInputError when a value is not finite, the lists differ in length, or `basis` is unknown
 * @example
 * covariance([1, 2, 3], [2, 4, 7]); // { ok: true, value: 2.5 }
 */
export function covariance(
  xs: ReadonlyArray<number>,
  ys: ReadonlyArray<number>,
  options: { readonly basis?: VarianceBasis } = {},
): Outcome<number> {
  const basis = readVarianceBasis(options.basis);
  const moments = pairedMoments(xs, ys);
  if (basis === 'sample') {
    if (moments.n < 2) {
      return notComputable(`The sample covariance is undefined: it needs at least 2 pairs, got ${moments.n}.`);
    }
    return computed(moments.sumCrossDeviations / (moments.n - 1));
  }
  if (moments.n === 0) return notComputable('The population covariance is undefined: there are no pairs (n = 0).');
  return computed(moments.sumCrossDeviations / moments.n);
}

/** Pearson's r with its Fisher-z interval and the t-test of ρ = 0. */
export interface CorrelationResult {
  readonly r: number;
  readonly n: number;
  readonly interval: Interval;
  readonly t: number;
  readonly degreesOfFreedom: number;
  /** two-sided */
  readonly pValue: number;
}

/**
 * Pearson's correlation from centred moments (for example from database sums): see
 * `pearsonCorrelation` for the method and sources. Undefined (with a reason) for fewer than
 * 4 pairs, when a variable does not vary, or when the correlation is perfect (|r| = 1, where
 * the t statistic and the Fisher-z interval are infinite).
 * @throws StatsInputError for invalid moments or a confidence outside (0, 1)
 * @example
 * pearsonCorrelationFromMoments({ n: 10, sumSquaredDeviationsX: 4, sumSquaredDeviationsY: 9, sumCrossDeviations: 3 }, 0.95);
 * // { ok: true, value: { r: 0.5, t: 1.6329…, degreesOfFreedom: 8, pValue: 0.1411…, … } }
 */
export function pearsonCorrelationFromMoments(moments: PairedMoments, confidence = 0.95): Outcome<CorrelationResult> {
  requireCount('moments.n', moments.n);
  requireFiniteNumber('moments.sumSquaredDeviationsX', moments.sumSquaredDeviationsX);
  requireFiniteNumber('moments.sumSquaredDeviationsY', moments.sumSquaredDeviationsY);
  requireFiniteNumber('moments.sumCrossDeviations', moments.sumCrossDeviations);
  requireOpenUnitInterval('confidence', confidence);
  if (moments.sumSquaredDeviationsX < 0 || moments.sumSquaredDeviationsY < 0) {
    throw new StatsInputError('moments', 'sums of squared deviations must not be negative');
  }
  const { n } = moments;
  if (n < 4) {
    return notComputable(`The correlation test and interval are undefined: they need at least 4 pairs, got ${n}.`);
  }
  if (moments.sumSquaredDeviationsX === 0 || moments.sumSquaredDeviationsY === 0) {
    return notComputable(
      `The correlation is undefined: ${moments.sumSquaredDeviationsX === 0 ? 'the first' : 'the second'} variable has the same value in every pair.`,
    );
  }
  const rawR = moments.sumCrossDeviations / Math.sqrt(moments.sumSquaredDeviationsX * moments.sumSquaredDeviationsY);
  const r = Math.max(-1, Math.min(1, rawR));
  if (Math.abs(r) === 1) {
    return notComputable(
      `The correlation is perfect (r = ${r}): the t statistic and the Fisher-z interval are infinite, so no test or interval is reported.`,
    );
  }
  const degreesOfFreedom = n - 2;
  const t = r * Math.sqrt(degreesOfFreedom / (1 - r * r));
  const fisherZ = Math.atanh(r);
  const margin = twoSidedCriticalZ(confidence) / Math.sqrt(n - 3);
  return computed({
    r,
    n,
    interval: { low: Math.tanh(fisherZ - margin), high: Math.tanh(fisherZ + margin) },
    t,
    degreesOfFreedom,
    pValue: studentTTwoSidedPValue(t, degreesOfFreedom),
  });
}

/**
 * Pearson's product-moment correlation r = Σ(x − x̄)(y − ȳ)/√(Σ(x − x̄)²·Σ(y − ȳ)²), with the
 * Fisher-z interval tanh(atanh r ± z(1 − α/2)/√(n − 3)) and the two-sided t-test of ρ = 0,
 * t = r·√((n − 2)/(1 − r²)) on n − 2 degrees of freedom (as R's `cor.test`). Sources:
 * Fisher, R. A. (1921). On the "probable error" of a coefficient of correlation deduced from
 * a small sample. Metron 1, 3–32 (z transform); Fisher (1915), Biometrika 10, 507–521 for the
 * t form (from memory). Undefined (with a reason) for fewer than 4 pairs, when a variable
 * does not vary, or when |r| = 1.
 * @throws StatsInputError when a value is not finite, the lists differ in length, or the
 * confidence is outside (0, 1)
 * @example
 * pearsonCorrelation([1, 2, 3, 4, 5], [2, 1, 4, 3, 5], 0.95);
 * // { ok: true, value: { r: 0.8, t: 2.3094…, degreesOfFreedom: 3, pValue: 0.1041…, interval: { low: -0.27964…, high: 0.98620… }, n: 5 } }
 */
export function pearsonCorrelation(
  xs: ReadonlyArray<number>,
  ys: ReadonlyArray<number>,
  confidence = 0.95,
): Outcome<CorrelationResult> {
  requireOpenUnitInterval('confidence', confidence);
  return pearsonCorrelationFromMoments(pairedMoments(xs, ys), confidence);
}
