import ttest from '@stdlib/stats-ttest';
import ttest2 from '@stdlib/stats-ttest2';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  StatsInputError,
  emptySummary,
  hedgesG,
  studentTTest,
  summarize,
  tInterval,
  welchTTest,
} from '../../src/stats/index.js';
import { expectUndefined, valueOf } from '../support/outcomes.js';

function relativeClose(actual: number, expected: number, digits: number): void {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(10 ** -digits * Math.max(1, Math.abs(expected)));
}

// Invented revenue figures for two groups (per contacted customer).
const groupA = [12.5, 0, 33.1, 7.25, 18.9, 0, 41.0, 9.99, 15.5, 22.3];
const groupB = [8.1, 11.2, 0, 5.5, 9.9, 14.0, 3.3, 7.7];
// Student (1908), Biometrika 6, 1–25: extra hours of sleep under two drugs, as R's `sleep` data set.
const sleepGroup1 = [0.7, -1.6, -0.2, -1.2, -0.1, 3.4, 3.7, 0.8, 0.0, 2.0];
const sleepGroup2 = [1.9, 0.8, 1.1, 0.1, -0.1, 4.4, 5.5, 1.6, 4.6, 3.4];

describe('tInterval', () => {
  it('matches R t.test for a one-sample interval at 95 % and 99 %', () => {
    // R 4.2.2: a <- c(12.5, 0, 33.1, 7.25, 18.9, 0, 41.0, 9.99, 15.5, 22.3)
    //   t.test(a)$conf.int                     → 6.5079724289817 25.6000275710183
    //   t.test(a, conf.level = 0.99)$conf.int  → 2.34009002438218 29.76790997561782
    const at95 = valueOf(tInterval(summarize(groupA), 0.95));
    relativeClose(at95.interval.low, 6.5079724289817, 12);
    relativeClose(at95.interval.high, 25.6000275710183, 12);
    expect(at95.estimate).toBeCloseTo(16.054, 12);
    expect(at95.degreesOfFreedom).toBe(9);
    const at99 = valueOf(tInterval(summarize(groupA), 0.99));
    relativeClose(at99.interval.low, 2.34009002438218, 12);
    relativeClose(at99.interval.high, 29.76790997561782, 12);
  });

  it('agrees with @stdlib/stats-ttest on random samples', () => {
    fc.assert(
      fc.property(
        fc.array(fc.integer({ min: -100000, max: 100000 }), { minLength: 2, maxLength: 40 }),
        fc.double({ min: 0.5, max: 0.995, noNaN: true }),
        (cents, confidence) => {
          const values = cents.map((value) => value / 100);
          fc.pre(new Set(values).size > 1);
          const ours = valueOf(tInterval(summarize(values), confidence));
          const reference = ttest(values, { alpha: 1 - confidence });
          relativeClose(ours.interval.low, reference.ci[0] as number, 9);
          relativeClose(ours.interval.high, reference.ci[1] as number, 9);
        },
      ),
      { numRuns: 150 },
    );
  });

  it('reports the interval of no values (n = 0) as undefined', () => {
    expectUndefined(tInterval(emptySummary(), 0.95), /at least 2 values, got 0/);
  });

  it('reports the interval of one value (n = 1) as undefined', () => {
    expectUndefined(tInterval(summarize([4]), 0.95), /at least 2 values, got 1/);
  });

  it('gives a zero-width interval when all values are equal', () => {
    expect(valueOf(tInterval(summarize([3, 3, 3]), 0.95)).interval).toEqual({ low: 3, high: 3 });
  });

  it('throws StatsInputError for a confidence outside (0, 1)', () => {
    expect(() => tInterval(summarize([1, 2]), 1.5)).toThrow(/confidence must be strictly between 0 and 1, got 1.5/);
  });

  it('throws StatsInputError for a malformed summary', () => {
    expect(() => tInterval({ n: 3, mean: 1, sumSquaredDeviations: Number.NaN }, 0.95)).toThrow(/summary\.sumSquaredDeviations/);
    expect(() => tInterval({ n: 1.5, mean: 1, sumSquaredDeviations: 0 }, 0.95)).toThrow(StatsInputError);
  });
});

