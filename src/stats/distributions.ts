/**
 * Probability distributions used by the tests and intervals. The normal, Student t,
 * hypergeometric and chi-square functions are the stdlib implementations (no hand-written
 * special functions); this file only gives them typed, named entry points and rejects
 * arguments for which stdlib would silently return NaN. The one function computed here is
 * the noncentral t distribution, which stdlib does not provide: it is integrated numerically
 * from stdlib's normal CDF and chi-square density.
 */
import chiSquarePdfStdlib from '@stdlib/stats-base-dists-chisquare-pdf';
import hypergeometricCdfStdlib from '@stdlib/stats-base-dists-hypergeometric-cdf';
import hypergeometricPmfStdlib from '@stdlib/stats-base-dists-hypergeometric-pmf';
import normalCdfStdlib from '@stdlib/stats-base-dists-normal-cdf';
import normalPdfStdlib from '@stdlib/stats-base-dists-normal-pdf';
import normalQuantileStdlib from '@stdlib/stats-base-dists-normal-quantile';
import tCdfStdlib from '@stdlib/stats-base-dists-t-cdf';
import tPdfStdlib from '@stdlib/stats-base-dists-t-pdf';
import tQuantileStdlib from '@stdlib/stats-base-dists-t-quantile';
import { StatsInputError } from './errors.js';
import { requireCount, requireFiniteNumber, requireOpenUnitInterval } from './validate.js';

function requirePositiveDegreesOfFreedom(name: string, value: number): void {
  if (typeof value !== 'number' || !Number.isFinite(value) || value <= 0) {
    throw new StatsInputError(name, `${name} must be a positive finite number, got ${String(value)}`);
  }
}

/**
 * Standard normal cumulative distribution function Φ(z) (stdlib
 * `@stdlib/stats-base-dists-normal-cdf`, via the complementary error function).
 * @throws StatsInputError when `z` is not a finite number
 * @example
 * standardNormalCdf(1.959963984540054); // ≈ 0.975
 */
export function standardNormalCdf(z: number): number {
  requireFiniteNumber('z', z);
  return normalCdfStdlib(z, 0, 1);
}

/**
 * Standard normal density φ(z) (stdlib `@stdlib/stats-base-dists-normal-pdf`).
 * @throws StatsInputError when `z` is not a finite number
 * @example
 * standardNormalPdf(0); // ≈ 0.3989422804014327
 */
export function standardNormalPdf(z: number): number {
  requireFiniteNumber('z', z);
  return normalPdfStdlib(z, 0, 1);
}

/**
 * Standard normal quantile Φ⁻¹(p) (stdlib `@stdlib/stats-base-dists-normal-quantile`).
 * @throws StatsInputError when `p` is not strictly between 0 and 1
 * @example
 * standardNormalQuantile(0.975); // ≈ 1.959963984540054
 */
export function standardNormalQuantile(p: number): number {
  requireOpenUnitInterval('p', p);
  return normalQuantileStdlib(p, 0, 1);
}

/**
 * Student t cumulative distribution function with `degreesOfFreedom` (need not be an
 * integer, as with Welch–Satterthwaite degrees of freedom) (stdlib
 * `@stdlib/stats-base-dists-t-cdf`, via the regularized incomplete beta function).
 * @throws StatsInputError when `t` is not finite or `degreesOfFreedom` is not positive
 * @example
 * studentTCdf(2.2281388519862744, 10); // ≈ 0.975
 */
export function studentTCdf(t: number, degreesOfFreedom: number): number {
  requireFiniteNumber('t', t);
  requirePositiveDegreesOfFreedom('degreesOfFreedom', degreesOfFreedom);
  return tCdfStdlib(t, degreesOfFreedom);
}

/**
 * Student t density (stdlib `@stdlib/stats-base-dists-t-pdf`).
 * @throws StatsInputError when `t` is not finite or `degreesOfFreedom` is not positive
 * @example
 * studentTPdf(0, 1); // ≈ 0.3183098861837907 (1/π, the Cauchy density at 0)
 */
export function studentTPdf(t: number, degreesOfFreedom: number): number {
  requireFiniteNumber('t', t);
  requirePositiveDegreesOfFreedom('degreesOfFreedom', degreesOfFreedom);
  return tPdfStdlib(t, degreesOfFreedom);
}

/**
 * Student t quantile (stdlib `@stdlib/stats-base-dists-t-quantile`).
 * @throws StatsInputError when `p` is not strictly between 0 and 1 or `degreesOfFreedom` is not positive
 * @example
 * studentTQuantile(0.975, 10); // ≈ 2.2281388519862744
 */
