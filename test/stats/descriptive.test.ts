import fc from 'fast-check';
import * as simpleStatistics from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import {
  StatsInputError,
  coefficientOfVariation,
  frequencyTable,
  histogram,
  mean,
  median,
  modes,
  quantile,
  quartiles,
  skewness,
  standardDeviation,
  variance,
} from '../../src/stats/index.js';
import { expectUndefined, valueOf } from '../support/outcomes.js';

// Invented per-customer revenue with many zeros (typical of campaign data).
const revenue = [0, 0, 0, 0, 5, 0, 12.5, 0, 0, 80, 0, 3, 0, 0, 0, 0, 250, 0, 0, 0, 7];
const textbook = [2, 4, 4, 4, 5, 5, 7, 9]; // mean 5, population sd 2 (common textbook example, from memory)
const sampleValues = fc.array(fc.double({ min: -1e6, max: 1e6, noNaN: true }), { minLength: 2, maxLength: 60 });

describe('mean, variance, standard deviation and coefficient of variation', () => {
  it('give the textbook values: mean 5, population variance 4, sd 2, CV 0.4', () => {
    expect(valueOf(mean(textbook))).toBe(5);
    expect(valueOf(variance(textbook, { basis: 'population' }))).toBe(4);
    expect(valueOf(standardDeviation(textbook, { basis: 'population' }))).toBe(2);
    expect(valueOf(coefficientOfVariation(textbook, { basis: 'population' }))).toBe(0.4);
  });

  it('match R on invented revenue figures', () => {
    // R 4.2.2: r <- c(0,0,0,0,5,0,12.5,0,0,80,0,3,0,0,0,0,250,0,0,0,7); options(digits = 15)
    //   c(mean(r), var(r), sd(r), sd(r)/mean(r), median(r))
    //   → 17.02380952380953 3152.66190476190468 56.14856992624037 3.29823767398894 0
    expect(valueOf(mean(revenue))).toBeCloseTo(17.02380952380953, 12);
    expect(valueOf(variance(revenue)) / 3152.66190476190468).toBeCloseTo(1, 13);
    expect(valueOf(standardDeviation(revenue)) / 56.14856992624037).toBeCloseTo(1, 13);
    expect(valueOf(coefficientOfVariation(revenue)) / 3.29823767398894).toBeCloseTo(1, 13);
    expect(valueOf(median(revenue))).toBe(0);
  });

  it('agree with simple-statistics on random inputs', () => {
    fc.assert(
      fc.property(sampleValues, (values) => {
        const scale = Math.max(1, ...values.map(Math.abs));
        expect(Math.abs(valueOf(mean(values)) - simpleStatistics.mean(values))).toBeLessThanOrEqual(1e-12 * scale);
        expect(Math.abs(valueOf(variance(values)) - simpleStatistics.sampleVariance(values))).toBeLessThanOrEqual(1e-9 * scale * scale);
        expect(Math.abs(valueOf(variance(values, { basis: 'population' })) - simpleStatistics.variance(values))).toBeLessThanOrEqual(1e-9 * scale * scale);
        expect(Math.abs(valueOf(standardDeviation(values)) - simpleStatistics.sampleStandardDeviation(values))).toBeLessThanOrEqual(1e-9 * scale);
        expect(valueOf(median(values))).toBe(simpleStatistics.median(values));
      }),
      { numRuns: 200 },
    );
  });

  it('report the mean of no values as undefined', () => {
    expectUndefined(mean([]), /no values/);
  });

  it('report the sample variance and sd of one value as undefined', () => {
    expectUndefined(variance([4]), /at least 2 values, got 1/);
    expectUndefined(standardDeviation([4]), /at least 2 values, got 1/);
    expect(valueOf(variance([4], { basis: 'population' }))).toBe(0);
  });

  it('report the population variance of no values as undefined', () => {
    expectUndefined(variance([], { basis: 'population' }), /no values/);
  });

  it('report the coefficient of variation as undefined when the mean is 0', () => {
    expectUndefined(coefficientOfVariation([0, 0, 0]), /positive mean, got 0/);
    expectUndefined(coefficientOfVariation([-3, 1, -1]), /positive mean/);
  });

  it('throw StatsInputError for a non-finite value or an unknown basis', () => {
    expect(() => mean([1, Number.NaN])).toThrow(/values\[1\] must be a finite number/);
    expect(() => variance([1, 2], { basis: 'both' as 'sample' })).toThrow(StatsInputError);
  });
});

