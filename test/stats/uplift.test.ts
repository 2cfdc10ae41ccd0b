import { describe, expect, it } from 'vitest';
import {
  StatsInputError,
  fisherExactTest,
  incrementalProfit,
  newcombeDifferenceInterval,
  summarize,
  twoProportionZTest,
  upliftDifference,
  welchTTest,
} from '../../src/stats/index.js';
import { expectUndefined, valueOf } from '../support/outcomes.js';

/*
 * Check values computed once with python3 (scipy 1.17.1, statsmodels 0.15.0) by
 * `python3 test/stats/reference/uplift-reference.py`, whose essential lines are:
 *   from statsmodels.stats.proportion import confint_proportions_2indep, proportions_ztest
 *   confint_proportions_2indep(x1, n1, x2, n2, method='newcomb', compare='diff', alpha=0.05)
 *   proportions_ztest([x1, x2], [n1, n2])                      # pooled z, two-sided
 *   scipy.stats.fisher_exact([[x1, n1 - x1], [x2, n2 - x2]]).pvalue
 *   v = lambda x, n: (x/n)*(1 - x/n)/n                          # Altman & Bland (2003)
 *   d = (120/800 - 15/200) - (300/3200 - 60/800)
 *   se = sqrt(v(120,800) + v(15,200) + v(300,3200) + v(60,800)); z = d/se
 *   2*scipy.stats.norm.sf(abs(z)); d ∓ scipy.stats.norm.ppf(0.975)*se
 *   r = scipy.stats.ttest_ind(contacted, holdout, equal_var=False); r.confidence_interval(0.95)
 *   0.35*(mean difference and both ends) - 1.25
 * statsmodels' method 'newcomb' is Newcombe's (1998) method 10, the hybrid score interval.
 */

// [contacted x, n, holdout x, n, uplift, Newcombe low, high, pooled z, z p-value, Fisher p-value]
const upliftExamples: Array<[number, number, number, number, number, number, number, number, number, number]> = [
  [120, 800, 15, 200, 0.075, 0.0243930271184242, 0.11424436820870282, 2.7761716615534295, 0.005500315922190029, 0.0052249433035439835],
  [300, 3200, 60, 800, 0.018750000000000003, -0.0037601183100753888, 0.038180698823708246, 1.65748386032949, 0.09742168927634334, 0.11186828339667733],
  [9, 40, 1, 12, 0.14166666666666666, -0.1474123023998315, 0.30658237522067333, 1.0921073265473558, 0.27478592948242164, 0.41989390898669565],
];

describe('uplift of one group (contacted against holdout)', () => {
  for (const [x1, n1, x2, n2, uplift, low, high, z, zP, fisherP] of upliftExamples) {
    it(`matches statsmodels and scipy for ${x1}/${n1} contacted against ${x2}/${n2} held out`, () => {
      const interval = valueOf(newcombeDifferenceInterval(x1, n1, x2, n2, 0.95));
      expect(interval.estimate).toBeCloseTo(uplift, 12);
      expect(interval.interval.low).toBeCloseTo(low, 9);
      expect(interval.interval.high).toBeCloseTo(high, 9);
      const zTest = valueOf(twoProportionZTest(x1, n1, x2, n2));
      expect(zTest.z).toBeCloseTo(z, 9);
      expect(Math.abs(zTest.pValue - zP)).toBeLessThan(1e-10);
      expect(Math.abs(valueOf(fisherExactTest(x1, n1, x2, n2)).pValue - fisherP)).toBeLessThan(1e-10);
    });
  }
});

