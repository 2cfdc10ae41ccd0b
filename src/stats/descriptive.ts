/**
 * Descriptive statistics of one list of values: mean, median, modes, variance, standard
 * deviation, coefficient of variation, skewness, quantiles and quartiles (Hyndman–Fan type 7),
 * a frequency table in Pareto order, and an equal-width histogram.
 */
import { StatsInputError } from './errors.js';
import { computed, notComputable } from './result.js';
import type { Outcome } from './result.js';
import { emptySummary, readVarianceBasis, summarize, summaryVariance } from './summary.js';
import type { Summary, VarianceBasis } from './summary.js';
import { requireClosedUnitInterval, requireCount, requireFiniteValues } from './validate.js';

/** Options of the dispersion and shape statistics. */
export interface BasisOptions {
  /** `'sample'` (default) or `'population'`; see each function for what it changes. */
  readonly basis?: VarianceBasis;
}

const EMPTY_REASON = 'there are no values (n = 0)';

function sortedCopy(values: ReadonlyArray<number>): number[] {
  return [...values].sort((left, right) => left - right);
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
  return computed(quantileOfSorted(sortedCopy(values), probability));
}

function quantileOfSorted(sorted: ReadonlyArray<number>, probability: number): number {
  const position = (sorted.length - 1) * probability;
  const lowerIndex = Math.floor(position);
  const fraction = position - lowerIndex;
  const lower = sorted[lowerIndex] as number;
  const upper = sorted[Math.min(lowerIndex + 1, sorted.length - 1)] as number;
  return fraction === 0 ? lower : lower + fraction * (upper - lower);
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
  return computed(quantileOfSorted(sortedCopy(values), 0.5));
}

/** First quartile, median and third quartile. */
export interface Quartiles {
  readonly q1: number;
  readonly median: number;
  readonly q3: number;
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
  if (values.length === 0) return notComputable(`The quartiles are undefined: ${EMPTY_REASON}.`);
  const sorted = sortedCopy(values);
  return computed({
    q1: quantileOfSorted(sorted, 0.25),
    median: quantileOfSorted(sorted, 0.5),
    q3: quantileOfSorted(sorted, 0.75),
  });
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
  const sorted = sortedCopy(values);
  let highestCount = 1;
  let result: number[] = [];
  let runStart = 0;
  for (let index = 1; index <= sorted.length; index += 1) {
    if (index < sorted.length && sorted[index] === sorted[runStart]) continue;
    const runLength = index - runStart;
    if (runLength > highestCount) {
      highestCount = runLength;
      result = [sorted[runStart] as number];
    } else if (runLength === highestCount && runLength > 1) {
      result.push(sorted[runStart] as number);
    }
    runStart = index;
  }
  return result;
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
  const result = variance(values, options);
  return result.ok ? computed(Math.sqrt(result.value)) : result;
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
  const deviation = standardDeviation(values, options);
  if (!deviation.ok) return deviation;
  const summary = summarize(values);
  if (summary.mean <= 0) {
    return notComputable(
      `The coefficient of variation is undefined: it needs a positive mean, got ${summary.mean}.`,
    );
  }
  return computed(deviation.value / summary.mean);
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
  const summary = summarize(values);
  const minimum = basis === 'sample' ? 3 : 2;
  if (summary.n < minimum) {
    return notComputable(`The ${basis} skewness is undefined: it needs at least ${minimum} values, got ${summary.n}.`);
  }
  if (summary.sumSquaredDeviations === 0) {
    return notComputable('The skewness is undefined: all values are equal, so there is no spread.');
  }
  let cubedDeviationSum = 0;
  for (const value of values) cubedDeviationSum += (value - summary.mean) ** 3;
  const secondMoment = summary.sumSquaredDeviations / summary.n;
  const thirdMoment = cubedDeviationSum / summary.n;
  const populationSkewness = thirdMoment / secondMoment ** 1.5;
  if (basis === 'population') return computed(populationSkewness);
  return computed((populationSkewness * Math.sqrt(summary.n * (summary.n - 1))) / (summary.n - 2));
}