describe('welchTTest', () => {
  it('matches R t.test (Welch) on invented revenue figures', () => {
    // R 4.2.2: wt <- t.test(a, b); c(wt$statistic, wt$parameter, wt$p.value, wt$conf.int)
    //   → 1.9065411993784107 11.4148175733258501 0.0820568261528844 -1.2830624177574601 18.4660624177574562
    const result = valueOf(welchTTest(summarize(groupA), summarize(groupB), 0.95));
    relativeClose(result.t, 1.9065411993784107, 12);
    relativeClose(result.degreesOfFreedom, 11.4148175733258501, 12);
    relativeClose(result.pValue, 0.0820568261528844, 11);
    relativeClose(result.interval.low, -1.2830624177574601, 11);
    relativeClose(result.interval.high, 18.4660624177574562, 11);
    relativeClose(result.difference, 16.054 - 7.4625, 13);
    // R: t.test(a, b, conf.level = 0.9)$conf.int → 0.525482445850323 16.657517554149674
    const at90 = valueOf(welchTTest(summarize(groupA), summarize(groupB), 0.9));
    relativeClose(at90.interval.low, 0.525482445850323, 11);
    relativeClose(at90.interval.high, 16.657517554149674, 11);
  });

  it("matches R's Welch test on Student's (1908) sleep data", () => {
    // R 4.2.2: r <- t.test(extra ~ group, data = sleep); c(r$statistic, r$parameter, r$p.value, r$conf.int)
    //   → -1.8608134674868531 17.7764735161784984 0.0793941401873582 -3.3654832307117104 0.2054832307117102
    // (R's documentation prints t = -1.8608, df = 17.776, p-value = 0.07939.)
    const result = valueOf(welchTTest(summarize(sleepGroup1), summarize(sleepGroup2), 0.95));
    relativeClose(result.t, -1.8608134674868531, 12);
    relativeClose(result.degreesOfFreedom, 17.7764735161784984, 12);
    relativeClose(result.pValue, 0.0793941401873582, 11);
    relativeClose(result.interval.low, -3.3654832307117104, 11);
    relativeClose(result.interval.high, 0.2054832307117102, 11);
  });

  it('agrees with @stdlib/stats-ttest2 on t, degrees of freedom, p-value and interval for random samples', () => {
    const sample = fc.array(fc.integer({ min: -100000, max: 100000 }), { minLength: 2, maxLength: 40 });
    fc.assert(
      fc.property(sample, sample, fc.double({ min: 0.5, max: 0.995, noNaN: true }), (centsA, centsB, confidence) => {
        const a = centsA.map((value) => value / 100);
        const b = centsB.map((value) => value / 100);
        fc.pre(new Set(a).size > 1 || new Set(b).size > 1);
        const ours = valueOf(welchTTest(summarize(a), summarize(b), confidence));
        const reference = ttest2(a, b, { alpha: 1 - confidence });
        relativeClose(ours.t, reference.statistic, 9);
        relativeClose(ours.degreesOfFreedom, reference.df, 9);
        expect(Math.abs(ours.pValue - reference.pValue)).toBeLessThanOrEqual(1e-9 * Math.max(1e-6, reference.pValue));
        relativeClose(ours.interval.low, reference.ci[0] as number, 8);
        relativeClose(ours.interval.high, reference.ci[1] as number, 8);
      }),
      { numRuns: 200 },
    );
  });

  it('flips the sign of the difference and its interval when the groups are swapped', () => {
    const sample = fc.array(fc.integer({ min: -10000, max: 10000 }), { minLength: 2, maxLength: 30 });
    fc.assert(
      fc.property(sample, sample, (centsA, centsB) => {
        const a = summarize(centsA.map((value) => value / 100));
        const b = summarize(centsB.map((value) => value / 100));
        fc.pre(a.sumSquaredDeviations > 0 || b.sumSquaredDeviations > 0);
        const forward = valueOf(welchTTest(a, b, 0.95));
        const backward = valueOf(welchTTest(b, a, 0.95));
        expect(backward.difference).toBeCloseTo(-forward.difference, 10);
        expect(backward.interval.low).toBeCloseTo(-forward.interval.high, 10);
        expect(backward.interval.high).toBeCloseTo(-forward.interval.low, 10);
        expect(backward.pValue).toBeCloseTo(forward.pValue, 12);
        expect(forward.interval.low).toBeLessThanOrEqual(forward.difference);
        expect(forward.interval.high).toBeGreaterThanOrEqual(forward.difference);
      }),
      { numRuns: 150 },
    );
  });

  it('widens the interval with the confidence level', () => {
    const a = summarize(groupA);
    const b = summarize(groupB);
    let previous = valueOf(welchTTest(a, b, 0.5)).interval;
    for (const confidence of [0.8, 0.9, 0.95, 0.99, 0.999]) {
      const current = valueOf(welchTTest(a, b, confidence)).interval;
      expect(current.low).toBeLessThan(previous.low);
      expect(current.high).toBeGreaterThan(previous.high);
      previous = current;
    }
  });

  it('works when one group has zero variance, with the other group’s degrees of freedom', () => {
    // R 4.2.2: r <- t.test(c(1,2,3,4,5), c(7,7,7,7)); c(r$statistic, r$parameter, r$p.value, r$conf.int)
    //   → -5.65685424949237969 4 0.00481267833004423 -5.96324316147755784 -2.03675683852244260
    const result = valueOf(welchTTest(summarize([1, 2, 3, 4, 5]), summarize([7, 7, 7, 7]), 0.95));
    relativeClose(result.t, -5.65685424949237969, 12);
    relativeClose(result.degreesOfFreedom, 4, 12);
    relativeClose(result.pValue, 0.00481267833004423, 10);
    relativeClose(result.interval.low, -5.96324316147755784, 11);
    relativeClose(result.interval.high, -2.0367568385224426, 11);
  });

  it('reports the test as undefined when both groups have zero variance', () => {
    expectUndefined(welchTTest(summarize([5, 5, 5]), summarize([7, 7]), 0.95), /both groups have zero variance/);
    expectUndefined(welchTTest(summarize([5, 5, 5]), summarize([5, 5]), 0.95), /both groups have zero variance/);
  });

  it('reports the test as undefined when a group has fewer than 2 values', () => {
    expectUndefined(welchTTest(summarize([5]), summarize([7, 8]), 0.95), /at least 2 values/);
    expectUndefined(welchTTest(emptySummary(), summarize([7, 8]), 0.95), /got 0 and 2/);
  });

  it('throws StatsInputError for a confidence outside (0, 1) or a malformed summary', () => {
    expect(() => welchTTest(summarize(groupA), summarize(groupB), 0)).toThrow(/confidence/);
    expect(() => welchTTest({ n: -2, mean: 0, sumSquaredDeviations: 0 }, summarize(groupB), 0.95)).toThrow(/a\.n/);
  });
});

