import { describe, expect, it } from 'vitest';
import {
  StatsInputError,
  chiSquarePdf,
  hypergeometricCdf,
  hypergeometricPmf,
  noncentralTProbability,
  standardNormalCdf,
  standardNormalPdf,
  standardNormalQuantile,
  standardNormalTwoSidedPValue,
  studentTCdf,
  studentTPdf,
  studentTQuantile,
  studentTTwoSidedPValue,
  twoSidedCriticalZ,
} from '../../src/stats/index.js';

function relativeClose(actual: number, expected: number, digits: number): void {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(10 ** -digits * Math.abs(expected));
}

describe('stdlib distribution wrappers', () => {
  it('match R for the normal and t distributions', () => {
    // R 4.2.2, options(digits = 18): pnorm(-3.2) → 0.000687137937915848; qnorm(0.025) → -1.959963984540053827
    relativeClose(standardNormalCdf(-3.2), 0.000687137937915848, 13);
    relativeClose(standardNormalQuantile(0.025), -1.959963984540053827, 14);
    relativeClose(twoSidedCriticalZ(0.95), 1.959963984540053827, 14);
    // R: dnorm(0) → 0.398942280401432703
    relativeClose(standardNormalPdf(0), 0.398942280401432703, 14);
    // R: pt(-2.5, 7.3) → 0.019825117332800228; qt(0.9, 4.5) → 1.500885317508556804; qt(0.975, 10) → 2.22813885198627
    relativeClose(studentTCdf(-2.5, 7.3), 0.019825117332800228, 12);
    relativeClose(studentTQuantile(0.9, 4.5), 1.500885317508556804, 12);
    relativeClose(studentTQuantile(0.975, 10), 2.22813885198627, 13);
    // Exact: the t density with 1 degree of freedom at 0 is the Cauchy density 1/π.
    relativeClose(studentTPdf(0, 1), 1 / Math.PI, 14);
  });

  it('match R for the hypergeometric and chi-square distributions', () => {
    // R 4.2.2: dhyper(1, 4, 4, 2) → 0.571428571428571508 (= 16/28); phyper(1, 4, 4, 2) → 0.785714285714285809
    //          dhyper(3, 20, 30, 10) → 0.225929629395929810; phyper(3, 20, 30, 10) → 0.364968286776836737
    // R's (x, m successes, n failures, k draws) is stdlib's (x, N = m + n, K = m, n = k).
    relativeClose(hypergeometricPmf(1, 8, 4, 2), 16 / 28, 13);
    relativeClose(hypergeometricCdf(1, 8, 4, 2), 0.785714285714285809, 13);
    relativeClose(hypergeometricPmf(3, 50, 20, 10), 0.22592962939592981, 12);
    relativeClose(hypergeometricCdf(3, 50, 20, 10), 0.364968286776836737, 12);
    // R: dchisq(2, 2) → 0.183939720585721167 (= e^{-1}/2); dchisq(3.7, 5.5) → 0.143447383135492545
    relativeClose(chiSquarePdf(2, 2), Math.exp(-1) / 2, 14);
    relativeClose(chiSquarePdf(3.7, 5.5), 0.143447383135492545, 12);
  });

  it('give two-sided p-values from the lower tail', () => {
    relativeClose(standardNormalTwoSidedPValue(1.959963984540054), 0.05, 13);
    relativeClose(studentTTwoSidedPValue(-2.22813885198627, 10), 0.05, 12);
    // Far tails keep their relative precision: R options(digits = 18); 2*pnorm(-12) → 3.55296422415535808e-33
    relativeClose(standardNormalTwoSidedPValue(12), 3.55296422415535808e-33, 12);
  });

  it('throw StatsInputError instead of returning NaN for invalid parameters', () => {
    expect(() => standardNormalQuantile(1)).toThrow(/p must be strictly between 0 and 1/);
    expect(() => studentTCdf(1, 0)).toThrow(/degreesOfFreedom must be a positive finite number/);
    expect(() => studentTQuantile(0.5, Number.NaN)).toThrow(StatsInputError);
    expect(() => hypergeometricPmf(1, 5, 6, 2)).toThrow(/successStates \(6\) must not exceed populationSize \(5\)/);
    expect(() => hypergeometricCdf(1, 5, 2, 2.5)).toThrow(/draws must be a non-negative integer/);
    expect(() => standardNormalCdf(Number.NaN)).toThrow(/z must be a finite number/);
    expect(() => twoSidedCriticalZ(0)).toThrow(/confidence/);
  });
});

describe('noncentralTProbability', () => {
  // R 4.2.2 (its pnt follows Lenth 1989, AS 243), options(digits = 18):
  const cases: Array<[string, number, number, number, 'lower' | 'upper', number]> = [
    ['pt(qt(0.975, 38), 38, ncp = sqrt(10), lower.tail = FALSE)', studentTQuantile(0.975, 38), 38, Math.sqrt(10), 'upper', 0.868952801692497],
    ['pt(1.5, 2, 0.7)', 1.5, 2, 0.7, 'lower', 0.692413112937343644],
    ['pt(1.5, 1, 0.7)', 1.5, 1, 0.7, 'lower', 0.627999468608069433],
    ['pt(-2, 3.5, -1)', -2, 3.5, -1, 'lower', 0.244633076389500603],
    ['pt(2.1, 1e5, 2.5, lower.tail = FALSE)', 2.1, 1e5, 2.5, 'upper', 0.655422050985021709],
    ['pt(0.3, 2.5, 1.2)', 0.3, 2.5, 1.2, 'lower', 0.178621717289127208],
    ['pt(4, 1.3, 2, lower.tail = FALSE)', 4, 1.3, 2, 'upper', 0.321993793461476163],
    ['pt(1.2, 150, 1)', 1.2, 150, 1, 'lower', 0.578291996656306373],
    ['pt(30, 3, 2, lower.tail = FALSE)', 30, 3, 2, 'upper', 0.000709646455405277],
  ];
  for (const [command, t, degreesOfFreedom, noncentrality, tail, expected] of cases) {
    it(`matches R ${command}`, () => {
      expect(Math.abs(noncentralTProbability(t, degreesOfFreedom, noncentrality, tail) - expected)).toBeLessThanOrEqual(1e-9 * Math.max(expected, 1e-3));
    });
  }

  it('reduces to the central t when the noncentrality is 0', () => {
    for (const [t, degreesOfFreedom] of [[-1.7, 3], [0.4, 12.5], [2.2, 40]] as const) {
      relativeClose(noncentralTProbability(t, degreesOfFreedom, 0, 'lower'), studentTCdf(t, degreesOfFreedom), 10);
    }
  });

  it('gives lower and upper tails that add up to 1', () => {
    const lower = noncentralTProbability(1.1, 7, 0.8, 'lower');
    const upper = noncentralTProbability(1.1, 7, 0.8, 'upper');
    expect(lower + upper).toBeCloseTo(1, 12);
  });

  it('throws StatsInputError for invalid parameters', () => {
    expect(() => noncentralTProbability(1, -2, 0, 'lower')).toThrow(/degreesOfFreedom/);
    expect(() => noncentralTProbability(1, 2, Number.POSITIVE_INFINITY, 'lower')).toThrow(/noncentrality/);
  });
});
