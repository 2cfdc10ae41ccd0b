import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  StatsInputError,
  cohensH,
  fisherExactTest,
  katzRatioInterval,
  newcombeDifferenceInterval,
  twoProportionZTest,
  wilsonInterval,
} from '../../src/stats/index.js';
import type { EstimateWithInterval, Outcome } from '../../src/stats/index.js';
import { expectUndefined, valueOf } from '../support/outcomes.js';

function expectInterval(outcome: Outcome<EstimateWithInterval>, low: number, high: number, digits: number): void {
  const { interval } = valueOf(outcome);
  expect(interval.low).toBeCloseTo(low, digits);
  expect(interval.high).toBeCloseTo(high, digits);
}

// A group of counts: trials 1..200, successes 0..trials.
const groupArbitrary = fc.integer({ min: 1, max: 200 }).chain((trials) =>
  fc.record({ successes: fc.integer({ min: 0, max: trials }), trials: fc.constant(trials) }),
);
const confidenceArbitrary = fc.double({ min: 0.5, max: 0.999, noNaN: true });

describe('wilsonInterval', () => {
  // Newcombe (1998a), Statistics in Medicine 17, 857–872, table of examples, Wilson score
  // method — values to 4 decimals from memory; each also checked in R 4.2.2:
  //   prop.test(x, n, correct = FALSE)$conf.int
  const examples: Array<[number, number, number, number, string]> = [
    // [x, n, low, high, R output]
    [81, 263, 0.2553, 0.3662, '0.255288519878274 0.366209576982800'],
    [15, 148, 0.0624, 0.1605, '0.0623863995307363 0.1604872417233080'],
    [0, 20, 0.0, 0.1611, '0.000000000000000 0.161125158052819'],
    [1, 29, 0.0061, 0.1718, '0.00611321429276266 0.17175521879320282'],
  ];
  for (const [successes, trials, low, high, rOutput] of examples) {
    it(`reproduces the published Wilson interval for ${successes}/${trials}`, () => {
      const [rLow, rHigh] = rOutput.split(' ').map(Number) as [number, number];
      expectInterval(wilsonInterval(successes, trials, 0.95), low, high, 4);
      expectInterval(wilsonInterval(successes, trials, 0.95), rLow, rHigh, 12);
    });
  }

  it('matches R at 90 % and 99 % confidence', () => {
    // R: prop.test(81, 263, correct = FALSE, conf.level = 0.9)$conf.int  → 0.263313617188481 0.356566349608488
    expectInterval(wilsonInterval(81, 263, 0.9), 0.263313617188481, 0.356566349608488, 12);
    // R: prop.test(81, 263, correct = FALSE, conf.level = 0.99)$conf.int → 0.240136902687608 0.385282502318230
    expectInterval(wilsonInterval(81, 263, 0.99), 0.240136902687608, 0.38528250231823, 12);
  });

  it('gives exactly 1 as the upper bound when every trial succeeds (x = n)', () => {
    // R: prop.test(29, 29, correct = FALSE)$conf.int → 0.883030201500259 1.000000000000000
    const result = valueOf(wilsonInterval(29, 29, 0.95));
    expect(result.estimate).toBe(1);
    expect(result.interval.high).toBe(1);
    expect(result.interval.low).toBeCloseTo(0.883030201500259, 12);
  });

  it('gives exactly 0 as the lower bound when no trial succeeds (x = 0)', () => {
    const result = valueOf(wilsonInterval(0, 20, 0.95));
    expect(result.estimate).toBe(0);
    expect(result.interval.low).toBe(0);
  });

  it('reports the rate of a group with no trials (n = 0) as undefined', () => {
    expectUndefined(wilsonInterval(0, 0, 0.95), /no trials/);
  });

  it('contains its estimate and widens with the confidence level', () => {
    fc.assert(
      fc.property(groupArbitrary, confidenceArbitrary, confidenceArbitrary, ({ successes, trials }, first, second) => {
        const [lower, higher] = first <= second ? [first, second] : [second, first];
        const narrow = valueOf(wilsonInterval(successes, trials, lower));
        const wide = valueOf(wilsonInterval(successes, trials, higher));
        expect(narrow.interval.low).toBeLessThanOrEqual(narrow.estimate);
        expect(narrow.interval.high).toBeGreaterThanOrEqual(narrow.estimate);
        expect(wide.interval.low).toBeLessThanOrEqual(narrow.interval.low + 1e-15);
        expect(wide.interval.high).toBeGreaterThanOrEqual(narrow.interval.high - 1e-15);
        expect(wide.interval.low).toBeGreaterThanOrEqual(0);
        expect(wide.interval.high).toBeLessThanOrEqual(1);
      }),
      { numRuns: 300 },
    );
  });

  it('throws StatsInputError for negative counts', () => {
    expect(() => wilsonInterval(-1, 10, 0.95)).toThrow(StatsInputError);
    expect(() => wilsonInterval(-1, 10, 0.95)).toThrow(/successes must be a non-negative integer, got -1/);
    expect(() => wilsonInterval(1, -10, 0.95)).toThrow(/trials must be a non-negative integer/);
  });

  it('throws StatsInputError when successes exceed trials', () => {
    expect(() => wilsonInterval(11, 10, 0.95)).toThrow(/successes \(11\) must not exceed trials \(10\)/);
  });

  it('throws StatsInputError for non-integer or non-finite counts', () => {
    expect(() => wilsonInterval(2.5, 10, 0.95)).toThrow(/successes must be a non-negative integer, got 2.5/);
    expect(() => wilsonInterval(2, Number.NaN, 0.95)).toThrow(/trials/);
    expect(() => wilsonInterval(2, Number.POSITIVE_INFINITY, 0.95)).toThrow(/trials/);
  });

  it('throws StatsInputError for a confidence outside (0, 1)', () => {
    for (const confidence of [0, 1, 1.2, -0.5, 95, Number.NaN]) {
      expect(() => wilsonInterval(2, 10, confidence)).toThrow(/confidence must be strictly between 0 and 1/);
    }
  });

  it('gives the thrown error the name StatsInputError and the argument', () => {
    try {
      wilsonInterval(5, 3, 0.95);
      expect.unreachable();
    } catch (error) {
      expect(error).toBeInstanceOf(StatsInputError);
      expect((error as StatsInputError).name).toBe('StatsInputError');
      expect((error as StatsInputError).argument).toBe('successes');
    }
  });
});

