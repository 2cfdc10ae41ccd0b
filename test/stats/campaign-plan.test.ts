import { describe, expect, it } from 'vitest';
import {
  StatsInputError,
  planHoldoutCampaign,
  twoProportionSampleSize,
  unequalTwoProportionPower,
  unequalTwoProportionSampleSize,
} from '../../src/stats/index.js';
import { expectUndefined, valueOf } from '../support/outcomes.js';

function relativeClose(actual: number, expected: number, digits: number): void {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(10 ** -digits * Math.abs(expected));
}

describe('unequalTwoProportionSampleSize (Fleiss, Levin & Paik 2003, unequal groups)', () => {
  it('reproduces R power.prop.test with equal groups', () => {
    // R 4.2.2 (as in power.test.ts): power.prop.test(p1 = 0.10, p2 = 0.15, power = 0.8, tol = 1e-12)$n → 685.596858325361
    //                                 power.prop.test(p1 = 0.5, p2 = 0.75, power = 0.9, tol = 1e-12)$n  → 76.7069284517774
    const a = valueOf(unequalTwoProportionSampleSize({ p1: 0.1, p2: 0.15, ratio: 1, power: 0.8 }));
    relativeClose(a.n1, 685.596858325361, 11);
    relativeClose(a.n2, 685.596858325361, 11);
    relativeClose(valueOf(unequalTwoProportionSampleSize({ p1: 0.5, p2: 0.75, ratio: 1, power: 0.9 })).n1, 76.7069284517774, 11);
  });

  it('matches an independent root-finding of the pooled z-test power for unequal groups', () => {
    // python3 + scipy 1.17.1: brentq on power(n1) − target, power = Φ((|p2 − p1| − z(1 − α/2)·SE0)/SE1) with
    // SE0 pooled over n1 and r·n1, SE1 unpooled (the statsmodels samplesize_proportions_2indep_onetail
    // definition); script: brentq(lambda n: power(p1, p2, n, r*n, alpha) - pw, 1e-3, 1e9, xtol=1e-13, rtol=1e-15)
    //   (p1, p2, r, power, alpha) = (0.10, 0.15, 4, 0.8, 0.05)      → n1 = 444.5096789768701
    //   (0.04, 0.05, 4, 0.8, 0.05/3)                                  → n1 = 5789.158704427915
    //   (0.02, 0.025, 9, 0.9, 0.01)                                   → n1 = 14940.855121516617
    //   (0.3, 0.35, 0.25, 0.8, 0.05)                                  → n1 = 3404.9954795551685
    const cases: Array<[number, number, number, number, number, number]> = [
      [0.1, 0.15, 4, 0.8, 0.05, 444.5096789768701],
      [0.04, 0.05, 4, 0.8, 0.05 / 3, 5789.158704427915],
      [0.02, 0.025, 9, 0.9, 0.01, 14940.855121516617],
      [0.3, 0.35, 0.25, 0.8, 0.05, 3404.9954795551685],
    ];
    for (const [p1, p2, ratio, power, alpha, expected] of cases) {
      const sizes = valueOf(unequalTwoProportionSampleSize({ p1, p2, ratio, power, alpha }));
      relativeClose(sizes.n1, expected, 10);
      relativeClose(sizes.n2, ratio * expected, 10);
    }
  });

  it('gives back the target power at the computed sizes', () => {
    const sizes = valueOf(unequalTwoProportionSampleSize({ p1: 0.07, p2: 0.09, ratio: 6, power: 0.85, alpha: 0.01 }));
    relativeClose(unequalTwoProportionPower({ p1: 0.07, p2: 0.09, n1: sizes.n1, n2: sizes.n2, alpha: 0.01 }), 0.85, 12);
  });

  it('needs fewer units in all with equal groups than with a lopsided split (equal allocation is near-optimal)', () => {
    const equal = valueOf(unequalTwoProportionSampleSize({ p1: 0.1, p2: 0.12, ratio: 1, power: 0.8 }));
    const lopsided = valueOf(unequalTwoProportionSampleSize({ p1: 0.1, p2: 0.12, ratio: 9, power: 0.8 }));
    expect(equal.n1 + equal.n2).toBeLessThan(lopsided.n1 + lopsided.n2);
  });

  it('reports equal rates as undefined and rejects bad inputs', () => {
    expectUndefined(unequalTwoProportionSampleSize({ p1: 0.2, p2: 0.2, ratio: 2, power: 0.8 }), /rates are equal/);
    expect(() => unequalTwoProportionSampleSize({ p1: 0.2, p2: 0.3, ratio: 0, power: 0.8 })).toThrow(StatsInputError);
  });
});

