/**
 * Descriptive statistics of one list of values: mean, median, modes, variance, standard
 * deviation, coefficient of variation, skewness, quantiles and quartiles (Hyndman–Fan type 7).
 * The order and shape statistics turn the list into (value, count) pairs and read them with
 * the formulas of counts.ts, which `describeCounts` shares.
 */
import {
  EMPTY_REASON,
  coefficientOfVariationOfSummary,
  countsOfValues,
  modesOfCounts,
  quantileOfCounts,
  quartilesOfCounts,
  skewnessOfCounts,
  standardDeviationOfSummary,
  type Quartiles,
} from './counts.js';
import { computed, notComputable } from './result.js';
import type { Outcome } from './result.js';
import { readVarianceBasis, summarize, summaryVariance } from './summary.js';
import type { VarianceBasis } from './summary.js';
import { requireClosedUnitInterval, requireFiniteValues } from './validate.js';

/** Options of the dispersion and shape statistics. */
export interface BasisOptions {
  /** `'sample'` (default) or `'population'`; see each function for what it changes. */
  readonly basis?: VarianceBasis;
}

/**
 * Arithmetic mean, computed by the corrected two-pass algorithm of `summarize` (Chan, Golub
 * & LeVeque 1983, The American Statistician 37, 242–247), accurate on the NIST StRD data.
 * Undefined (with a reason) for an empty list.
 * @throws StatsInputError when a value is not a finite number
 * @example
 * mean([1, 2, 3, 4]); // { ok: true, value: 2.5 }
 */
export function mean(values: ReadonlyArray<number>): Outcome<number> {
  const summary = summarize(values);
  if (summary.n === 0) return notComputable(`The mean is undefined: ${EMPTY_REASON}.`);
  return computed(summary.mean);
}

/**
 * Sample quantile of Hyndman & Fan type 7 (R's and NumPy's default): with the values sorted
 * x₍₁₎ ≤ … ≤ x₍ₙ₎ and h = (n − 1)·p, Q(p) = x₍⌊h⌋+1₎ + (h − ⌊h⌋)·(x₍⌊h⌋+2₎ − x₍⌊h⌋+1₎).
 * Source: Hyndman, R. J. & Fan, Y. (1996). Sample quantiles in statistical packages. The
 * American Statistician 50, 361–365 (definition 7). Undefined (with a reason) for an empty
 * list.
 * @throws StatsInputError when a value is not finite or `probability` is outside [0, 1]
 * @example
 * quantile([1, 2, 3, 4, 10], 0.25); // { ok: true, value: 2 }
 */
export function quantile(values: ReadonlyArray<number>, probability: number): Outcome<number> {
  requireFiniteValues('values', values);
  requireClosedUnitInterval('probability', probability);
  if (values.length === 0) return notComputable(`The quantile is undefined: ${EMPTY_REASON}.`);
  return computed(quantileOfCounts(countsOfValues(values), values.length, probability));
}

/**
 * Median: the middle value, or the mean of the two middle values (equal to the type 7
 * quantile at p = 0.5). Common practice. Undefined (with a reason) for an empty list.
 * @throws StatsInputError when a value is not a finite number
 * @example
 * median([5, 1, 3, 2]); // { ok: true, value: 2.5 }
 */
export function median(values: ReadonlyArray<number>): Outcome<number> {
  requireFiniteValues('values', values);
  if (values.length === 0) return notComputable(`The median is undefined: ${EMPTY_REASON}.`);
  return computed(quantileOfCounts(countsOfValues(values), values.length, 0.5));
}

/**
 * Quartiles by the Hyndman & Fan type 7 rule (as R's `quantile(x)` and NumPy's default).
 * Source: Hyndman, R. J. & Fan, Y. (1996). The American Statistician 50, 361–365.
 * Undefined (with a reason) for an empty list.
 * @throws StatsInputError when a value is not a finite number
 * @example
 * quartiles([1, 2, 3, 4, 10]); // { ok: true, value: { q1: 2, median: 3, q3: 4 } }
 */