describe('studentTTest', () => {
  it('matches R t.test(var.equal = TRUE) on invented revenue figures', () => {
    // R 4.2.2: st <- t.test(a, b, var.equal = TRUE); c(st$statistic, st$parameter, st$p.value, st$conf.int)
    //   → 1.735535951891938 16 0.101861158720903 -1.902760495384676 19.085760495384672
    const result = valueOf(studentTTest(summarize(groupA), summarize(groupB), 0.95));
    relativeClose(result.t, 1.735535951891938, 12);
    expect(result.degreesOfFreedom).toBe(16);
    relativeClose(result.pValue, 0.101861158720903, 11);
    relativeClose(result.interval.low, -1.902760495384676, 11);
    relativeClose(result.interval.high, 19.085760495384672, 11);
  });

  it('agrees with @stdlib/stats-ttest2 (equal variances) on random samples', () => {
    const sample = fc.array(fc.integer({ min: -100000, max: 100000 }), { minLength: 2, maxLength: 40 });
    fc.assert(
      fc.property(sample, sample, (centsA, centsB) => {
        const a = centsA.map((value) => value / 100);
        const b = centsB.map((value) => value / 100);
        fc.pre(new Set(a).size > 1 || new Set(b).size > 1);
        const ours = valueOf(studentTTest(summarize(a), summarize(b), 0.95));
        const reference = ttest2(a, b, { variance: 'equal' });
        relativeClose(ours.t, reference.statistic, 9);
        expect(ours.degreesOfFreedom).toBe(reference.df);
        expect(Math.abs(ours.pValue - reference.pValue)).toBeLessThanOrEqual(1e-9 * Math.max(1e-6, reference.pValue));
      }),
      { numRuns: 150 },
    );
  });

  it('reports the test as undefined when both groups have zero variance', () => {
    expectUndefined(studentTTest(summarize([5, 5, 5]), summarize([7, 7]), 0.95), /both groups have zero variance/);
  });

  it('reports the test as undefined when a group is empty (n = 0)', () => {
    expectUndefined(studentTTest(emptySummary(), summarize([7, 8, 9]), 0.95), /at least 1 value in each group/);
  });

  it('reports the test as undefined with only two values in all', () => {
    expectUndefined(studentTTest(summarize([1]), summarize([7]), 0.95), /3 in all/);
  });
});

describe('hedgesG', () => {
  it('matches the small-sample corrected d computed in R', () => {
    // R 4.2.2: n1 <- 10; n2 <- 8; sp <- sqrt(((n1-1)*var(a) + (n2-1)*var(b)) / (n1+n2-2));
    //   d <- (mean(a) - mean(b)) / sp; df <- n1+n2-2; d * (1 - 3/(4*df - 1))  → 0.784035224155277
    //   (d itself: 0.823236985363041; with the exact gamma factor: 0.783930576264730)
    const result = valueOf(hedgesG(summarize(groupA), summarize(groupB)));
    relativeClose(result, 0.784035224155277, 12);
  });

  it('changes sign when the groups are swapped', () => {
    const forward = valueOf(hedgesG(summarize(groupA), summarize(groupB)));
    expect(valueOf(hedgesG(summarize(groupB), summarize(groupA)))).toBeCloseTo(-forward, 14);
  });

  it('reports g as undefined when both groups have zero variance', () => {
    expectUndefined(hedgesG(summarize([5, 5, 5]), summarize([7, 7])), /zero variance/);
  });

  it('reports g as undefined when a group has fewer than 2 values', () => {
    expectUndefined(hedgesG(summarize([5]), summarize([7, 8, 9])), /at least 2 values/);
    expectUndefined(hedgesG(emptySummary(), emptySummary()), /got 0 and 0/);
  });
});