export function studentTQuantile(p: number, degreesOfFreedom: number): number {
  requireOpenUnitInterval('p', p);
  requirePositiveDegreesOfFreedom('degreesOfFreedom', degreesOfFreedom);
  return tQuantileStdlib(p, degreesOfFreedom);
}

/**
 * Two-sided tail probability of a Student t statistic, P(|T| ≥ |t|) = 2·F(−|t|), computed
 * from the lower tail at −|t| so that small p-values keep their relative precision (stdlib
 * t CDF; common practice, as R's `t.test`).
 * @throws StatsInputError when `t` is not finite or `degreesOfFreedom` is not positive
 * @example
 * studentTTwoSidedPValue(2.2281388519862744, 10); // ≈ 0.05
 */
export function studentTTwoSidedPValue(t: number, degreesOfFreedom: number): number {
  requireFiniteNumber('t', t);
  return Math.min(1, 2 * studentTCdf(-Math.abs(t), degreesOfFreedom));
}

/**
 * Two-sided tail probability of a standard normal statistic, P(|Z| ≥ |z|) = 2·Φ(−|z|)
 * (stdlib normal CDF; common practice).
 * @throws StatsInputError when `z` is not finite
 * @example
 * standardNormalTwoSidedPValue(1.959963984540054); // ≈ 0.05
 */
export function standardNormalTwoSidedPValue(z: number): number {
  requireFiniteNumber('z', z);
  return Math.min(1, 2 * standardNormalCdf(-Math.abs(z)));
}

/**
 * Two-sided critical value of the standard normal: the z with P(|Z| ≤ z) = confidence, i.e.
 * Φ⁻¹(1 − (1 − confidence)/2) (stdlib normal quantile).
 * @throws StatsInputError when `confidence` is not strictly between 0 and 1
 * @example
 * twoSidedCriticalZ(0.95); // ≈ 1.959963984540054
 */
export function twoSidedCriticalZ(confidence: number): number {
  requireOpenUnitInterval('confidence', confidence);
  return normalQuantileStdlib(1 - (1 - confidence) / 2, 0, 1);
}

function requireHypergeometricParameters(populationSize: number, successStates: number, draws: number): void {
  requireCount('populationSize', populationSize);
  requireCount('successStates', successStates);
  requireCount('draws', draws);
  if (successStates > populationSize) {
    throw new StatsInputError('successStates', `successStates (${successStates}) must not exceed populationSize (${populationSize})`);
  }
  if (draws > populationSize) {
    throw new StatsInputError('draws', `draws (${draws}) must not exceed populationSize (${populationSize})`);
  }
}

/**
 * Hypergeometric probability mass P(X = k): the chance of `k` successes in `draws` draws
 * without replacement from `populationSize` items of which `successStates` are successes
 * (stdlib `@stdlib/stats-base-dists-hypergeometric-pmf`). The null distribution of Fisher's
 * exact test.
 * @throws StatsInputError for negative or non-integer sizes, or sizes exceeding the population
 * @example
 * hypergeometricPmf(1, 8, 4, 2); // ≈ 0.5714285714285714 (16/28)
 */
export function hypergeometricPmf(k: number, populationSize: number, successStates: number, draws: number): number {
  requireFiniteNumber('k', k);
  requireHypergeometricParameters(populationSize, successStates, draws);
  return hypergeometricPmfStdlib(k, populationSize, successStates, draws);
}

/**
 * Hypergeometric cumulative distribution P(X ≤ k), parameters as in `hypergeometricPmf`
 * (stdlib `@stdlib/stats-base-dists-hypergeometric-cdf`).
 * @throws StatsInputError for negative or non-integer sizes, or sizes exceeding the population
 * @example
 * hypergeometricCdf(1, 8, 4, 2); // ≈ 0.7857142857142857 (22/28)
 */
export function hypergeometricCdf(k: number, populationSize: number, successStates: number, draws: number): number {
  requireFiniteNumber('k', k);
  requireHypergeometricParameters(populationSize, successStates, draws);
  return hypergeometricCdfStdlib(k, populationSize, successStates, draws);
}

/**
 * Chi-square density with `degreesOfFreedom` (stdlib `@stdlib/stats-base-dists-chisquare-pdf`).
 * @throws StatsInputError when `x` is not finite or `degreesOfFreedom` is not positive
 * @example
 * chiSquarePdf(2, 2); // ≈ 0.18393972058572117 (e^{-1}/2)
 */
export function chiSquarePdf(x: number, degreesOfFreedom: number): number {
  requireFiniteNumber('x', x);
  requirePositiveDegreesOfFreedom('degreesOfFreedom', degreesOfFreedom);
  return chiSquarePdfStdlib(x, degreesOfFreedom);
}