/** One category's count and shares in a frequency table. */
export interface FrequencyRow {
  readonly label: string;
  readonly count: number;
  /** count / total */
  readonly share: number;
  /** share of this row and all rows above it; 1 on the last row */
  readonly cumulativeShare: number;
}

/**
 * Frequency table in Pareto order: rows sorted by descending count, ties by label (ascending
 * by UTF-16 code units, so the order does not depend on the locale), each with its share of
 * the total and the cumulative share down to it. Cumulative shares are running counts over
 * the total, so the last one is exactly 1. Source: common practice (the ordering of a Pareto
 * chart). Undefined (with a reason) when the total is 0.
 * @throws StatsInputError for a negative or non-integer count or a repeated label
 * @example
 * frequencyTable([{ label: 'north', count: 2 }, { label: 'east', count: 5 }, { label: 'west', count: 2 }]);
 * // rows: east 5 (0.5556, 0.5556), north 2 (0.2222, 0.7778), west 2 (0.2222, 1)
 */
export function frequencyTable(
  counts: ReadonlyArray<{ readonly label: string; readonly count: number }>,
): Outcome<FrequencyRow[]> {
  if (!Array.isArray(counts)) throw new StatsInputError('counts', 'counts must be an array of { label, count }');
  const seen = new Set<string>();
  let total = 0;
  counts.forEach((entry, index) => {
    if (entry === null || typeof entry !== 'object' || typeof entry.label !== 'string') {
      throw new StatsInputError('counts', `counts[${index}] must be an object { label: string, count: number }`);
    }
    requireCount(`counts[${index}].count`, entry.count);
    if (seen.has(entry.label)) {
      throw new StatsInputError('counts', `counts has the label ${JSON.stringify(entry.label)} more than once`);
    }
    seen.add(entry.label);
    total += entry.count;
  });
  if (total === 0) return notComputable('The shares are undefined: the counts add up to 0.');
  const ordered = [...counts].sort((left, right) => {
    if (left.count !== right.count) return right.count - left.count;
    if (left.label === right.label) return 0;
    return left.label < right.label ? -1 : 1;
  });
  let runningCount = 0;
  return computed(
    ordered.map((entry) => {
      runningCount += entry.count;
      return {
        label: entry.label,
        count: entry.count,
        share: entry.count / total,
        cumulativeShare: runningCount / total,
      };
    }),
  );
}

/** Bin-count rule of a histogram. */
export type BinRule = 'sturges' | 'freedman-diaconis';

/** Options of `histogram`: either a rule or a fixed number of bins. */
export interface HistogramOptions {
  /** default `'sturges'` */
  readonly rule?: BinRule;
  /** a fixed number of bins; cannot be combined with `rule` */
  readonly binCount?: number;
  /** upper limit on the number of bins a rule may produce, default 1000 */
  readonly maxBins?: number;
}

/** One bin: values v with low ≤ v < high (the last bin also holds v = high). */
export interface HistogramBin {
  readonly low: number;
  readonly high: number;
  readonly count: number;
}

export interface Histogram {
  /** how the number of bins was chosen */
  readonly rule: BinRule | 'fixed';
  readonly binWidth: number;
  readonly bins: HistogramBin[];
  /** why the requested rule was not applied as asked, or null */
  readonly note: string | null;
}

const DEFAULT_MAX_BINS = 1000;