describe('median, quantile and quartiles (Hyndman–Fan type 7)', () => {
  it('match R quantile(type = 7)', () => {
    // R 4.2.2: quantile(c(7, 1, 3, 3, 10, 2.5, 8, 4.25), type = 7) → 1.000 2.875 3.625 7.250 10.000
    const values = [7, 1, 3, 3, 10, 2.5, 8, 4.25];
    expect(valueOf(quartiles(values))).toEqual({ q1: 2.875, median: 3.625, q3: 7.25 });
    expect(valueOf(quantile(values, 0))).toBe(1);
    expect(valueOf(quantile(values, 1))).toBe(10);
    // R: quantile(c(1, 2), type = 7) → 1.00 1.25 1.50 1.75 2.00
    expect(valueOf(quartiles([1, 2]))).toEqual({ q1: 1.25, median: 1.5, q3: 1.75 });
    // R: quantile(c(0.5, 1.2, 2.2, 2.9, 3.0, 3.1, 4.75, 5.5, 6.0, 7.25, 8.8, 9.0, 9.0, 10.0, 12.5, 15.0, 30.0)) → 0.5 3 6 9 30
    expect(valueOf(quartiles([0.5, 1.2, 2.2, 2.9, 3.0, 3.1, 4.75, 5.5, 6.0, 7.25, 8.8, 9.0, 9.0, 10.0, 12.5, 15.0, 30.0]))).toEqual({ q1: 3, median: 6, q3: 9 });
  });

  it('gives the single value for every quartile of one value', () => {
    // R: quantile(5) → 5 5 5 5 5
    expect(valueOf(quartiles([5]))).toEqual({ q1: 5, median: 5, q3: 5 });
  });

  it('gives the mean of the two middle values as the median of an even count', () => {
    expect(valueOf(median([5, 1, 3, 2]))).toBe(2.5);
  });

  it('reports the median and quartiles of no values as undefined', () => {
    expectUndefined(median([]), /no values/);
    expectUndefined(quartiles([]), /no values/);
    expectUndefined(quantile([], 0.5), /no values/);
  });

  it('throws StatsInputError for a probability outside [0, 1]', () => {
    expect(() => quantile([1, 2], 1.5)).toThrow(/probability must be between 0 and 1 inclusive, got 1.5/);
  });
});

describe('modes', () => {
  it('lists every value tied for the highest count, ascending', () => {
    expect(modes([3, 1, 2, 2, 3, 4])).toEqual([2, 3]);
  });

  it('gives the single most frequent value', () => {
    expect(modes(revenue)).toEqual([0]);
  });

  it('is empty when no value repeats', () => {
    expect(modes([1, 2, 3, 4.5])).toEqual([]);
  });

  it('is empty for no values', () => {
    expect(modes([])).toEqual([]);
  });

  it('throws StatsInputError for a non-finite value', () => {
    expect(() => modes([1, Number.POSITIVE_INFINITY])).toThrow(/values\[1\]/);
  });
});

describe('skewness (Joanes & Gill 1998)', () => {
  // SciPy 1.10.1 (Debian python3-scipy):
  //   python3 -c "import scipy.stats as st; x = [...]; print(st.skew(x, bias=True), st.skew(x, bias=False))"
  // bias=True is g₁ (population), bias=False is G₁ (adjusted sample skewness).
  const cases: Array<[string, number[], number, number]> = [
    ['[1, 2, 3, 10]', [1, 2, 3, 10], 1.0182337649086284, 1.7636326148038886],
    ['two invented revenue groups', [12.5, 0, 33.1, 7.25, 18.9, 0, 41.0, 9.99, 15.5, 22.3], 0.5676935588252006, 0.6732017470854059],
    ['revenue with many zeros', revenue, 3.7092682926820375, 4.00091469187872],
  ];
  for (const [label, values, populationSkewness, sampleSkewness] of cases) {
    it(`matches SciPy for ${label}`, () => {
      expect(valueOf(skewness(values, { basis: 'population' })) / populationSkewness).toBeCloseTo(1, 12);
      expect(valueOf(skewness(values)) / sampleSkewness).toBeCloseTo(1, 12);
    });
  }

  it('agrees with simple-statistics (both coefficients) on random inputs', () => {
    fc.assert(
      fc.property(fc.array(fc.integer({ min: -100000, max: 100000 }), { minLength: 3, maxLength: 50 }), (cents) => {
        const values = cents.map((value) => value / 100);
        fc.pre(new Set(values).size > 1);
        expect(valueOf(skewness(values))).toBeCloseTo(simpleStatistics.sampleSkewness(values), 8);
        expect(valueOf(skewness(values, { basis: 'population' }))).toBeCloseTo(simpleStatistics.sampleSkewness(values, true), 8);
      }),
      { numRuns: 150 },
    );
  });

  it('reports the sample skewness of fewer than 3 values as undefined', () => {
    expectUndefined(skewness([1, 2]), /at least 3 values, got 2/);
  });

  it('reports the population skewness of fewer than 2 values as undefined', () => {
    expectUndefined(skewness([1], { basis: 'population' }), /at least 2 values, got 1/);
  });

  it('reports the skewness as undefined when all values are equal', () => {
    expectUndefined(skewness([4, 4, 4, 4]), /all values are equal/);
  });
});

