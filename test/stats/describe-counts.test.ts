import fc from 'fast-check';
import { describe, expect, test } from 'vitest';
import { coefficientOfVariation, describeCounts, modes, quartiles, skewness, standardDeviation, StatsInputError, summarize } from '../../src/stats/index.js';
import { SKEWED, expand } from './weighted-lists.js';

describe('describeCounts', () => {
  test('matches NumPy and SciPy on a skewed list given as counts', () => {
    // python3 -c "import numpy as np; from scipy.stats import skew; x = np.repeat([0, 12.5, 19.99, 20, 55, 240.1], [40, 7, 3, 5, 2, 1]);
    //   print(np.quantile(x, [0.25, 0.5, 0.75]), x.mean(), x.std(ddof=1), skew(x, bias=False))"
    // → [0. 0. 12.5] 10.302931034482759 32.936365494086814 6.243548090198171 (NumPy 2.4.6, SciPy 1.17.1)
    const described = describeCounts(SKEWED);
    expect(described.summary.n).toBe(58);
    expect(described.summary.mean).toBeCloseTo(10.302931034482759, 12);
    expect(described.quartiles).toEqual({ ok: true, value: { q1: 0, median: 0, q3: 12.5 } });
    expect(described.modes).toEqual([0]);
    expect(described.standardDeviation.ok && described.standardDeviation.value).toBeCloseTo(32.936365494086814, 10);
    expect(described.skewness.ok && described.skewness.value).toBeCloseTo(6.243548090198171, 10);
  });

  test('equals the list statistics of the expanded list', () => {
    const entry = fc.record({ value: fc.integer({ min: -5000, max: 5000 }).map((cents) => cents / 100), count: fc.integer({ min: 0, max: 6 }) });
    fc.assert(
      fc.property(fc.array(entry, { minLength: 1, maxLength: 25 }), (counts) => {
        const values = expand(counts);
        const described = describeCounts(counts);
        const listSummary = summarize(values);
        expect(described.summary.n).toBe(listSummary.n);
        if (values.length === 0) {
          expect(described.quartiles.ok).toBe(false);
          return;
        }
        expect(described.summary.mean).toBeCloseTo(listSummary.mean, 9);
        expect(described.quartiles).toEqual(quartiles(values));
        expect(described.modes).toEqual(modes(values));
        for (const [weighted, list] of [
          [described.standardDeviation, standardDeviation(values)],
          [described.coefficientOfVariation, coefficientOfVariation(values)],
          [described.skewness, skewness(values)],
        ] as const) {
          expect(weighted.ok).toBe(list.ok);
          if (weighted.ok && list.ok) expect(weighted.value).toBeCloseTo(list.value, 6);
        }
      }),
      { numRuns: 300 },
    );
  });

  test('adds the counts of a value given twice and ignores zero counts', () => {
    const described = describeCounts([
      { value: 3, count: 1 },
      { value: 7, count: 0 },
      { value: 3, count: 2 },
      { value: 5, count: 1 },
    ]);
    expect(described.summary.n).toBe(4);
    expect(described.modes).toEqual([3]);
    expect(described.quartiles).toEqual(quartiles([3, 3, 3, 5]));
  });

  test('states why nothing can be described for no values, and refuses bad counts', () => {
    const described = describeCounts([]);
    expect(described.summary.n).toBe(0);
    expect(described.quartiles).toMatchObject({ ok: false, reason: expect.stringMatching(/quartiles are undefined/) });
    expect(described.skewness.ok).toBe(false);
    expect(() => describeCounts([{ value: 1, count: 1.5 }])).toThrow(StatsInputError);
    expect(() => describeCounts([{ value: Number.NaN, count: 1 }])).toThrow(StatsInputError);
  });
});
