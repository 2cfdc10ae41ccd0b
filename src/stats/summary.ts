/**
 * Sufficient statistics for everything mean-based: the count, the mean and the sum of
 * squared deviations from the mean (SSD). Keeping the mean and SSD, rather than Σv and Σv²,
 * avoids the catastrophic cancellation of the one-pass formula Σv² − (Σv)²/n on large values
 * with a small spread (NIST StRD NumAcc3/NumAcc4). Summaries of disjoint groups merge exactly
 * (Chan, Golub & LeVeque 1983), and "the rest of the population" is the total minus a
 * segment (`subtractSummary`).
 */
import { StatsInputError } from './errors.js';
import { computed, notComputable } from './result.js';
import type { Outcome } from './result.js';
import { requireCount, requireFiniteNumber, requireFiniteValues } from './validate.js';

/**
 * Count, mean and sum of squared deviations of a group of values. For `n = 0` the mean is
 * the placeholder 0 (the identity of `mergeSummaries`); it is not a mean, and every function
 * that reports from a summary treats `n = 0` as "undefined" with a reason.
 */
export interface Summary {
  readonly n: number;
  readonly mean: number;
  readonly sumSquaredDeviations: number;
}

/** Variance denominator: `n − 1` (sample, unbiased) or `n` (population). */
export type VarianceBasis = 'sample' | 'population';

/**
 * Checks a summary passed in from outside (a report, a SQL row): n a non-negative integer,
 * finite mean, finite non-negative SSD. Common practice.
 * @throws StatsInputError naming the field (e.g. `a.n`) that is wrong
 * @example
 * validateSummary('segment', { n: 3, mean: 2, sumSquaredDeviations: 2 }); // passes
 * validateSummary('segment', { n: -1, mean: 2, sumSquaredDeviations: 2 }); // throws: segment.n must be …
 */
export function validateSummary(name: string, summary: Summary): void {
  if (summary === null || typeof summary !== 'object') {
    throw new StatsInputError(name, `${name} must be a summary object { n, mean, sumSquaredDeviations }`);
  }
  requireCount(`${name}.n`, summary.n);
  requireFiniteNumber(`${name}.mean`, summary.mean);
  requireFiniteNumber(`${name}.sumSquaredDeviations`, summary.sumSquaredDeviations);
  if (summary.sumSquaredDeviations < 0) {
    throw new StatsInputError(
      `${name}.sumSquaredDeviations`,
      `${name}.sumSquaredDeviations must not be negative, got ${summary.sumSquaredDeviations}`,
    );
  }
}

/**
 * Reads the `basis` option of the variance-type statistics (default `'sample'`).
 * @throws StatsInputError for anything other than `'sample'`, `'population'` or undefined
 * @example
 * readVarianceBasis(undefined); // 'sample'
 */
export function readVarianceBasis(basis: VarianceBasis | undefined): VarianceBasis {
  if (basis === undefined) return 'sample';
  if (basis !== 'sample' && basis !== 'population') {
    throw new StatsInputError('basis', `basis must be 'sample' or 'population', got ${JSON.stringify(basis)}`);
  }
  return basis;
}

/**
 * The summary of no values: `{ n: 0, mean: 0, sumSquaredDeviations: 0 }`, the identity of
 * `mergeSummaries`. Common practice, no published source.
 * @example
 * emptySummary(); // { n: 0, mean: 0, sumSquaredDeviations: 0 }
 */
export function emptySummary(): Summary {
  return { n: 0, mean: 0, sumSquaredDeviations: 0 };
}

/**
 * Summary of a list of values by the corrected two-pass algorithm: a first pass for the
 * mean, a second for the deviations, with the mean refined by the mean of the deviations and
 * the SSD corrected by (Σ(v − m))²/n, which removes the rounding error left in m. Source:
 * Chan, Golub & LeVeque (1983), "Algorithms for computing the sample variance", The American
 * Statistician 37, 242–247 (corrected two-pass algorithm). Reaches the NIST StRD certified
 * values (see test/stats/summary.test.ts).
 * @throws StatsInputError when a value is not a finite number
 * @example
 * summarize([2, 4, 4, 4, 5, 5, 7, 9]); // { n: 8, mean: 5, sumSquaredDeviations: 32 }
 */
export function summarize(values: ReadonlyArray<number>): Summary {
  requireFiniteValues('values', values);
  return summarizeCounts(values.map((value) => ({ value, count: 1 })));
}

