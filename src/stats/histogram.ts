/** Equal-width histograms of a list, or of a list given as (value, count) pairs. */
import { EMPTY_REASON, countsOfValues, mergedCounts, quantileOfCounts, totalCount, type CountedValue } from './counts.js';
import { StatsInputError } from './errors.js';
import { computed, notComputable } from './result.js';
import type { Outcome } from './result.js';
import { requireFiniteValues } from './validate.js';

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
  return binCounts(countsOfValues(values), values.length, options);
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

/** The binning shared by `histogram` and `histogramOfCounts`: distinct values in ascending order, each with its count. */
function binCounts(entries: readonly CountedValue[], total: number, options: HistogramOptions): Outcome<Histogram> {
  const { rule, binCount, maxBins = DEFAULT_MAX_BINS } = options;
  const minimum = (entries[0] as CountedValue).value;
  const maximum = (entries[entries.length - 1] as CountedValue).value;
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
    const interquartileRange = quantileOfCounts(entries, total, 0.75) - quantileOfCounts(entries, total, 0.25);
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
  const entries = mergedCounts(counts);
  checkHistogramOptions(options);
  const total = totalCount(entries);
  if (total === 0) return notComputable(`The histogram is undefined: ${EMPTY_REASON}.`);
  return binCounts(entries, total, options);
}