/**
 * Equal-width histogram from the minimum to the maximum. Edge rule: every bin is
 * left-closed, [low, high), except the last, which is closed, [low, high], so the maximum is
 * counted (the convention of NumPy's `histogram`). Bin edges are min + i·width with the last
 * edge set to the maximum exactly, and each value is placed by comparing it with those edges,
 * so counts always agree with the stated bounds. Bin-count rules: Sturges (default)
 * k = ⌈log₂ n⌉ + 1; Freedman–Diaconis width h = 2·IQR·n^(−1/3), k = ⌈(max − min)/h⌉ (IQR by
 * Hyndman–Fan type 7), falling back to Sturges when the IQR is 0; or a fixed `binCount`.
 * A rule's k is capped at `maxBins` (default 1000). When all values are equal there is one
 * bin [v, v]. Sources: Sturges, H. A. (1926), JASA 21, 65–66; Freedman, D. & Diaconis, P.
 * (1981), Z. Wahrscheinlichkeitstheorie 57, 453–476. Undefined (with a reason) for an empty
 * list.
 * @throws StatsInputError when a value is not finite, `binCount`/`maxBins` is not a positive
 * integer, the rule is unknown, or both `rule` and `binCount` are given
 * @example
 * histogram([1, 2, 2, 3, 4]);
 * // Sturges: k = 4, width 0.75; bins [1, 1.75) 1, [1.75, 2.5) 2, [2.5, 3.25) 1, [3.25, 4] 1
 */
export function histogram(values: ReadonlyArray<number>, options: HistogramOptions = {}): Outcome<Histogram> {
  requireFiniteValues('values', values);
  checkHistogramOptions(options);
  if (values.length === 0) return notComputable(`The histogram is undefined: ${EMPTY_REASON}.`);
  const sorted = sortedCopy(values);
  const entries: WeightedEntry[] = [];
  for (const value of sorted) {
    const last = entries[entries.length - 1];
    if (last !== undefined && last.value === value) last.count += 1;
    else entries.push({ value, count: 1 });
  }
  return binEntries(entries, sorted.length, options);
}

interface WeightedEntry {
  value: number;
  count: number;
}

function checkHistogramOptions(options: HistogramOptions): void {
  const { rule, binCount, maxBins = DEFAULT_MAX_BINS } = options;
  if (rule !== undefined && binCount !== undefined) {
    throw new StatsInputError('options', 'give either rule or binCount, not both');
  }
  if (rule !== undefined && rule !== 'sturges' && rule !== 'freedman-diaconis') {
    throw new StatsInputError('rule', `rule must be 'sturges' or 'freedman-diaconis', got ${JSON.stringify(rule)}`);
  }
  if (binCount !== undefined && (!Number.isSafeInteger(binCount) || binCount < 1)) {
    throw new StatsInputError('binCount', `binCount must be a positive integer, got ${String(binCount)}`);
  }
  if (!Number.isSafeInteger(maxBins) || maxBins < 1) {
    throw new StatsInputError('maxBins', `maxBins must be a positive integer, got ${String(maxBins)}`);
  }
}

/** The value at position `index` (0-based) of the sorted list the entries stand for. */
function valueAtPosition(entries: readonly WeightedEntry[], index: number): number {
  let seen = 0;
  for (const entry of entries) {
    seen += entry.count;
    if (index < seen) return entry.value;
  }
  return (entries[entries.length - 1] as WeightedEntry).value;
}

/** Type 7 quantile of the sorted list the entries stand for (as `quantileOfSorted`). */
function quantileOfEntries(entries: readonly WeightedEntry[], total: number, probability: number): number {
  const position = (total - 1) * probability;
  const lowerIndex = Math.floor(position);
  const fraction = position - lowerIndex;
  const lower = valueAtPosition(entries, lowerIndex);
  const upper = valueAtPosition(entries, Math.min(lowerIndex + 1, total - 1));
  return fraction === 0 ? lower : lower + fraction * (upper - lower);
}