/**
 * Summary of a list given as (value, count) pairs, by the same corrected two-pass algorithm
 * with each term weighted by its count (Chan, Golub & LeVeque 1983). A count of 1 weighs
 * nothing (v·1 = v exactly), so a list whose counts are all 1 has exactly `summarize`'s
 * summary. Counts are trusted to be non-negative integers and values finite.
 */
export function summarizeCounts(counts: ReadonlyArray<{ readonly value: number; readonly count: number }>): Summary {
  let n = 0;
  let total = 0;
  for (const { value, count } of counts) {
    n += count;
    total += value * count;
  }
  if (n === 0) return emptySummary();
  const firstPassMean = total / n;
  let deviationSum = 0;
  let squaredDeviationSum = 0;
  for (const { value, count } of counts) {
    const deviation = value - firstPassMean;
    deviationSum += deviation * count;
    squaredDeviationSum += deviation * deviation * count;
  }
  return { n, mean: firstPassMean + deviationSum / n, sumSquaredDeviations: Math.max(0, squaredDeviationSum - (deviationSum * deviationSum) / n) };
}

/**
 * Summary of the union of two disjoint groups, by the pairwise update
 * n = nA + nB, δ = mean_B − mean_A, mean = mean_A + δ·nB/n, SSD = SSD_A + SSD_B + δ²·nA·nB/n.
 * Source: Chan, Golub & LeVeque (1983), The American Statistician 37, 242–247, eq. 2.1
 * (the pairwise algorithm).
 * @throws StatsInputError when either argument is not a valid summary
 * @example
 * mergeSummaries(summarize([1, 2]), summarize([3, 4, 5]));
 * // { n: 5, mean: 3, sumSquaredDeviations: 10 }
 */
export function mergeSummaries(a: Summary, b: Summary): Summary {
  validateSummary('a', a);
  validateSummary('b', b);
  if (a.n === 0) return { n: b.n, mean: b.mean, sumSquaredDeviations: b.sumSquaredDeviations };
  if (b.n === 0) return { n: a.n, mean: a.mean, sumSquaredDeviations: a.sumSquaredDeviations };
  const n = a.n + b.n;
  const meanDifference = b.mean - a.mean;
  return {
    n,
    mean: a.mean + (meanDifference * b.n) / n,
    sumSquaredDeviations:
      a.sumSquaredDeviations + b.sumSquaredDeviations + (meanDifference * meanDifference * a.n * b.n) / n,
  };
}

// A negative SSD smaller in size than this fraction of the terms that produced it is rounding
// error (each term carries a relative error of a few units of 2⁻⁵³); anything larger means
// the part was not contained in the total.
const NEGATIVE_SSD_TOLERANCE = 1e-9;

/**
 * "The rest": the summary of the values in `total` that are not in `part`, the exact inverse
 * of `mergeSummaries` (so `subtractSummary(mergeSummaries(a, b), b)` gives `a` up to
 * rounding). With r = total − part:
 * n_r = n_t − n_p, mean_r = mean_t + (mean_t − mean_p)·n_p/n_r,
 * SSD_r = SSD_t − SSD_p − (mean_r − mean_p)²·n_p·n_r/n_t.
 * The subtraction can leave a tiny negative SSD when the rest has (almost) no spread, because
 * each term carries rounding error; a variance cannot be negative, so such a result is
 * clamped to 0. A clearly negative SSD (beyond 1e-9 of the terms) means `part` is not a
 * subset of `total` and throws. Source: rearrangement of the pairwise update of Chan, Golub &
 * LeVeque (1983), The American Statistician 37, 242–247.
 * @throws StatsInputError when `part.n > total.n`, when a summary is invalid, or when the
 * figures are inconsistent (part not contained in total)
 * @example
 * subtractSummary(summarize([1, 2, 3, 4, 5]), summarize([3, 4, 5]));
 * // { n: 2, mean: 1.5, sumSquaredDeviations: 0.5 }
 */
export function subtractSummary(total: Summary, part: Summary): Summary {
  validateSummary('total', total);
  validateSummary('part', part);
  if (part.n > total.n) {
    throw new StatsInputError('part', `part.n (${part.n}) must not exceed total.n (${total.n})`);
  }
  if (part.n === 0) return { n: total.n, mean: total.mean, sumSquaredDeviations: total.sumSquaredDeviations };
  const n = total.n - part.n;
  if (n === 0) return emptySummary();
  const mean = total.mean + ((total.mean - part.mean) * part.n) / n;
  const meanDifference = mean - part.mean;
  const betweenGroups = (meanDifference * meanDifference * part.n * n) / total.n;
  const sumSquaredDeviations = total.sumSquaredDeviations - part.sumSquaredDeviations - betweenGroups;
  const scale = total.sumSquaredDeviations + part.sumSquaredDeviations + betweenGroups;
  if (sumSquaredDeviations < -NEGATIVE_SSD_TOLERANCE * scale) {
    throw new StatsInputError(
      'part',
      'part is not contained in total: the rest would have a negative sum of squared deviations',
    );
  }
  return { n, mean, sumSquaredDeviations: Math.max(0, sumSquaredDeviations) };
}

