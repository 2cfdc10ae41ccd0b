/**
 * A list given as (value, count) pairs, and the statistics of its order and shape read from
 * them: quantiles, quartiles, modes, standard deviation, coefficient of variation and
 * skewness. The list functions of descriptive.ts turn their list into counts first and
 * `describeCounts` reads counts as given, so each formula is written once, here.
 */
import { computed, notComputable } from './result.js';
import type { Outcome } from './result.js';
import { summaryVariance } from './summary.js';
import type { Summary, VarianceBasis } from './summary.js';
import { requireCount, requireFiniteValues } from './validate.js';

/** One distinct value and how many times it occurs. */
export interface CountedValue {
  value: number;
  count: number;
}

export const EMPTY_REASON = 'there are no values (n = 0)';

/** The distinct values of a list, ascending, each with how often it occurs. */
export function countsOfValues(values: ReadonlyArray<number>): CountedValue[] {
  const sorted = [...values].sort((left, right) => left - right);
  const counts: CountedValue[] = [];
  for (const value of sorted) {
    const last = counts[counts.length - 1];
    if (last !== undefined && last.value === value) last.count += 1;
    else counts.push({ value, count: 1 });
  }
  return counts;
}

/**
 * (value, count) pairs as given by a caller, checked and merged: a value given in several
 * entries has their counts added, entries with count 0 are dropped, and the values ascend.
 * @throws StatsInputError when a value is not finite or a count is not a non-negative integer
 */
export function mergedCounts(counts: ReadonlyArray<{ readonly value: number; readonly count: number }>): CountedValue[] {
  requireFiniteValues(
    'values',
    counts.map((entry) => entry.value),
  );
  for (const entry of counts) requireCount('count', entry.count);
  // Distinct values already ascending, none with count 0 (what callers that merged them pass): nothing to merge.
  let settled = true;
  for (let index = 0; index < counts.length && settled; index++) {
    const entry = counts[index] as CountedValue;
    settled = entry.count > 0 && (index === 0 || (counts[index - 1] as CountedValue).value < entry.value);
  }
  if (settled) return counts.map((entry) => ({ value: entry.value, count: entry.count }));
  const merged = new Map<number, number>();
  for (const entry of counts) if (entry.count > 0) merged.set(entry.value, (merged.get(entry.value) ?? 0) + entry.count);
  const entries = [...merged].map(([value, count]) => ({ value, count }));
  // Callers often pass values already ascending; the sort is then skipped (values are distinct here).
  for (let index = 1; index < entries.length; index++) {
    if ((entries[index - 1] as CountedValue).value > (entries[index] as CountedValue).value) return entries.sort((left, right) => left.value - right.value);
  }
  return entries;
}

/** How many values the counts stand for. */
export function totalCount(counts: readonly CountedValue[]): number {
  return counts.reduce((sum, entry) => sum + entry.count, 0);
}

/** The value at position `index` (0-based) of the sorted list the counts stand for. */
function valueAtPosition(counts: readonly CountedValue[], index: number): number {
  let seen = 0;
  for (const entry of counts) {
    seen += entry.count;
    if (index < seen) return entry.value;
  }
  return (counts[counts.length - 1] as CountedValue).value;
}

/**
 * Sample quantile of Hyndman & Fan type 7 of the sorted list x₍₁₎ ≤ … ≤ x₍ₙ₎ the ascending
 * counts stand for: with h = (n − 1)·p, Q(p) = x₍⌊h⌋+1₎ + (h − ⌊h⌋)·(x₍⌊h⌋+2₎ − x₍⌊h⌋+1₎).
 * `total` is n, at least 1.
 */
export function quantileOfCounts(counts: readonly CountedValue[], total: number, probability: number): number {
  const position = (total - 1) * probability;
  const lowerIndex = Math.floor(position);
  const fraction = position - lowerIndex;
  const lower = valueAtPosition(counts, lowerIndex);
  const upper = valueAtPosition(counts, Math.min(lowerIndex + 1, total - 1));
  return fraction === 0 ? lower : lower + fraction * (upper - lower);
}

/** First quartile, median and third quartile. */
export interface Quartiles {
  readonly q1: number;
  readonly median: number;
  readonly q3: number;
}

/** Type 7 quartiles of the ascending counts; undefined (with a reason) when there are none. */
export function quartilesOfCounts(counts: readonly CountedValue[]): Outcome<Quartiles> {
  const total = totalCount(counts);
  if (total === 0) return notComputable(`The quartiles are undefined: ${EMPTY_REASON}.`);
  return computed({
    q1: quantileOfCounts(counts, total, 0.25),
    median: quantileOfCounts(counts, total, 0.5),
    q3: quantileOfCounts(counts, total, 0.75),
  });
}

/** The most frequent values of the ascending counts, if any occurs more than once, else none. */
export function modesOfCounts(counts: readonly CountedValue[]): number[] {
  const highest = counts.reduce((most, entry) => Math.max(most, entry.count), 0);
  return highest > 1 ? counts.filter((entry) => entry.count === highest).map((entry) => entry.value) : [];
}

/** The square root of the summary's variance on `basis`; undefined (with a reason) as the variance. */
export function standardDeviationOfSummary(summary: Summary, basis: VarianceBasis): Outcome<number> {
  const result = summaryVariance(summary, { basis });
  return result.ok ? computed(Math.sqrt(result.value)) : result;
}

/** Standard deviation on `basis` / mean; undefined (with a reason) unless the mean is positive. */
export function coefficientOfVariationOfSummary(summary: Summary, basis: VarianceBasis): Outcome<number> {
  const deviation = standardDeviationOfSummary(summary, basis);
  if (!deviation.ok) return deviation;
  if (summary.mean <= 0) {
    return notComputable(`The coefficient of variation is undefined: it needs a positive mean, got ${summary.mean}.`);
  }
  return computed(deviation.value / summary.mean);
}

/**
 * Skewness of the list the counts stand for, whose summary is `summary`: g₁ = m₃/m₂^{3/2} with
 * m_k = Σ(v − v̄)^k/n for `'population'`, the adjusted Fisher–Pearson G₁ = g₁·√(n(n − 1))/(n − 2)
 * for `'sample'` (Joanes & Gill 1998).
 */
export function skewnessOfCounts(counts: readonly CountedValue[], summary: Summary, basis: VarianceBasis): Outcome<number> {
  const minimum = basis === 'sample' ? 3 : 2;
  if (summary.n < minimum) {
    return notComputable(`The ${basis} skewness is undefined: it needs at least ${minimum} values, got ${summary.n}.`);
  }
  if (summary.sumSquaredDeviations === 0) {
    return notComputable('The skewness is undefined: all values are equal, so there is no spread.');
  }
  let cubedDeviationSum = 0;
  for (const { value, count } of counts) cubedDeviationSum += count * (value - summary.mean) ** 3;
  const secondMoment = summary.sumSquaredDeviations / summary.n;
  const thirdMoment = cubedDeviationSum / summary.n;
  const populationSkewness = thirdMoment / secondMoment ** 1.5;
  if (basis === 'population') return computed(populationSkewness);
  return computed((populationSkewness * Math.sqrt(summary.n * (summary.n - 1))) / (summary.n - 2));
}