/** The binning shared by `histogram` and `histogramOfCounts`: distinct values in ascending order, each with its count. */
function binEntries(entries: readonly WeightedEntry[], total: number, options: HistogramOptions): Outcome<Histogram> {
  const { rule, binCount, maxBins = DEFAULT_MAX_BINS } = options;
  const minimum = (entries[0] as WeightedEntry).value;
  const maximum = (entries[entries.length - 1] as WeightedEntry).value;
  const range = maximum - minimum;
  const requestedRule: BinRule | 'fixed' = binCount !== undefined ? 'fixed' : (rule ?? 'sturges');
  const sturgesBins = Math.ceil(Math.log2(total)) + 1;
  if (range === 0) {
    return computed({
      rule: requestedRule,
      binWidth: 0,
      bins: [{ low: minimum, high: maximum, count: total }],
      note: 'All values are equal, so the histogram has a single bin.',
    });
  }

  let usedRule: BinRule | 'fixed' = requestedRule;
  let note: string | null = null;
  let bins: number;
  if (requestedRule === 'fixed') {
    bins = binCount as number;
  } else if (requestedRule === 'freedman-diaconis') {
    const interquartileRange = quantileOfEntries(entries, total, 0.75) - quantileOfEntries(entries, total, 0.25);
    if (interquartileRange === 0) {
      usedRule = 'sturges';
      bins = sturgesBins;
      note = 'The interquartile range is 0, so the Freedman–Diaconis rule gives no width; Sturges\' rule was used.';
    } else {
      bins = Math.max(1, Math.ceil(range / (2 * interquartileRange * total ** (-1 / 3))));
    }
  } else {
    bins = sturgesBins;
  }
  if (usedRule !== 'fixed' && bins > maxBins) {
    note = `The ${usedRule} rule asked for ${bins} bins; capped at ${maxBins}.`;
    bins = maxBins;
  }

  const binWidth = range / bins;
  const edges: number[] = [];
  for (let index = 0; index < bins; index += 1) edges.push(minimum + index * binWidth);
  edges.push(maximum);
  const counts = new Array<number>(bins).fill(0);
  for (const { value, count } of entries) {
    // Largest i with edges[i] <= value, at most bins − 1 (the last bin is closed).
    let low = 0;
    let high = bins - 1;
    while (low < high) {
      const middle = Math.ceil((low + high) / 2);
      if ((edges[middle] as number) <= value) low = middle;
      else high = middle - 1;
    }
    counts[low] = (counts[low] as number) + count;
  }
  return computed({
    rule: usedRule,
    binWidth,
    bins: counts.map((count, index) => ({ low: edges[index] as number, high: edges[index + 1] as number, count })),
    note,
  });
}

/**
 * The histogram of grouped counts (value, count): exactly `histogram` of the list in which
 * each value appears `count` times (same rules, edges, edge rule [low, high) with the last bin
 * closed, and the same notes), without building that list, so a distribution read from SQL
 * as counts of millions of units costs only as much as its distinct values. A value may
 * appear in several entries (their counts add); entries with count 0 are ignored.
 * Sources: as `histogram` (Sturges 1926; Freedman & Diaconis 1981).
 * @throws StatsInputError when a value is not finite, a count is not a non-negative integer,
 * or the options are invalid (as `histogram`)
 * @example
 * histogramOfCounts([{ value: 1, count: 1 }, { value: 2, count: 2 }, { value: 3, count: 1 }, { value: 4, count: 1 }]);
 * // the same as histogram([1, 2, 2, 3, 4]): bins [1, 1.75) 1, [1.75, 2.5) 2, [2.5, 3.25) 1, [3.25, 4] 1
 */