export function quartiles(values: ReadonlyArray<number>): Outcome<Quartiles> {
  requireFiniteValues('values', values);
  return quartilesOfCounts(countsOfValues(values));
}

/**
 * Modes: every value that occurs most often, in ascending order. Empty when no value occurs
 * more than once (a list of distinct values has no mode), several when tied. Values are
 * compared exactly. Common practice.
 * @throws StatsInputError when a value is not a finite number
 * @example
 * modes([1, 2, 2, 3, 3, 4]); // [2, 3]
 * modes([1, 2, 3]); // []
 */
export function modes(values: ReadonlyArray<number>): number[] {
  requireFiniteValues('values', values);
  return modesOfCounts(countsOfValues(values));
}

/**
 * Variance: Σ(v − v̄)²/(n − 1) for `basis: 'sample'` (default) or Σ(v − v̄)²/n for
 * `'population'`, from the corrected two-pass sums (Chan, Golub & LeVeque 1983, The American
 * Statistician 37, 242–247). Undefined (with a reason) for n < 2 (sample) or n = 0
 * (population).
 * @throws StatsInputError when a value is not finite or `basis` is unknown
 * @example
 * variance([2, 4, 4, 4, 5, 5, 7, 9], { basis: 'population' }); // { ok: true, value: 4 }
 */
export function variance(values: ReadonlyArray<number>, options: BasisOptions = {}): Outcome<number> {
  return summaryVariance(summarize(values), { basis: readVarianceBasis(options.basis) });
}

/**
 * Standard deviation, the square root of `variance` with the same `basis`. Common practice;
 * sums as in Chan, Golub & LeVeque (1983). Undefined (with a reason) as for `variance`.
 * @throws StatsInputError when a value is not finite or `basis` is unknown
 * @example
 * standardDeviation([2, 4, 4, 4, 5, 5, 7, 9], { basis: 'population' }); // { ok: true, value: 2 }
 */
export function standardDeviation(values: ReadonlyArray<number>, options: BasisOptions = {}): Outcome<number> {
  return standardDeviationOfSummary(summarize(values), readVarianceBasis(options.basis));
}

/**
 * Coefficient of variation: standard deviation / mean, with the standard deviation on the
 * chosen `basis`. Meaningful only for values on a ratio scale with a positive mean (such as
 * revenue), so it is undefined (with a reason) when the mean is not positive, and as for
 * `variance`. Common practice (e.g. Everitt, The Cambridge Dictionary of Statistics — from
 * memory).
 * @throws StatsInputError when a value is not finite or `basis` is unknown
 * @example
 * coefficientOfVariation([2, 4, 4, 4, 5, 5, 7, 9], { basis: 'population' }); // { ok: true, value: 0.4 }
 */
export function coefficientOfVariation(values: ReadonlyArray<number>, options: BasisOptions = {}): Outcome<number> {
  return coefficientOfVariationOfSummary(summarize(values), readVarianceBasis(options.basis));
}

/**
 * Skewness. `basis: 'population'` gives g₁ = m₃/m₂^{3/2} with the moments
 * m_k = Σ(v − v̄)^k/n; `basis: 'sample'` (default) gives the adjusted Fisher–Pearson
 * coefficient G₁ = g₁·√(n(n − 1))/(n − 2) (as SAS, SPSS, Excel's SKEW and SciPy's
 * `skew(bias=False)`). Source: Joanes, D. N. & Gill, C. A. (1998). Comparing measures of
 * sample skewness and kurtosis. The Statistician 47, 183–189. Undefined (with a reason) for
 * n < 3 (sample) or n < 2 (population), and when all values are equal.
 * @throws StatsInputError when a value is not finite or `basis` is unknown
 * @example
 * skewness([1, 2, 3, 10], { basis: 'population' }); // { ok: true, value: 1.01823… }
 */
export function skewness(values: ReadonlyArray<number>, options: BasisOptions = {}): Outcome<number> {
  const basis = readVarianceBasis(options.basis);
  // Each value as a count of one, in list order: the sums are then exactly the list's own.
  return skewnessOfCounts(values.map((value) => ({ value, count: 1 })), summarize(values), basis);
}
