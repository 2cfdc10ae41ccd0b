import { describe, expect, it } from 'vitest';
import {
  StatsInputError,
  minimumDetectableRateDifference,
  standardNormalCdf,
  standardNormalQuantile,
  twoProportionPower,
  twoProportionSampleSize,
  twoSampleTPower,
  twoSampleTSampleSize,
} from '../../src/stats/index.js';
import { expectUndefined, valueOf } from '../support/outcomes.js';

function relativeClose(actual: number, expected: number, digits: number): void {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(10 ** -digits * Math.abs(expected));
}

describe('twoProportionPower and twoProportionSampleSize (R power.prop.test conventions)', () => {
  it('match R power.prop.test for the power', () => {
    // R 4.2.2, options(digits = 15):
    //   power.prop.test(p1 = 0.5, p2 = 0.75, n = 50)$power   → 0.740165901331388
    //   power.prop.test(p1 = 0.10, p2 = 0.15, n = 500)$power → 0.667030628606175
    relativeClose(valueOf(twoProportionPower({ p1: 0.5, p2: 0.75, nPerGroup: 50 })), 0.740165901331388, 13);
    relativeClose(valueOf(twoProportionPower({ p1: 0.1, p2: 0.15, nPerGroup: 500, alpha: 0.05 })), 0.667030628606175, 13);
  });

  it('match R power.prop.test for n per group', () => {
    // R 4.2.2 (tol tightened so that uniroot's answer is exact to the printed digits):
    //   power.prop.test(p1 = 0.5, p2 = 0.75, power = 0.9, tol = 1e-12)$n  → 76.7069284517774
    //   (default tol: 76.7069301141077)
    //   power.prop.test(p1 = 0.10, p2 = 0.15, power = 0.8, tol = 1e-12)$n → 685.596858325361
    //   power.prop.test(p1 = 0.3, p2 = 0.2, power = 0.8, sig.level = 0.01, tol = 1e-12)$n → 436.519569633263
    relativeClose(valueOf(twoProportionSampleSize({ p1: 0.5, p2: 0.75, power: 0.9 })), 76.7069284517774, 11);
    relativeClose(valueOf(twoProportionSampleSize({ p1: 0.1, p2: 0.15, power: 0.8 })), 685.596858325361, 11);
    relativeClose(valueOf(twoProportionSampleSize({ p1: 0.3, p2: 0.2, power: 0.8, alpha: 0.01 })), 436.519569633263, 11);
  });

  it('give back the target power at the computed n', () => {
    const n = valueOf(twoProportionSampleSize({ p1: 0.12, p2: 0.2, power: 0.85, alpha: 0.05 }));
    relativeClose(valueOf(twoProportionPower({ p1: 0.12, p2: 0.2, nPerGroup: n, alpha: 0.05 })), 0.85, 12);
  });

  it('report the sample size as undefined when the rates are equal', () => {
    expectUndefined(twoProportionSampleSize({ p1: 0.2, p2: 0.2, power: 0.8 }), /rates are equal/);
  });

  it('report the power as undefined when both rates are 0 or 1', () => {
    expectUndefined(twoProportionPower({ p1: 0, p2: 0, nPerGroup: 100 }), /no variance/);
  });

  it('throw StatsInputError for alpha or power outside (0, 1) and rates outside [0, 1]', () => {
    expect(() => twoProportionPower({ p1: 0.2, p2: 0.3, nPerGroup: 100, alpha: 1 })).toThrow(/alpha must be strictly between 0 and 1, got 1/);
    expect(() => twoProportionSampleSize({ p1: 0.2, p2: 0.3, power: 0 })).toThrow(/power must be strictly between 0 and 1, got 0/);
    expect(() => twoProportionSampleSize({ p1: 1.2, p2: 0.3, power: 0.8 })).toThrow(/p1 must be between 0 and 1/);
    expect(() => twoProportionPower({ p1: 0.2, p2: 0.3, nPerGroup: 0 })).toThrow(/nPerGroup must be a finite number greater than 0/);
  });
});