export function histogramOfCounts(counts: ReadonlyArray<{ readonly value: number; readonly count: number }>, options: HistogramOptions = {}): Outcome<Histogram> {
  requireFiniteValues(
    'values',
    counts.map((entry) => entry.value),
  );
  for (const entry of counts) requireCount('count', entry.count);
  checkHistogramOptions(options);
  const merged = new Map<number, number>();
  for (const entry of counts) if (entry.count > 0) merged.set(entry.value, (merged.get(entry.value) ?? 0) + entry.count);
  const total = [...merged.values()].reduce((sum, count) => sum + count, 0);
  if (total === 0) return notComputable(`The histogram is undefined: ${EMPTY_REASON}.`);
  const entries = [...merged].map(([value, count]) => ({ value, count })).sort((left, right) => left.value - right.value);
  return binEntries(entries, total, options);
}

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
  requireFiniteValues(
    'values',
    counts.map((entry) => entry.value),
  );
  for (const entry of counts) requireCount('count', entry.count);
  const merged = new Map<number, number>();
  for (const entry of counts) if (entry.count > 0) merged.set(entry.value, (merged.get(entry.value) ?? 0) + entry.count);
  const entries = [...merged].map(([value, count]) => ({ value, count })).sort((left, right) => left.value - right.value);
  const summary = summarizeEntries(entries);
  const empty = (what: string) => notComputable(`The ${what} ${what === 'quartiles' ? 'are' : 'is'} undefined: ${EMPTY_REASON}.`);
  const quartileValues: Outcome<Quartiles> =
    summary.n === 0
      ? empty('quartiles')
      : computed({
          q1: quantileOfEntries(entries, summary.n, 0.25),
          median: quantileOfEntries(entries, summary.n, 0.5),
          q3: quantileOfEntries(entries, summary.n, 0.75),
        });
  const variance = summaryVariance(summary);
  const deviation: Outcome<number> = variance.ok ? computed(Math.sqrt(variance.value)) : variance;
  let coefficient: Outcome<number> = deviation;
  if (deviation.ok) {
    coefficient =
      summary.mean <= 0
        ? notComputable(`The coefficient of variation is undefined: it needs a positive mean, got ${summary.mean}.`)
        : computed(deviation.value / summary.mean);
  }
  return { summary, quartiles: quartileValues, modes: modesOfEntries(entries), standardDeviation: deviation, coefficientOfVariation: coefficient, skewness: skewnessOfEntries(entries, summary) };
}

function summarizeEntries(entries: readonly WeightedEntry[]): Summary {
  let n = 0;
  let total = 0;
  for (const { value, count } of entries) {
    n += count;
    total += value * count;
  }
  if (n === 0) return emptySummary();
  const firstPassMean = total / n;
  let deviationSum = 0;
  let squaredDeviationSum = 0;
  for (const { value, count } of entries) {
    const deviation = value - firstPassMean;
    deviationSum += deviation * count;
    squaredDeviationSum += deviation * deviation * count;
  }
  return { n, mean: firstPassMean + deviationSum / n, sumSquaredDeviations: Math.max(0, squaredDeviationSum - (deviationSum * deviationSum) / n) };
}

/** As `modes`: the most frequent values if any occurs more than once, else none. */
function modesOfEntries(entries: readonly WeightedEntry[]): number[] {
  const highest = entries.reduce((most, entry) => Math.max(most, entry.count), 0);
  return highest > 1 ? entries.filter((entry) => entry.count === highest).map((entry) => entry.value) : [];
}

/** As `skewness` on the sample basis (adjusted Fisher–Pearson G₁; Joanes & Gill 1998). */
function skewnessOfEntries(entries: readonly WeightedEntry[], summary: Summary): Outcome<number> {
  if (summary.n < 3) return notComputable(`The sample skewness is undefined: it needs at least 3 values, got ${summary.n}.`);
  if (summary.sumSquaredDeviations === 0) return notComputable('The skewness is undefined: all values are equal, so there is no spread.');
  let cubedDeviationSum = 0;
  for (const { value, count } of entries) cubedDeviationSum += count * (value - summary.mean) ** 3;
  const populationSkewness = cubedDeviationSum / summary.n / (summary.sumSquaredDeviations / summary.n) ** 1.5;
  return computed((populationSkewness * Math.sqrt(summary.n * (summary.n - 1))) / (summary.n - 2));
}
