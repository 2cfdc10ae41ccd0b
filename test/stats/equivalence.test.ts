import { describe, expect, test } from 'vitest';
import { meanEquivalenceTest, rateEquivalenceTest } from '../../src/stats/equivalence.js';
import { cochranMantelHaenszelTest, mantelHaenszelRiskDifference } from '../../src/stats/stratified.js';
import { newcombeDifferenceInterval, summarize } from '../../src/stats/index.js';
import { StatsInputError } from '../../src/stats/errors.js';

/*
 * Check values computed once with statsmodels 0.13.5 (Debian python3-statsmodels):
 *   /usr/bin/python3 -c "from statsmodels.stats.proportion import tost_proportions_2indep as t;
 *     r = t(150, 1000, 160, 1000, low=-0.05, upp=0.05, method='agresti-caffo', compare='diff');
 *     print(r.results_larger.pvalue, r.results_smaller.pvalue)"
 * results_larger is the test of "difference ≤ low" (our lower p-value), results_smaller of
 * "difference ≥ upp" (our upper p-value). statsmodels 0.13.5 returns the smaller of the two as
 * the combined p-value, against Schuirmann's rule (the larger), so the one-sided values are compared.
 */
describe('rateEquivalenceTest (Agresti–Caffo TOST)', () => {
  test.each([
    [150, 1000, 160, 1000, 0.05, 0.006738490269450444, 0.00010641329433877029],
    [30, 200, 50, 300, 0.03, 0.3305587302982211, 0.08624556169956277],
    [12, 40, 300, 2000, 0.1, 0.00015269792386588958, 0.7951391821934628],
  ])('x1=%i n1=%i x2=%i n2=%i margin %f matches statsmodels', (x1, n1, x2, n2, margin, lower, upper) => {
    const result = rateEquivalenceTest(x1, n1, x2, n2, margin);
    if (!result.ok) throw new Error(result.reason);
    expect(result.value.lowerPValue).toBeCloseTo(lower, 12);
    expect(result.value.upperPValue).toBeCloseTo(upper, 12);
    expect(result.value.pValue).toBeCloseTo(Math.max(lower, upper), 12);
  });

  test('equivalence at level α is the (1 − 2α) interval inside the margin (Schuirmann 1987)', () => {
    const result = rateEquivalenceTest(150, 1000, 160, 1000, 0.05);
    if (!result.ok) throw new Error(result.reason);
    const z90 = 1.6448536269514722; // standard normal 0.95 quantile (any table)
    const { difference, standardError } = result.value;
    expect(difference + z90 * standardError < 0.05 && difference - z90 * standardError > -0.05).toBe(result.value.pValue < 0.05);
  });

  test('an empty group gives a reason; a margin of 0 is refused', () => {
    expect(rateEquivalenceTest(0, 0, 5, 10, 0.02).ok).toBe(false);
    expect(() => rateEquivalenceTest(1, 10, 5, 10, 0)).toThrow(StatsInputError);
  });
});

describe('meanEquivalenceTest (Welch TOST)', () => {
  // statsmodels 0.13.5: ttost_ind(np.array([19.1, 20.3, 22.0, 18.7]), np.array([17.2, 18.0, 16.9, 19.5, 17.7]), -3, 3, usevar='unequal')
  // → (0.18965089274923982, (5.949930425389121, 0.0008834677622603257, 5.11959…), (-0.9618958190125649, 0.18965089274923982, 5.11959…))
  test('matches statsmodels ttost_ind with unequal variances', () => {
    const result = meanEquivalenceTest(summarize([19.1, 20.3, 22.0, 18.7]), summarize([17.2, 18.0, 16.9, 19.5, 17.7]), 3);
    if (!result.ok) throw new Error(result.reason);
    expect(result.value.lowerPValue).toBeCloseTo(0.0008834677622603257, 10);
    expect(result.value.upperPValue).toBeCloseTo(0.18965089274923982, 10);
    expect(result.value.pValue).toBeCloseTo(0.18965089274923982, 10);
    expect(result.value.degreesOfFreedom).toBeCloseTo(5.1195935157788535, 10);
  });

  test('fewer than 2 values gives a reason', () => {
    expect(meanEquivalenceTest(summarize([1]), summarize([1, 2, 3]), 1).ok).toBe(false);
  });
});