/**
 * Converts shifted sums, as a database returns them, to a summary: for a shift c chosen near
 * the data (e.g. a typical value), S₁ = Σ(v − c) and S₂ = Σ(v − c)² give
 * mean = c + S₁/n and SSD = S₂ − S₁²/n. Shifting first keeps S₂ − S₁²/n from cancelling
 * catastrophically when the values are large and close together. A tiny negative SSD from
 * rounding is clamped to 0 (a variance cannot be negative); one beyond 1e-9·S₂ means the sums
 * are inconsistent and throws. Source: Chan, Golub & LeVeque (1983), The American
 * Statistician 37, 242–247 (shifted data algorithm).
 * @throws StatsInputError for a negative or non-integer `n`, non-finite sums, a negative
 * `sumOfSquaredShifted`, or sums that no set of values could have
 * @example
 * summaryFromShiftedSums(3, 10, 3, 5); // values 10, 11, 12 → { n: 3, mean: 11, sumSquaredDeviations: 2 }
 */
export function summaryFromShiftedSums(
  n: number,
  shift: number,
  sumOfShifted: number,
  sumOfSquaredShifted: number,
): Summary {
  requireCount('n', n);
  requireFiniteNumber('shift', shift);
  requireFiniteNumber('sumOfShifted', sumOfShifted);
  requireFiniteNumber('sumOfSquaredShifted', sumOfSquaredShifted);
  if (sumOfSquaredShifted < 0) {
    throw new StatsInputError('sumOfSquaredShifted', `sumOfSquaredShifted must not be negative, got ${sumOfSquaredShifted}`);
  }
  if (n === 0) {
    if (sumOfShifted !== 0 || sumOfSquaredShifted !== 0) {
      throw new StatsInputError('n', 'n is 0 but the sums are not 0');
    }
    return emptySummary();
  }
  const sumSquaredDeviations = sumOfSquaredShifted - (sumOfShifted * sumOfShifted) / n;
  if (sumSquaredDeviations < -NEGATIVE_SSD_TOLERANCE * sumOfSquaredShifted) {
    throw new StatsInputError(
      'sumOfSquaredShifted',
      'sumOfSquaredShifted is smaller than sumOfShifted²/n, which no set of values can produce',
    );
  }
  return { n, mean: shift + sumOfShifted / n, sumSquaredDeviations: Math.max(0, sumSquaredDeviations) };
}

/**
 * The mean held by a summary, or the reason it is undefined (no values). Common practice.
 * @throws StatsInputError when `summary` is not a valid summary
 * @example
 * summaryMean(summarize([1, 2, 6])); // { ok: true, value: 3 }
 * summaryMean(emptySummary()); // { ok: false, value: null, reason: 'The mean is undefined: there are no values (n = 0).' }
 */
export function summaryMean(summary: Summary): Outcome<number> {
  validateSummary('summary', summary);
  if (summary.n === 0) return notComputable('The mean is undefined: there are no values (n = 0).');
  return computed(summary.mean);
}

/**
 * Variance from a summary: SSD/(n − 1) for `basis: 'sample'` (the default), SSD/n for
 * `basis: 'population'`. Undefined for n < 2 (sample) or n = 0 (population). Common practice.
 * @throws StatsInputError when `summary` is not a valid summary
 * @example
 * summaryVariance(summarize([2, 4, 4, 4, 5, 5, 7, 9]), { basis: 'population' }); // { ok: true, value: 4 }
 */
export function summaryVariance(summary: Summary, options: { basis?: VarianceBasis } = {}): Outcome<number> {
  validateSummary('summary', summary);
  const basis = readVarianceBasis(options.basis);
  if (basis === 'sample') {
    if (summary.n < 2) {
      return notComputable(`The sample variance is undefined: it needs at least 2 values, got ${summary.n}.`);
    }
    return computed(summary.sumSquaredDeviations / (summary.n - 1));
  }
  if (summary.n === 0) return notComputable('The population variance is undefined: there are no values (n = 0).');
  return computed(summary.sumSquaredDeviations / summary.n);
}