describe('newcombeDifferenceInterval', () => {
  // Newcombe (1998b), Statistics in Medicine 17, 873–890, Table II, method 10 (hybrid
  // score). The 4-decimal values in the "memory" column are from memory of the table. Each
  // case is also computed with statsmodels 0.13.5 (Debian python3-statsmodels), independent of
  // this code:
  //   python3 -c "from statsmodels.stats.proportion import confint_proportions_2indep as c;
  //     print(c(x1, n1, x2, n2, method='newcomb', compare='diff', alpha=0.05))"
  // The last two cases (10/10 − 0/20, 10/10 − 0/10) are recalled as the table's remaining rows
  // (from memory); only the statsmodels values are asserted for them.
  // For 6/7 − 2/7 and 5/56 − 0/29 the values first recalled (0.0342 to 0.8423 and −0.0326 to
  // 0.1933) do not reproduce in statsmodels or here; the statsmodels values below are used.
  const table: Array<{ counts: [number, number, number, number]; memory: [number, number] | null; statsmodels: [number, number] }> = [
    { counts: [56, 70, 48, 80], memory: [0.0524, 0.3339], statsmodels: [0.05243147240236498, 0.33387265403690614] },
    { counts: [9, 10, 3, 10], memory: [0.1705, 0.809], statsmodels: [0.1705227239345029, 0.809017973535488] },
    { counts: [6, 7, 2, 7], memory: null, statsmodels: [0.05822792748231209, 0.8062496375242278] },
    { counts: [5, 56, 0, 29], memory: null, statsmodels: [-0.038137147903536936, 0.19256001385511165] },
    { counts: [0, 10, 0, 20], memory: [-0.1611, 0.2775], statsmodels: [-0.1611251580528194, 0.27753279986288926] },
    { counts: [0, 10, 0, 10], memory: [-0.2775, 0.2775], statsmodels: [-0.27753279986288926, 0.27753279986288926] },
    { counts: [10, 10, 0, 20], memory: null, statsmodels: [0.6790860371419145, 1.0] },
    { counts: [10, 10, 0, 10], memory: null, statsmodels: [0.6075093504305241, 1.0] },
  ];
  for (const { counts, memory, statsmodels } of table) {
    const [x1, n1, x2, n2] = counts;
    it(`reproduces the method 10 interval for ${x1}/${n1} − ${x2}/${n2}`, () => {
      const outcome = newcombeDifferenceInterval(x1, n1, x2, n2, 0.95);
      expectInterval(outcome, statsmodels[0], statsmodels[1], 12);
      if (memory !== null) expectInterval(outcome, memory[0], memory[1], 4);
      expect(valueOf(outcome).estimate).toBeCloseTo(x1 / n1 - x2 / n2, 15);
    });
  }

  it('matches statsmodels at 90 % confidence', () => {
    // statsmodels: c(56, 70, 48, 80, method='newcomb', compare='diff', alpha=0.10) → (0.07656419154407207, 0.31364458358294384)
    expectInterval(newcombeDifferenceInterval(56, 70, 48, 80, 0.9), 0.07656419154407207, 0.31364458358294384, 12);
  });

  it('reports the difference as undefined when a group has no trials (n = 0)', () => {
    expectUndefined(newcombeDifferenceInterval(0, 0, 3, 10, 0.95), /group 1 has no trials/);
    expectUndefined(newcombeDifferenceInterval(3, 10, 0, 0, 0.95), /group 2 has no trials/);
  });

  it('flips sign when the groups are swapped', () => {
    // statsmodels: c(48, 80, 56, 70, method='newcomb', compare='diff') → (-0.33387265403690614, -0.05243147240236498)
    expectInterval(newcombeDifferenceInterval(48, 80, 56, 70, 0.95), -0.33387265403690614, -0.05243147240236498, 12);
    fc.assert(
      fc.property(groupArbitrary, groupArbitrary, confidenceArbitrary, (first, second, confidence) => {
        const forward = valueOf(newcombeDifferenceInterval(first.successes, first.trials, second.successes, second.trials, confidence));
        const backward = valueOf(newcombeDifferenceInterval(second.successes, second.trials, first.successes, first.trials, confidence));
        expect(backward.estimate).toBeCloseTo(-forward.estimate, 14);
        expect(backward.interval.low).toBeCloseTo(-forward.interval.high, 14);
        expect(backward.interval.high).toBeCloseTo(-forward.interval.low, 14);
      }),
      { numRuns: 300 },
    );
  });

  it('contains its estimate, stays within [−1, 1] and widens with the confidence level', () => {
    fc.assert(
      fc.property(groupArbitrary, groupArbitrary, confidenceArbitrary, confidenceArbitrary, (first, second, c1, c2) => {
        const [lower, higher] = c1 <= c2 ? [c1, c2] : [c2, c1];
        const narrow = valueOf(newcombeDifferenceInterval(first.successes, first.trials, second.successes, second.trials, lower));
        const wide = valueOf(newcombeDifferenceInterval(first.successes, first.trials, second.successes, second.trials, higher));
        expect(narrow.interval.low).toBeLessThanOrEqual(narrow.estimate + 1e-15);
        expect(narrow.interval.high).toBeGreaterThanOrEqual(narrow.estimate - 1e-15);
        expect(wide.interval.low).toBeLessThanOrEqual(narrow.interval.low + 1e-15);
        expect(wide.interval.high).toBeGreaterThanOrEqual(narrow.interval.high - 1e-15);
        expect(wide.interval.low).toBeGreaterThanOrEqual(-1);
        expect(wide.interval.high).toBeLessThanOrEqual(1);
      }),
      { numRuns: 300 },
    );
  });

  it('throws StatsInputError naming the bad count', () => {
    expect(() => newcombeDifferenceInterval(5, 4, 1, 4, 0.95)).toThrow(/x1 \(5\) must not exceed n1 \(4\)/);
    expect(() => newcombeDifferenceInterval(1, 4, -1, 4, 0.95)).toThrow(/x2 must be a non-negative integer/);
    expect(() => newcombeDifferenceInterval(1, 4, 1, 4, 1)).toThrow(/confidence/);
  });
});