describe('twoSampleTPower and twoSampleTSampleSize (R power.t.test conventions)', () => {
  it('match R power.t.test for the power', () => {
    // R 4.2.2, options(digits = 15):
    //   power.t.test(n = 20, delta = 1, sd = 1)$power                       → 0.868952801692498
    //   power.t.test(n = 15, delta = 0.5, sd = 1.3)$power                   → 0.172973329741844
    //   power.t.test(n = 64, delta = 0.5, sd = 1)$power                     → 0.801458623367973
    //   power.t.test(n = 2.5, delta = 3, sd = 1, sig.level = 0.01)$power    → 0.215848794594787
    relativeClose(valueOf(twoSampleTPower({ delta: 1, sd: 1, nPerGroup: 20 })), 0.868952801692498, 10);
    relativeClose(valueOf(twoSampleTPower({ delta: 0.5, sd: 1.3, nPerGroup: 15 })), 0.172973329741844, 10);
    relativeClose(valueOf(twoSampleTPower({ delta: -0.5, nPerGroup: 64 })), 0.801458623367973, 10);
    relativeClose(valueOf(twoSampleTPower({ delta: 3, nPerGroup: 2.5, alpha: 0.01 })), 0.215848794594787, 10);
  });

  it('match R power.t.test for n per group', () => {
    // R 4.2.2 (tol tightened; the default tol = eps^0.25 gives the value in brackets):
    //   power.t.test(delta = 1, sd = 1, power = 0.9, tol = 1e-12)$n   → 22.021095570094   [22.0210977038512]
    //   power.t.test(delta = 0.5, sd = 1, power = 0.8, tol = 1e-12)$n → 63.7657637248468  [63.7657637142739]
    //   power.t.test(delta = 20, sd = 15, power = 0.95, sig.level = 0.01, tol = 1e-12)$n → 21.7708850001159
    relativeClose(valueOf(twoSampleTSampleSize({ delta: 1, sd: 1, power: 0.9 })), 22.021095570094, 8);
    relativeClose(valueOf(twoSampleTSampleSize({ delta: 0.5, power: 0.8 })), 63.7657637248468, 8);
    relativeClose(valueOf(twoSampleTSampleSize({ delta: 20, sd: 15, power: 0.95, alpha: 0.01 })), 21.7708850001159, 8);
  });

  it("agrees with Cohen's (1988) table: 64 per group for d = 0.5 and 26 for d = 0.8 at 80 % power", () => {
    // Cohen (1988), Statistical Power Analysis, Table 2.4.1 (n for α = .05 two-tailed, power .80),
    // from memory; R: power.t.test(delta = 0.8, power = 0.8)$n → 25.5246294875066
    expect(Math.ceil(valueOf(twoSampleTSampleSize({ delta: 0.5, power: 0.8 })))).toBe(64);
    expect(Math.ceil(valueOf(twoSampleTSampleSize({ delta: 0.8, power: 0.8 })))).toBe(26);
  });

  it('returns 2, the smallest design, when 2 per group already reach the power', () => {
    // R: power.t.test(n = 2, delta = 50, sd = 1)$power → 1
    expect(valueOf(twoSampleTSampleSize({ delta: 50, power: 0.8 }))).toBe(2);
  });

  it('reports the sample size as undefined for a zero difference', () => {
    expectUndefined(twoSampleTSampleSize({ delta: 0, power: 0.8 }), /difference to detect is 0/);
  });

  it('reports the sample size as undefined when more than 10 million per group would be needed', () => {
    expectUndefined(twoSampleTSampleSize({ delta: 1e-4, power: 0.8 }), /more than 10 million/);
  });

  it('throws StatsInputError for invalid inputs', () => {
    expect(() => twoSampleTPower({ delta: 1, sd: 0, nPerGroup: 10 })).toThrow(/sd must be a finite number greater than 0/);
    expect(() => twoSampleTPower({ delta: 1, nPerGroup: 1 })).toThrow(/nPerGroup must be a finite number greater than 1/);
    expect(() => twoSampleTSampleSize({ delta: 1, power: 1.5 })).toThrow(/power must be strictly between 0 and 1/);
    expect(() => twoSampleTSampleSize({ delta: Number.NaN, power: 0.8 })).toThrow(/delta must be a finite number/);
  });
});

