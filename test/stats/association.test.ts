import pcorrtest from '@stdlib/stats-pcorrtest';
import fc from 'fast-check';
import * as simpleStatistics from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import {
  StatsInputError,
  covariance,
  pairedMoments,
  pearsonCorrelation,
  pearsonCorrelationFromMoments,
} from '../../src/stats/index.js';
import { expectUndefined, valueOf } from '../support/outcomes.js';

// Invented: advertising spend (thousands) and orders in eight weeks.
const spend = [3.1, 4.0, 5.2, 6.8, 7.1, 8.4, 9.9, 10.5];
const orders = [10, 12, 11, 15, 18, 17, 21, 24];

const pairsArbitrary = fc
  .integer({ min: 4, max: 40 })
  .chain((length) =>
    fc.tuple(
      fc.array(fc.integer({ min: -10000, max: 10000 }), { minLength: length, maxLength: length }),
      fc.array(fc.integer({ min: -10000, max: 10000 }), { minLength: length, maxLength: length }),
    ),
  )
  .map(([xs, ys]) => [xs.map((value) => value / 10), ys.map((value) => value / 10)] as const);

describe('covariance', () => {
  it('matches R cov on invented figures', () => {
    // R 4.2.2: options(digits = 15); c(cov(x, y), cov(x, y) * 7/8) → 12.6714285714286 11.0875
    expect(valueOf(covariance(spend, orders))).toBeCloseTo(12.6714285714286, 12);
    expect(valueOf(covariance(spend, orders, { basis: 'population' }))).toBeCloseTo(11.0875, 12);
  });

  it('agrees with simple-statistics on random pairs', () => {
    fc.assert(
      fc.property(pairsArbitrary, ([xs, ys]) => {
        expect(valueOf(covariance(xs, ys))).toBeCloseTo(simpleStatistics.sampleCovariance(xs, ys), 8);
      }),
      { numRuns: 150 },
    );
  });

  it('reports the sample covariance of one pair as undefined', () => {
    expectUndefined(covariance([1], [2]), /at least 2 pairs, got 1/);
  });

  it('reports the population covariance of no pairs as undefined', () => {
    expectUndefined(covariance([], [], { basis: 'population' }), /no pairs/);
  });

  it('throws StatsInputError for lists of different lengths', () => {
    expect(() => covariance([1, 2, 3], [1, 2])).toThrow(/xs and ys must have the same length, got 3 and 2/);
  });
});