describe('twoProportionZTest', () => {
  // R 4.2.2: r <- prop.test(c(x1, x2), c(n1, n2), correct = FALSE); c(r$statistic, r$p.value)
  // The statistic is X² = z²; z takes the sign of p̂₁ − p̂₂.
  const cases: Array<[number, number, number, number, number, number]> = [
    // x1, n1, x2, n2, X-squared, p-value
    [56, 70, 48, 80, 7.02341137123746, 0.00804508136819656],
    [15, 148, 81, 263, 22.5880483442092, 2.0072944202557e-6],
    [120, 1000, 150, 1000, 3.85356454720617, 0.0496403868653688],
    [3, 40, 1, 55, 1.85361513486514, 0.173363517526892],
  ];
  for (const [x1, n1, x2, n2, chiSquare, pValue] of cases) {
    it(`matches R prop.test for ${x1}/${n1} vs ${x2}/${n2}`, () => {
      const result = valueOf(twoProportionZTest(x1, n1, x2, n2));
      expect(result.z * result.z).toBeCloseTo(chiSquare, 10);
      expect(Math.sign(result.z)).toBe(Math.sign(x1 / n1 - x2 / n2));
      expect(result.pValue / pValue).toBeCloseTo(1, 10);
    });
  }

  it('reports the test as undefined when no unit in either group succeeds', () => {
    expectUndefined(twoProportionZTest(0, 50, 0, 70), /same outcome/);
  });

  it('reports the test as undefined when every unit in both groups succeeds', () => {
    expectUndefined(twoProportionZTest(50, 50, 70, 70), /same outcome/);
  });

  it('reports the test as undefined when a group has no trials (n = 0)', () => {
    expectUndefined(twoProportionZTest(0, 0, 3, 10), /no trials/);
  });

  it('throws StatsInputError for invalid counts', () => {
    expect(() => twoProportionZTest(3, 2, 1, 4)).toThrow(StatsInputError);
    expect(() => twoProportionZTest(1, 2, 1.5, 4)).toThrow(/x2 must be a non-negative integer/);
  });
});