describe('upliftDifference (Altman & Bland 2003)', () => {
  const segment = { contactedConversions: 120, contactedN: 800, holdoutConversions: 15, holdoutN: 200 };
  const rest = { contactedConversions: 300, contactedN: 3200, holdoutConversions: 60, holdoutN: 800 };

  it('matches the independent computation: difference, standard error, normal interval and two-sided p', () => {
    const result = valueOf(upliftDifference(segment, rest, 0.95));
    expect(result.estimate).toBeCloseTo(0.056249999999999994, 12);
    expect(result.standardError).toBeCloseTo(0.024890139472665676, 12);
    expect(result.z).toBeCloseTo(2.2599310888463955, 9);
    expect(Math.abs(result.pValue - 0.023825528062642976)).toBeLessThan(1e-10);
    expect(result.interval.low).toBeCloseTo(0.007466223063396497, 9);
    expect(result.interval.high).toBeCloseTo(0.10503377693660348, 9);
  });

  it('is antisymmetric: swapping segment and rest flips the sign and keeps the p-value', () => {
    const forward = valueOf(upliftDifference(segment, rest));
    const backward = valueOf(upliftDifference(rest, segment));
    expect(backward.estimate).toBeCloseTo(-forward.estimate, 15);
    expect(backward.pValue).toBeCloseTo(forward.pValue, 15);
    expect(backward.interval.low).toBeCloseTo(-forward.interval.high, 15);
  });

  it('widens with the confidence level', () => {
    const narrow = valueOf(upliftDifference(segment, rest, 0.9));
    const wide = valueOf(upliftDifference(segment, rest, 0.99));
    expect(wide.interval.high - wide.interval.low).toBeGreaterThan(narrow.interval.high - narrow.interval.low);
  });

  it('is undefined, with the reason, for an empty arm or no variation in any arm', () => {
    expectUndefined(upliftDifference({ ...segment, holdoutConversions: 0, holdoutN: 0 }, rest), /segment's holdout/);
    const none = { contactedConversions: 0, contactedN: 10, holdoutConversions: 0, holdoutN: 5 };
    expectUndefined(upliftDifference(none, none), /standard error is 0/);
  });

  it('refuses counts that cannot be', () => {
    expect(() => upliftDifference({ ...segment, holdoutConversions: 300 }, rest)).toThrow(StatsInputError);
  });
});

describe('incremental value and profit per contact', () => {
  // Revenue per customer, zeros included: invented with numpy's default_rng(20261203).
  const contacted = [
    0, 0, 31.44, 0, 0, 63.59, 13.42, 0, 0, 0, 0, 1.14, 0, 71.26, 0, 0, 18.18, 0, 30.08, 0, 56.14, 0, 0, 0, 0, 39.22, 0, 13.75, 80.26, 0, 0, 5.43, 0, 0, 0, 0, 0,
    46.39, 0, 0, 5.63, 6.37, 0, 0, 0, 18.37, 0, 25.43, 0, 0, 12.83, 0, 0, 0, 0, 0, 55.12, 0, 0, 0,
  ];
  const holdout = [0, 0, 0, 0, 32.99, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 38.24, 0, 0, 0, 0, 0, 0, 0, 0, 35.13];

  it("gives the incremental value by Welch's interval, as scipy's ttest_ind(equal_var=False)", () => {
    const result = valueOf(welchTTest(summarize(contacted), summarize(holdout), 0.95));
    expect(result.difference).toBeCloseTo(5.6464333333333325, 9);
    expect(result.degreesOfFreedom).toBeCloseTo(73.04726463938186, 7);
    expect(Math.abs(result.pValue - 0.10979191447962311)).toBeLessThan(1e-10);
    expect(result.interval.low).toBeCloseTo(-1.3049706298378618, 7);
    expect(result.interval.high).toBeCloseTo(12.597837296504526, 7);
  });

  it('maps the incremental value to profit per contact: margin × value − cost, ends included', () => {
    const value = valueOf(welchTTest(summarize(contacted), summarize(holdout), 0.95));
    const profit = incrementalProfit({ estimate: value.difference, interval: value.interval }, 0.35, 1.25);
    expect(profit.estimate).toBeCloseTo(0.7262516666666663, 9);
    expect(profit.interval.low).toBeCloseTo(-1.7067397204432515, 7);
    expect(profit.interval.high).toBeCloseTo(3.159243053776584, 7);
  });

  it('keeps the interval in order at a zero margin (profit is minus the cost, whatever the value)', () => {
    expect(incrementalProfit({ estimate: 4, interval: { low: 1, high: 7 } }, 0, 0.5)).toEqual({ estimate: -0.5, interval: { low: -0.5, high: -0.5 } });
  });

  it('refuses a margin outside [0, 1] and a negative cost', () => {
    const value = { estimate: 4, interval: { low: 1, high: 7 } };
    expect(() => incrementalProfit(value, 1.2, 0)).toThrow(StatsInputError);
    expect(() => incrementalProfit(value, 0.3, -1)).toThrow(StatsInputError);
    expect(() => incrementalProfit(value, 0.3, Number.NaN)).toThrow(StatsInputError);
  });
});
