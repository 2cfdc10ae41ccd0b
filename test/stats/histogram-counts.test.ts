import { describe, expect, test } from 'vitest';
import { histogram, histogramOfCounts, StatsInputError } from '../../src/stats/index.js';
import { SKEWED, expand } from './weighted-lists.js';

describe('histogramOfCounts', () => {
  test('gives the bins of the worked example of histogram for the same values as counts', () => {
    // histogram([1, 2, 2, 3, 4]): Sturges k = ⌈log₂ 5⌉ + 1 = 4, width 0.75 (worked by hand).
    const result = histogramOfCounts([
      { value: 1, count: 1 },
      { value: 2, count: 2 },
      { value: 3, count: 1 },
      { value: 4, count: 1 },
    ]);
    expect(result).toEqual({
      ok: true,
      value: {
        rule: 'sturges',
        binWidth: 0.75,
        bins: [
          { low: 1, high: 1.75, count: 1 },
          { low: 1.75, high: 2.5, count: 2 },
          { low: 2.5, high: 3.25, count: 1 },
          { low: 3.25, high: 4, count: 1 },
        ],
        note: null,
      },
    });
  });

  test.each([
    ['Sturges', {}],
    ['Freedman–Diaconis', { rule: 'freedman-diaconis' as const }],
    ['a fixed number of bins', { binCount: 7 }],
    ['a capped rule', { rule: 'freedman-diaconis' as const, maxBins: 3 }],
  ])('agrees with histogram of the expanded list under %s', (_name, options) => {
    expect(histogramOfCounts(SKEWED, options)).toEqual(histogram(expand(SKEWED), options));
  });

  test('agrees with histogram when the interquartile range is 0 and Freedman–Diaconis falls back to Sturges', () => {
    const counts = [
      { value: 5, count: 30 },
      { value: 1, count: 1 },
      { value: 9, count: 1 },
    ];
    const result = histogramOfCounts(counts, { rule: 'freedman-diaconis' });
    expect(result.ok && result.value.rule).toBe('sturges');
    expect(result).toEqual(histogram(expand(counts), { rule: 'freedman-diaconis' }));
  });

  test('adds the counts of a value given twice, in any order, and ignores zero counts', () => {
    const shuffled = [
      { value: 20, count: 2 },
      { value: 0, count: 25 },
      { value: 7, count: 0 },
      { value: 20, count: 3 },
      { value: 0, count: 15 },
      { value: 240.1, count: 1 },
      { value: 12.5, count: 7 },
      { value: 55, count: 2 },
      { value: 19.99, count: 3 },
    ];
    expect(histogramOfCounts(shuffled)).toEqual(histogramOfCounts(SKEWED));
  });

  test('puts all of many equal values in a single closed bin', () => {
    expect(histogramOfCounts([{ value: 3, count: 2_000_000 }])).toEqual({
      ok: true,
      value: { rule: 'sturges', binWidth: 0, bins: [{ low: 3, high: 3, count: 2_000_000 }], note: 'All values are equal, so the histogram has a single bin.' },
    });
  });

  test('counts a million and more units without a list of them, in Sturges bins', () => {
    const result = histogramOfCounts([
      { value: 0, count: 1_500_000 },
      { value: 10, count: 500_000 },
    ]);
    // n = 2,000,000: k = ⌈log₂ 2,000,000⌉ + 1 = 21 + 1 = 22 (Sturges 1926).
    expect(result.ok && result.value.bins.length).toBe(22);
    expect(result.ok && result.value.bins[0]?.count).toBe(1_500_000);
    expect(result.ok && result.value.bins[21]?.count).toBe(500_000);
  });

  test('is undefined, with a reason, when there are no units', () => {
    expect(histogramOfCounts([{ value: 1, count: 0 }])).toMatchObject({ ok: false, reason: 'The histogram is undefined: there are no values (n = 0).' });
  });

  test('refuses a negative or fractional count, a value that is not finite, and conflicting options', () => {
    expect(() => histogramOfCounts([{ value: 1, count: -1 }])).toThrow(StatsInputError);
    expect(() => histogramOfCounts([{ value: 1, count: 1.5 }])).toThrow(StatsInputError);
    expect(() => histogramOfCounts([{ value: Number.NaN, count: 1 }])).toThrow(StatsInputError);
    expect(() => histogramOfCounts([{ value: 1, count: 1 }], { rule: 'sturges', binCount: 3 })).toThrow(StatsInputError);
  });
});