describe('planHoldoutCampaign', () => {
  it('with half held back, equals R power.prop.test n rounded up in each arm', () => {
    // R 4.2.2: power.prop.test(p1 = 0.10, p2 = 0.15, power = 0.8, tol = 1e-12)$n → 685.596858325361 → 686 each
    const plan = valueOf(planHoldoutCampaign({ baselineRate: 0.1, minUplift: 0.05, holdoutShare: 0.5 }));
    expect(plan).toMatchObject({ holdoutPerSegment: 686, treatedPerSegment: 686, contactsPerSegment: 1372, totalContacts: 1372, alphaPerTest: 0.05, ratio: 1 });
    // cross-check against the existing equal-groups solver, the same R convention
    relativeClose(plan.exactHoldout, valueOf(twoProportionSampleSize({ p1: 0.1, p2: 0.15, power: 0.8 })), 12);
  });

  it('splits α over the segments and rounds each arm up (scipy values above)', () => {
    // (0.04, 0.05, r = 4, power 0.8, α = 0.05/3) → n1 = 5789.158704427915, n2 = 23156.63481771166 (scipy brentq, above)
    const plan = valueOf(planHoldoutCampaign({ baselineRate: 0.04, minUplift: 0.01, segments: 3 }));
    expect(plan).toMatchObject({ holdoutPerSegment: 5790, treatedPerSegment: 23157, contactsPerSegment: 28947, totalContacts: 86841, ratio: 4 });
    relativeClose(plan.alphaPerTest, 0.05 / 3, 14);
  });

  it('uses the defaults 20 % holdout, 1 segment, 95 % confidence, 80 % power', () => {
    // (0.10, 0.15, r = 4, power 0.8, α = 0.05) → n1 = 444.5096789768701 (scipy brentq, above) → 445 and 1779
    expect(valueOf(planHoldoutCampaign({ baselineRate: 0.1, minUplift: 0.05 }))).toMatchObject({ holdoutPerSegment: 445, treatedPerSegment: 1779, totalContacts: 2224 });
  });

  it('rounds each arm up to the next whole customer', () => {
    for (const holdoutShare of [0.1, 0.15, 0.3, 0.5]) {
      const plan = valueOf(planHoldoutCampaign({ baselineRate: 0.05, minUplift: 0.015, holdoutShare, segments: 4 }));
      expect(plan.holdoutPerSegment).toBeGreaterThanOrEqual(plan.exactHoldout);
      expect(plan.holdoutPerSegment - plan.exactHoldout).toBeLessThan(1);
      expect(plan.treatedPerSegment).toBeGreaterThanOrEqual(plan.exactTreated);
      expect(plan.treatedPerSegment - plan.exactTreated).toBeLessThan(1);
    }
  });

  it('is undefined when the contacted rate would pass 1, and rejects bad inputs naming them', () => {
    expectUndefined(planHoldoutCampaign({ baselineRate: 0.9, minUplift: 0.2 }), /above a rate of 1/);
    expect(() => planHoldoutCampaign({ baselineRate: 0.1, minUplift: 0 })).toThrow(/minUplift must be a number greater than 0/);
    expect(() => planHoldoutCampaign({ baselineRate: 0.1, minUplift: 0.01, segments: 1.5 })).toThrow(/segments must be a positive whole number/);
    expect(() => planHoldoutCampaign({ baselineRate: 0.1, minUplift: 0.01, holdoutShare: 1 })).toThrow(/holdoutShare must be strictly between 0 and 1/);
    expect(() => planHoldoutCampaign({ baselineRate: 1, minUplift: 0.01 })).toThrow(/baselineRate must be below 1/);
  });
});