describe('Cochran–Mantel–Haenszel test', () => {
  // statsmodels 0.13.5: StratifiedTable([[[5, 35], [10, 50]], [[12, 38], [8, 62]], [[3, 27], [9, 36]]]).test_null_odds(correction=False)
  // → statistic 0.078015079659966, p-value 0.78000555411322
  test('matches statsmodels StratifiedTable.test_null_odds without correction', () => {
    const result = cochranMantelHaenszelTest([
      { x1: 5, n1: 40, x2: 10, n2: 60 },
      { x1: 12, n1: 50, x2: 8, n2: 70 },
      { x1: 3, n1: 30, x2: 9, n2: 45 },
    ]);
    if (!result.ok) throw new Error(result.reason);
    expect(result.value.z ** 2).toBeCloseTo(0.078015079659966, 12);
    expect(result.value.pValue).toBeCloseTo(0.78000555411322, 12);
    expect(result.value.strataUsed).toBe(3);
  });

  test('strata without variance add nothing; none at all gives a reason', () => {
    expect(cochranMantelHaenszelTest([{ x1: 0, n1: 10, x2: 0, n2: 10 }]).ok).toBe(false);
    const withEmpty = cochranMantelHaenszelTest([
      { x1: 5, n1: 40, x2: 10, n2: 60 },
      { x1: 0, n1: 10, x2: 0, n2: 5 },
    ]);
    const alone = cochranMantelHaenszelTest([{ x1: 5, n1: 40, x2: 10, n2: 60 }]);
    expect(withEmpty.value?.z).toBe(alone.value?.z);
  });
});

describe('Mantel–Haenszel risk difference with Sato variance', () => {
  test('one stratum: the plain difference with the unpooled Wald variance (a property of Sato 1989)', () => {
    const result = mantelHaenszelRiskDifference([{ x1: 56, n1: 70, x2: 48, n2: 80 }]);
    if (!result.ok) throw new Error(result.reason);
    expect(result.value.estimate).toBeCloseTo(0.2, 14);
    expect(result.value.standardError ** 2).toBeCloseTo((0.8 * 0.2) / 70 + (0.6 * 0.4) / 80, 14);
  });

  test('strata of the same rates pool to that difference; the estimate does not depend on stratum order', () => {
    const strata = [
      { x1: 20, n1: 100, x2: 30, n2: 300 },
      { x1: 10, n1: 50, x2: 20, n2: 200 },
    ];
    const forward = mantelHaenszelRiskDifference(strata);
    const backward = mantelHaenszelRiskDifference([...strata].reverse());
    expect(forward.value?.estimate).toBeCloseTo(0.1, 14);
    expect(backward.value?.estimate).toBeCloseTo(forward.value?.estimate as number, 14);
    expect(backward.value?.standardError).toBeCloseTo(forward.value?.standardError as number, 14);
  });

  test('confounding by stratum: pooled rates mislead, the within-stratum difference does not', () => {
    // Invented: the segment sits mostly in the campaign that converts more; within each campaign it converts like the rest.
    const strata = [
      { x1: 40, n1: 200, x2: 10, n2: 50 },
      { x1: 5, n1: 100, x2: 25, n2: 500 },
    ];
    const pooled = newcombeDifferenceInterval(45, 300, 35, 550);
    const within = mantelHaenszelRiskDifference(strata);
    expect(pooled.value?.estimate).toBeGreaterThan(0.08);
    expect(within.value?.estimate).toBeCloseTo(0, 14);
  });
});