describe('fisherExactTest', () => {
  // R 4.2.2: fisher.test(matrix(c(x1, n1 - x1, x2, n2 - x2), 2))$p.value
  const cases: Array<[number, number, number, number, number]> = [
    [3, 4, 1, 4, 0.485714285714286],
    [1, 10, 6, 12, 0.0743034055727553],
    [0, 5, 4, 6, 0.0606060606060605],
    [12, 30, 3, 40, 0.00234291926095818],
    [2, 50, 0, 60, 0.204336947456214],
    [10, 10, 0, 10, 1.0825088224469e-5],
    [5, 100, 5, 100, 1],
    [7, 20, 7, 20, 1],
  ];
  for (const [x1, n1, x2, n2, pValue] of cases) {
    it(`matches R fisher.test for ${x1}/${n1} vs ${x2}/${n2}`, () => {
      const result = valueOf(fisherExactTest(x1, n1, x2, n2));
      expect(result.pValue / pValue).toBeCloseTo(1, 10);
    });
  }

  it('gives p = 1 when neither group has a success', () => {
    // R: fisher.test(matrix(c(0, 8, 0, 9), 2))$p.value → 1
    expect(valueOf(fisherExactTest(0, 8, 0, 9)).pValue).toBe(1);
  });

  it('gives the same p-value when the groups are swapped', () => {
    fc.assert(
      fc.property(groupArbitrary, groupArbitrary, (first, second) => {
        const forward = valueOf(fisherExactTest(first.successes, first.trials, second.successes, second.trials));
        const backward = valueOf(fisherExactTest(second.successes, second.trials, first.successes, first.trials));
        expect(backward.pValue).toBeCloseTo(forward.pValue, 12);
        expect(forward.pValue).toBeGreaterThan(0);
        expect(forward.pValue).toBeLessThanOrEqual(1);
      }),
      { numRuns: 100 },
    );
  });

  it('reports the test as undefined when a group has no trials (n = 0)', () => {
    expectUndefined(fisherExactTest(2, 5, 0, 0), /group 2 has no trials/);
  });

  it('throws StatsInputError for invalid counts', () => {
    expect(() => fisherExactTest(-2, 5, 0, 3)).toThrow(/x1 must be a non-negative integer/);
  });
});