describe('pearsonCorrelation', () => {
  it('matches R cor.test on invented figures', () => {
    // R 4.2.2: ct <- cor.test(x, y); c(ct$estimate, ct$statistic, ct$p.value, ct$conf.int)
    //   → 0.956524525736500930 8.033539305732228186 0.000198794045961651 0.772638458707999742 0.992330226291608941
    const result = valueOf(pearsonCorrelation(spend, orders, 0.95));
    expect(result.r).toBeCloseTo(0.95652452573650093, 14);
    expect(result.t).toBeCloseTo(8.033539305732228, 12);
    expect(result.degreesOfFreedom).toBe(6);
    expect(result.pValue / 0.000198794045961651).toBeCloseTo(1, 10);
    expect(result.interval.low).toBeCloseTo(0.772638458707999742, 12);
    expect(result.interval.high).toBeCloseTo(0.992330226291608941, 12);
    // R: cor.test(x, y, conf.level = 0.9)$conf.int → 0.823553751638992 0.989845848522003
    const at90 = valueOf(pearsonCorrelation(spend, orders, 0.9));
    expect(at90.interval.low).toBeCloseTo(0.823553751638992, 12);
    expect(at90.interval.high).toBeCloseTo(0.989845848522003, 12);
  });

  it('matches R cor.test on a five-pair example', () => {
    // R 4.2.2: cor.test(c(1,2,3,4,5), c(2,1,4,3,5)) → r = 0.8, t = 2.309401076759, df = 3,
    //   p-value = 0.104088038662, 95 % interval -0.279640041969355 0.986196193301271
    const result = valueOf(pearsonCorrelation([1, 2, 3, 4, 5], [2, 1, 4, 3, 5], 0.95));
    expect(result.r).toBeCloseTo(0.8, 14);
    expect(result.t).toBeCloseTo(2.309401076759, 11);
    expect(result.pValue).toBeCloseTo(0.104088038662, 11);
    expect(result.interval.low).toBeCloseTo(-0.279640041969355, 12);
    expect(result.interval.high).toBeCloseTo(0.986196193301271, 12);
  });

  it('agrees with @stdlib/stats-pcorrtest on r, t, p-value and interval for random pairs', () => {
    fc.assert(
      fc.property(pairsArbitrary, fc.double({ min: 0.5, max: 0.995, noNaN: true }), ([xs, ys], confidence) => {
        fc.pre(new Set(xs).size > 1 && new Set(ys).size > 1);
        const ours = pearsonCorrelation(xs, ys, confidence);
        fc.pre(ours.ok);
        const reference = pcorrtest(xs, ys, { alpha: 1 - confidence });
        const result = valueOf(ours);
        expect(result.r).toBeCloseTo(reference.pcorr, 10);
        expect(result.r).toBeCloseTo(simpleStatistics.sampleCorrelation(xs, ys), 10);
        expect(Math.abs(result.t - reference.statistic)).toBeLessThanOrEqual(1e-8 * Math.max(1, Math.abs(reference.statistic)));
        expect(Math.abs(result.pValue - reference.pValue)).toBeLessThanOrEqual(1e-8 * Math.max(1e-6, reference.pValue));
        expect(result.interval.low).toBeCloseTo(reference.ci[0] as number, 9);
        expect(result.interval.high).toBeCloseTo(reference.ci[1] as number, 9);
      }),
      { numRuns: 200 },
    );
  });

  it('contains r in its interval and widens with the confidence level', () => {
    fc.assert(
      fc.property(pairsArbitrary, ([xs, ys]) => {
        const narrow = pearsonCorrelation(xs, ys, 0.8);
        fc.pre(narrow.ok);
        const wide = valueOf(pearsonCorrelation(xs, ys, 0.99));
        const { r, interval } = valueOf(narrow);
        expect(interval.low).toBeLessThanOrEqual(r);
        expect(interval.high).toBeGreaterThanOrEqual(r);
        expect(wide.interval.low).toBeLessThanOrEqual(interval.low);
        expect(wide.interval.high).toBeGreaterThanOrEqual(interval.high);
      }),
      { numRuns: 100 },
    );
  });

  it('gives the same result from centred moments as from the raw pairs', () => {
    const fromPairs = valueOf(pearsonCorrelation(spend, orders, 0.95));
    const fromMoments = valueOf(pearsonCorrelationFromMoments(pairedMoments(spend, orders), 0.95));
    expect(fromMoments).toEqual(fromPairs);
  });

  it('reports the correlation as undefined for fewer than 4 pairs', () => {
    expectUndefined(pearsonCorrelation([1, 2, 3], [3, 1, 2], 0.95), /at least 4 pairs, got 3/);
  });

  it('reports the correlation as undefined when a variable does not vary', () => {
    expectUndefined(pearsonCorrelation([1, 2, 3, 4], [5, 5, 5, 5], 0.95), /second variable has the same value/);
    expectUndefined(pearsonCorrelation([2, 2, 2, 2], [1, 2, 3, 4], 0.95), /first variable/);
  });

  it('reports the test and interval as undefined for a perfect correlation', () => {
    expectUndefined(pearsonCorrelation([1, 2, 3, 4], [2, 4, 6, 8], 0.95), /perfect \(r = 1\)/);
  });

  it('throws StatsInputError for non-finite values, different lengths or a bad confidence', () => {
    expect(() => pearsonCorrelation([1, 2, 3, Number.NaN], [1, 2, 3, 4], 0.95)).toThrow(/xs\[3\]/);
    expect(() => pearsonCorrelation([1, 2, 3, 4], [1, 2, 3], 0.95)).toThrow(StatsInputError);
    expect(() => pearsonCorrelation([1, 2, 3, 4], [1, 2, 4, 3], 2)).toThrow(/confidence/);
    expect(() =>
      pearsonCorrelationFromMoments({ n: 5, sumSquaredDeviationsX: -1, sumSquaredDeviationsY: 1, sumCrossDeviations: 0 }, 0.95),
    ).toThrow(/must not be negative/);
  });
});