describe('frequencyTable', () => {
  it('orders rows by descending count, ties by label, with shares and cumulative shares', () => {
    const rows = valueOf(
      frequencyTable([
        { label: 'west', count: 2 },
        { label: 'east', count: 5 },
        { label: 'north', count: 2 },
        { label: 'south', count: 0 },
        { label: 'central', count: 1 },
      ]),
    );
    expect(rows.map((row) => row.label)).toEqual(['east', 'north', 'west', 'central', 'south']);
    expect(rows.map((row) => row.count)).toEqual([5, 2, 2, 1, 0]);
    expect(rows.map((row) => row.share)).toEqual([0.5, 0.2, 0.2, 0.1, 0]);
    expect(rows.map((row) => row.cumulativeShare)).toEqual([0.5, 0.7, 0.9, 1, 1]);
  });

  it('ends the cumulative share at exactly 1', () => {
    fc.assert(
      fc.property(fc.array(fc.integer({ min: 0, max: 1000 }), { minLength: 1, maxLength: 30 }), (counts) => {
        fc.pre(counts.some((count) => count > 0));
        const rows = valueOf(frequencyTable(counts.map((count, index) => ({ label: `segment ${index}`, count }))));
        expect(rows[rows.length - 1]?.cumulativeShare).toBe(1);
        for (let index = 1; index < rows.length; index += 1) {
          expect(rows[index]?.count).toBeLessThanOrEqual(rows[index - 1]?.count ?? 0);
          expect(rows[index]?.cumulativeShare).toBeGreaterThanOrEqual(rows[index - 1]?.cumulativeShare ?? 0);
        }
      }),
      { numRuns: 100 },
    );
  });

  it('reports shares as undefined when all counts are 0 or there are no rows', () => {
    expectUndefined(frequencyTable([{ label: 'north', count: 0 }]), /add up to 0/);
    expectUndefined(frequencyTable([]), /add up to 0/);
  });

  it('throws StatsInputError for a negative or fractional count', () => {
    expect(() => frequencyTable([{ label: 'north', count: -1 }])).toThrow(/counts\[0\]\.count must be a non-negative integer/);
    expect(() => frequencyTable([{ label: 'north', count: 1.5 }])).toThrow(StatsInputError);
  });

  it('throws StatsInputError for a repeated label', () => {
    expect(() => frequencyTable([{ label: 'north', count: 1 }, { label: 'north', count: 2 }])).toThrow(/"north" more than once/);
  });
});