// Simpson panels; with the smooth integrand below this keeps the quadrature error far under
// 1e-10, the accuracy the power calculations are checked to.
const NONCENTRAL_T_PANELS = 4000;
// Half-width of the integration range in standard deviations of the scaled chi variable;
// the chi-square mass outside it is far below binary64 resolution.
const NONCENTRAL_T_RANGE_SDS = 14;
// Near s = 0 the density of S behaves like s^(ν−1), which is not smooth for small ν. Writing
// s = L·r^k makes the integrand behave like r^(kν−1); k is chosen so that kν − 1 ≥ 5, smooth
// enough for Simpson's rule to keep its fourth-order accuracy.
const NONCENTRAL_T_MIN_SMOOTHNESS = 6;

/**
 * Noncentral t distribution, lower or upper tail, by numerical integration.
 *
 * Method: T = (Z + δ) / S with Z standard normal and S = √(V/ν), V chi-square with ν degrees
 * of freedom, independent; so P(T ≤ t) = ∫ Φ(t·s − δ) f_S(s) ds and
 * P(T > t) = ∫ Φ(δ − t·s) f_S(s) ds, where f_S(s) = 2νs · f_χ²(νs²; ν). S has mean ≈ 1 and
 * standard deviation ≈ 1/√(2ν), so the integral runs over
 * s ∈ [max(0, 1 − 14/√(2ν)), 1 + 14/√(2ν)]. When that range starts at 0, the substitution
 * s = L·r^k (k = ⌈6/ν⌉) removes the non-smooth behaviour of f_S near 0. The integral is
 * evaluated by composite Simpson's rule with 4000 panels, with Φ and f_χ² from stdlib.
 * Source: the definition of the noncentral t as a normal over a scaled chi variable (e.g.
 * Johnson, Kotz & Balakrishnan, Continuous Univariate Distributions, vol. 2, ch. 31 — from
 * memory). Agrees with R's `pt(q, df, ncp)` to within 1e-9 relative (and 1e-12 absolute in
 * most cases) on the cases in test/stats/distributions.test.ts.
 * @param t - the quantile
 * @param degreesOfFreedom - ν > 0, need not be an integer
 * @param noncentrality - δ
 * @param tail - `'lower'` for P(T ≤ t), `'upper'` for P(T > t)
 * @throws StatsInputError when `t` or `noncentrality` is not finite or `degreesOfFreedom` is not positive
 * @example
 * noncentralTProbability(2.0243941639119702, 38, 3.1622776601683795, 'upper');
 * // ≈ 0.868952801692 (R: pt(qt(0.975, 38), 38, ncp = sqrt(10), lower.tail = FALSE))
 */
export function noncentralTProbability(
  t: number,
  degreesOfFreedom: number,
  noncentrality: number,
  tail: 'lower' | 'upper',
): number {
  requireFiniteNumber('t', t);
  requirePositiveDegreesOfFreedom('degreesOfFreedom', degreesOfFreedom);
  requireFiniteNumber('noncentrality', noncentrality);
  const scaledChiSd = 1 / Math.sqrt(2 * degreesOfFreedom);
  const lowerLimit = Math.max(0, 1 - NONCENTRAL_T_RANGE_SDS * scaledChiSd);
  const upperLimit = 1 + NONCENTRAL_T_RANGE_SDS * scaledChiSd;
  const width = upperLimit - lowerLimit;
  const power = lowerLimit > 0 ? 1 : Math.max(1, Math.ceil(NONCENTRAL_T_MIN_SMOOTHNESS / degreesOfFreedom));
  const integrand = (r: number): number => {
    if (r <= 0 && lowerLimit === 0) return 0;
    const s = lowerLimit + width * r ** power;
    const jacobian = width * power * r ** (power - 1);
    const density = 2 * degreesOfFreedom * s * chiSquarePdfStdlib(degreesOfFreedom * s * s, degreesOfFreedom);
    const normalPart = tail === 'lower'
      ? normalCdfStdlib(t * s - noncentrality, 0, 1)
      : normalCdfStdlib(noncentrality - t * s, 0, 1);
    return density * normalPart * jacobian;
  };
  const step = 1 / NONCENTRAL_T_PANELS;
  let weightedSum = integrand(0) + integrand(1);
  for (let index = 1; index < NONCENTRAL_T_PANELS; index += 1) {
    weightedSum += (index % 2 === 1 ? 4 : 2) * integrand(index * step);
  }
  const probability = (weightedSum * step) / 3;
  return Math.min(1, Math.max(0, probability));
}