describe('katzRatioInterval', () => {
  // statsmodels 0.13.5 (independent of this code):
  //   python3 -c "from statsmodels.stats.proportion import confint_proportions_2indep as c;
  //     print(c(x1, n1, x2, n2, method='log', compare='ratio', alpha=0.05))"
  const cases: Array<[number, number, number, number, number, number]> = [
    [56, 70, 48, 80, 1.0766264227631928, 1.6512485112663873],
    [9, 10, 3, 10, 1.1383503574476697, 7.906177514784793],
    [5, 56, 2, 29, 0.26737800997121175, 6.268653610412777],
    [30, 1000, 20, 1500, 1.2850837020075465, 3.9394321102130583],
  ];
  for (const [x1, n1, x2, n2, low, high] of cases) {
    it(`matches statsmodels' log interval for ${x1}/${n1} ÷ ${x2}/${n2}`, () => {
      const outcome = katzRatioInterval(x1, n1, x2, n2, 0.95);
      expectInterval(outcome, low, high, 12);
      expect(valueOf(outcome).estimate).toBeCloseTo(x1 / n1 / (x2 / n2), 14);
    });
  }

  it('reports the interval as undefined when group 1 has no successes (x1 = 0, log of 0)', () => {
    expectUndefined(katzRatioInterval(0, 50, 5, 50, 0.95), /group 1 has no successes/);
  });

  it('reports the ratio as undefined when group 2 has no successes (x2 = 0, division by 0)', () => {
    expectUndefined(katzRatioInterval(5, 50, 0, 50, 0.95), /group 2 has no successes/);
  });

  it('reports the ratio as undefined when a group has no trials (n = 0)', () => {
    expectUndefined(katzRatioInterval(0, 0, 5, 50, 0.95), /no trials/);
  });

  it('gives the degenerate interval [1, 1] when every unit in both groups succeeds', () => {
    // The log standard error √(1/x₁ − 1/n₁ + 1/x₂ − 1/n₂) is exactly 0 when x = n in both.
    const result = valueOf(katzRatioInterval(20, 20, 30, 30, 0.95));
    expect(result).toEqual({ estimate: 1, interval: { low: 1, high: 1 } });
  });

  it('contains its estimate, widens with confidence, and inverts when the groups are swapped', () => {
    const positive = fc.integer({ min: 1, max: 200 }).chain((trials) =>
      fc.record({ successes: fc.integer({ min: 1, max: trials }), trials: fc.constant(trials) }),
    );
    fc.assert(
      fc.property(positive, positive, confidenceArbitrary, confidenceArbitrary, (first, second, c1, c2) => {
        const [lower, higher] = c1 <= c2 ? [c1, c2] : [c2, c1];
        const narrow = valueOf(katzRatioInterval(first.successes, first.trials, second.successes, second.trials, lower));
        const wide = valueOf(katzRatioInterval(first.successes, first.trials, second.successes, second.trials, higher));
        const swapped = valueOf(katzRatioInterval(second.successes, second.trials, first.successes, first.trials, lower));
        expect(narrow.interval.low).toBeLessThanOrEqual(narrow.estimate * (1 + 1e-14));
        expect(narrow.interval.high).toBeGreaterThanOrEqual(narrow.estimate * (1 - 1e-14));
        expect(wide.interval.low).toBeLessThanOrEqual(narrow.interval.low * (1 + 1e-14));
        expect(wide.interval.high).toBeGreaterThanOrEqual(narrow.interval.high * (1 - 1e-14));
        expect(swapped.interval.low * narrow.interval.high).toBeCloseTo(1, 12);
      }),
      { numRuns: 200 },
    );
  });

  it('throws StatsInputError for a confidence outside (0, 1)', () => {
    expect(() => katzRatioInterval(5, 50, 5, 50, 0)).toThrow(/confidence must be strictly between 0 and 1, got 0/);
  });
});

describe('cohensH', () => {
  it('equals π/6 for 0.5 against 0.25', () => {
    // 2·asin(√0.5) = π/2 and 2·asin(√0.25) = π/3 exactly; Cohen (1988), ch. 6, Table 6.2.1
    // lists φ = 1.571 and 1.047 for these proportions (from memory).
    expect(cohensH(0.5, 0.25)).toBeCloseTo(Math.PI / 6, 15);
  });

  it('equals π for 1 against 0 and −π for 0 against 1', () => {
    expect(cohensH(1, 0)).toBeCloseTo(Math.PI, 15);
    expect(cohensH(0, 1)).toBeCloseTo(-Math.PI, 15);
  });

  it('matches R for 0.65 against 0.45', () => {
    // R 4.2.2: options(digits = 15); 2*asin(sqrt(0.65)) - 2*asin(sqrt(0.45)) → 0.404860075176958
    expect(cohensH(0.65, 0.45)).toBeCloseTo(0.404860075176958, 13);
  });

  it('throws StatsInputError for a proportion outside [0, 1]', () => {
    expect(() => cohensH(1.2, 0.5)).toThrow(/p1 must be between 0 and 1 inclusive, got 1.2/);
    expect(() => cohensH(0.5, Number.NaN)).toThrow(/p2/);
  });
});