describe('histogram', () => {
  // NumPy 1.24.2 (Debian python3-numpy) uses the same edges rule (equal width from min to max,
  // [a, b) bins, last bin closed):
  //   python3 -c "import numpy as np; print(np.histogram(x, bins='sturges'))"
  const values = [0.5, 1.2, 2.2, 2.9, 3.0, 3.1, 4.75, 5.5, 6.0, 7.25, 8.8, 9.0, 9.0, 10.0, 12.5, 15.0, 30.0];

  it("matches NumPy's histogram with Sturges' rule", () => {
    // np.histogram(x, bins='sturges') → counts [7, 7, 2, 0, 0, 1], edges 0.5 … 30.0 in steps of 4.9166…
    // (R: nclass.Sturges(x) → 6)
    const result = valueOf(histogram(values));
    expect(result.rule).toBe('sturges');
    expect(result.bins.map((bin) => bin.count)).toEqual([7, 7, 2, 0, 0, 1]);
    expect(result.bins[1]?.low).toBeCloseTo(5.416666666666667, 14);
    expect(result.bins[5]?.high).toBe(30);
    expect(result.note).toBeNull();
  });

  it("matches NumPy's histogram with the Freedman–Diaconis rule", () => {
    // np.histogram(x, bins='fd') → counts [6, 5, 4, 1, 0, 0, 1], edges 0.5, 4.714285714285714, … 30.0
    // (R: nclass.FD(x) → 7)
    const result = valueOf(histogram(values, { rule: 'freedman-diaconis' }));
    expect(result.rule).toBe('freedman-diaconis');
    expect(result.bins.map((bin) => bin.count)).toEqual([6, 5, 4, 1, 0, 0, 1]);
    expect(result.bins[1]?.low).toBeCloseTo(4.714285714285714, 14);
  });

  it("matches NumPy's histogram with a fixed number of bins", () => {
    // np.histogram(x, bins=5) → counts [9, 5, 2, 0, 1], edges 0.5, 6.4, 12.3, 18.2, 24.1, 30.0
    const result = valueOf(histogram(values, { binCount: 5 }));
    expect(result.rule).toBe('fixed');
    expect(result.bins.map((bin) => bin.count)).toEqual([9, 5, 2, 0, 1]);
    expect(result.binWidth).toBeCloseTo(5.9, 14);
  });

  it('puts a value on an inner edge in the upper bin and the maximum in the last bin', () => {
    // np.histogram([0, 1, 2, 3, 4], bins=4) → counts [1, 1, 1, 2]
    const result = valueOf(histogram([0, 1, 2, 3, 4], { binCount: 4 }));
    expect(result.bins).toEqual([
      { low: 0, high: 1, count: 1 },
      { low: 1, high: 2, count: 1 },
      { low: 2, high: 3, count: 1 },
      { low: 3, high: 4, count: 2 },
    ]);
  });

  it('falls back to Sturges, with a note, when the interquartile range is 0', () => {
    // np.histogram([0,0,0,0,0,0,0,5,100], bins='sturges') → counts [8, 0, 0, 0, 1]
    const result = valueOf(histogram([0, 0, 0, 0, 0, 0, 0, 5, 100], { rule: 'freedman-diaconis' }));
    expect(result.rule).toBe('sturges');
    expect(result.bins.map((bin) => bin.count)).toEqual([8, 0, 0, 0, 1]);
    expect(result.note).toMatch(/interquartile range is 0/);
  });

  it('caps the number of bins a rule may produce, with a note', () => {
    const spread = Array.from({ length: 100 }, (_, index) => index);
    const result = valueOf(histogram([...spread, 1e9], { rule: 'freedman-diaconis', maxBins: 50 }));
    expect(result.bins).toHaveLength(50);
    expect(result.note).toMatch(/capped at 50/);
  });

  it('counts every value exactly once for random inputs', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: -1e6, max: 1e6, noNaN: true }), { minLength: 1, maxLength: 80 }), (sample) => {
        const result = valueOf(histogram(sample));
        expect(result.bins.reduce((total, bin) => total + bin.count, 0)).toBe(sample.length);
        for (const bin of result.bins) {
          const isLast = bin === result.bins[result.bins.length - 1];
          const inside = sample.filter((value) => value >= bin.low && (isLast ? value <= bin.high : value < bin.high));
          expect(inside.length).toBe(bin.count);
        }
      }),
      { numRuns: 150 },
    );
  });

  it('gives one bin when all values are equal', () => {
    const result = valueOf(histogram([3, 3, 3]));
    expect(result.bins).toEqual([{ low: 3, high: 3, count: 3 }]);
    expect(result.note).toMatch(/All values are equal/);
  });

  it('reports the histogram of no values as undefined', () => {
    expectUndefined(histogram([]), /no values/);
  });

  it('throws StatsInputError for invalid options', () => {
    expect(() => histogram([1, 2], { binCount: 0 })).toThrow(/binCount must be a positive integer/);
    expect(() => histogram([1, 2], { rule: 'sturges', binCount: 3 })).toThrow(/either rule or binCount/);
    expect(() => histogram([1, 2], { rule: 'scott' as 'sturges' })).toThrow(/rule must be/);
    expect(() => histogram([1, Number.NaN])).toThrow(/values\[1\]/);
  });
});
