/** Every descriptive statistic of a list given as (value, count) pairs, in one call. */
import {
  coefficientOfVariationOfSummary,
  mergedCounts,
  modesOfCounts,
  quartilesOfCounts,
  skewnessOfCounts,
  standardDeviationOfSummary,
  type Quartiles,
} from './counts.js';
import type { Outcome } from './result.js';
import { summarizeCounts } from './summary.js';
import type { Summary } from './summary.js';

/** Every descriptive statistic of `describeCounts`, each undefined (with a reason) as its list counterpart. */
export interface CountsDescription {
  readonly summary: Summary;
  readonly quartiles: Outcome<Quartiles>;
  readonly modes: number[];
  readonly standardDeviation: Outcome<number>;
  readonly coefficientOfVariation: Outcome<number>;
  readonly skewness: Outcome<number>;
}

/**
 * The descriptive statistics of a list given as (value, count) pairs, without expanding it:
 * equal, up to rounding in the last digits of the sums, to `summarize`, `quartiles`, `modes`,
 * `standardDeviation`, `coefficientOfVariation` and `skewness` (sample basis) of the list in
 * which each value appears `count` times. The quartiles (Hyndman & Fan type 7) are read off the
 * cumulative counts at the same order statistics; the sums run over the distinct values,
 * weighted, in the same corrected two-pass form (Chan, Golub & LeVeque 1983). A value may
 * appear in several entries (their counts add); entries with count 0 are ignored.
 * @throws StatsInputError when a value is not finite or a count is not a non-negative integer
 * @example
 * describeCounts([{ value: 0, count: 3 }, { value: 10, count: 1 }]);
 * // summary { n: 4, mean: 2.5, … }, quartiles { q1: 0, median: 0, q3: 2.5 }, modes [0], …
 */
export function describeCounts(counts: ReadonlyArray<{ readonly value: number; readonly count: number }>): CountsDescription {
  const entries = mergedCounts(counts);
  const summary = summarizeCounts(entries);
  return {
    summary,
    quartiles: quartilesOfCounts(entries),
    modes: modesOfCounts(entries),
    standardDeviation: standardDeviationOfSummary(summary, 'sample'),
    coefficientOfVariation: coefficientOfVariationOfSummary(summary, 'sample'),
    skewness: skewnessOfCounts(entries, summary, 'sample'),
  };
}