describe('minimumDetectableRateDifference', () => {
  // Checked against R 4.2.2 solving the same power equation by root finding (uniroot), an
  // independent route to the closed-form root used here:
  //   mdd <- function(n1, n2, p0, alpha = 0.05, power = 0.8) { z <- qnorm(1 - alpha/2)
  //     f <- function(d) pnorm(d / sqrt((p0+d)*(1-p0-d)/n1 + p0*(1-p0)/n2) - z) - power
  //     uniroot(f, c(1e-12, 1 - p0 - 1e-12), tol = 1e-14)$root }
  //   c(mdd(400, 3600, 0.1), mdd(50, 5000, 0.02), mdd(1000, 1000, 0.5), mdd(30, 970, 0.3, 0.01, 0.9))
  //   → 0.0522367406999917 0.1483562712721132 0.0624009398375103 0.3423044558911405
  const cases: Array<[number, number, number, number, number, number]> = [
    [400, 3600, 0.1, 0.05, 0.8, 0.0522367406999917],
    [50, 5000, 0.02, 0.05, 0.8, 0.1483562712721132],
    [1000, 1000, 0.5, 0.05, 0.8, 0.0624009398375103],
    [30, 970, 0.3, 0.01, 0.9, 0.3423044558911405],
  ];
  for (const [n1, n2, baselineRate, alpha, power, expected] of cases) {
    it(`matches R for n1 = ${n1}, n2 = ${n2}, baseline ${baselineRate}, alpha ${alpha}, power ${power}`, () => {
      relativeClose(valueOf(minimumDetectableRateDifference({ n1, n2, baselineRate, alpha, power })), expected, 10);
    });
  }

  it('matches R for a decrease of the rate', () => {
    // R: same as above with p1 = p0 − d: f <- function(d) pnorm(d / sqrt((p0-d)*(1-p0+d)/n1 + p0*(1-p0)/n2) - z) - power
    //   → mddDown(400, 3600, 0.1) = 0.0368410779938193; mddDown(200, 800, 0.6) = 0.1102797194833049
    relativeClose(valueOf(minimumDetectableRateDifference({ n1: 400, n2: 3600, baselineRate: 0.1, direction: 'decrease' })), 0.0368410779938193, 10);
    relativeClose(valueOf(minimumDetectableRateDifference({ n1: 200, n2: 800, baselineRate: 0.6, direction: 'decrease' })), 0.1102797194833049, 10);
  });

  it('gives the target power at the returned difference', () => {
    const difference = valueOf(minimumDetectableRateDifference({ n1: 250, n2: 1750, baselineRate: 0.08, alpha: 0.05, power: 0.8 }));
    const segmentRate = 0.08 + difference;
    const standardError = Math.sqrt((segmentRate * (1 - segmentRate)) / 250 + (0.08 * 0.92) / 1750);
    const power = standardNormalCdf(difference / standardError - standardNormalQuantile(0.975));
    expect(power).toBeCloseTo(0.8, 12);
  });

  it('shrinks as the segment grows', () => {
    let previous = Number.POSITIVE_INFINITY;
    for (const n1 of [30, 100, 300, 1000, 3000]) {
      const current = valueOf(minimumDetectableRateDifference({ n1, n2: 10000, baselineRate: 0.1 }));
      expect(current).toBeLessThan(previous);
      previous = current;
    }
  });

  it('works from a baseline rate of 0', () => {
    const difference = valueOf(minimumDetectableRateDifference({ n1: 100, n2: 100, baselineRate: 0 }));
    const standardError = Math.sqrt((difference * (1 - difference)) / 100);
    expect(standardNormalCdf(difference / standardError - standardNormalQuantile(0.975))).toBeCloseTo(0.8, 12);
  });

  it('reports the difference as undefined when even a rate of 1 would not be detected', () => {
    // n1 = 5, n2 = 20 at a baseline of 0.9: at d = 0.1 the power is only
    // R: pnorm(0.1/sqrt(0.09/20) - qnorm(0.975)) → 0.319444760439933
    expectUndefined(minimumDetectableRateDifference({ n1: 5, n2: 20, baselineRate: 0.9 }), /even a rate of 1/);
  });

  it('throws StatsInputError for invalid inputs', () => {
    expect(() => minimumDetectableRateDifference({ n1: 0, n2: 10, baselineRate: 0.1 })).toThrow(/n1 must be a positive integer/);
    expect(() => minimumDetectableRateDifference({ n1: 10, n2: 10.5, baselineRate: 0.1 })).toThrow(/n2 must be a positive integer/);
    expect(() => minimumDetectableRateDifference({ n1: 10, n2: 10, baselineRate: -0.1 })).toThrow(/baselineRate/);
    expect(() => minimumDetectableRateDifference({ n1: 10, n2: 10, baselineRate: 0.1, alpha: 0 })).toThrow(/alpha must be strictly between 0 and 1/);
    expect(() => minimumDetectableRateDifference({ n1: 10, n2: 10, baselineRate: 0.1, power: 1 })).toThrow(/power must be strictly between 0 and 1/);
    expect(() => minimumDetectableRateDifference({ n1: 10, n2: 10, baselineRate: 0.1, power: 0.01 })).toThrow(StatsInputError);
  });
});

describe('minimumDetectableRateDifference with the pooled null variance (the z-test a report runs)', () => {
  // statsmodels 0.13.5 (Debian python3-statsmodels), the power of the pooled two-proportion z-test at the returned difference:
  //   power_proportions_2indep(0.0653504657562592, 0.1, 400, ratio=9, alpha=0.0025).power → 0.8000000013165655
  //   power_proportions_2indep(-0.05617318102014441, 0.1, 400, ratio=9, alpha=0.0025).power → 0.8000000000000029
  // (statsmodels counts the opposite tail too, worth about 1e-9 here.)
  it.each([
    ['increase', 0.0653504657562592],
    ['decrease', 0.05617318102014441],
  ] as const)('%s: the difference at which statsmodels finds 80 %% power', (direction, expected) => {
    const result = minimumDetectableRateDifference({ n1: 400, n2: 3600, baselineRate: 0.1, alpha: 0.0025, power: 0.8, direction, nullVariance: 'pooled-null' });
    expect(result.value).toBeCloseTo(expected, 12);
  });

  it('a fall needs more than the unpooled formula says, because the pooled null error is larger than the segment’s own', () => {
    const pooled = minimumDetectableRateDifference({ n1: 667, n2: 3333, baselineRate: 0.1, alpha: 0.05 / 34, power: 0.8, direction: 'decrease', nullVariance: 'pooled-null' });
    const unpooled = minimumDetectableRateDifference({ n1: 667, n2: 3333, baselineRate: 0.1, alpha: 0.05 / 34, power: 0.8, direction: 'decrease' });
    expect(pooled.value as number).toBeGreaterThan(unpooled.value as number);
  });

  it('no reachable difference gives a reason', () => {
    expect(minimumDetectableRateDifference({ n1: 2, n2: 2, baselineRate: 0.5, alpha: 0.001, power: 0.99, nullVariance: 'pooled-null' }).ok).toBe(false);
  });
});
