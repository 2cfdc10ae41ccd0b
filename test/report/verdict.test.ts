import { describe, expect, test } from 'vitest';
import { decideVerdict, type VerdictInput } from '../../src/report/analysis/index.js';

const base: VerdictInput = {
  tested: true,
  difference: { estimate: 0.05, low: 0.02, high: 0.08 },
  adjustedPValue: 0.001,
  alpha: 0.05,
  mddIncrease: 0.03,
  mddDecrease: 0.03,
};

describe('the verdict rule', () => {
  test('an untested segment is too small, whatever its figures', () => {
    expect(decideVerdict({ ...base, tested: false })).toBe('too_small');
  });

  test('significant after adjustment with a positive difference is better', () => {
    expect(decideVerdict(base)).toBe('better');
  });

  test('significant after adjustment with a negative difference is worse', () => {
    expect(decideVerdict({ ...base, difference: { estimate: -0.05, low: -0.08, high: -0.02 } })).toBe('worse');
  });

  test('an adjusted p-value equal to alpha is not significant', () => {
    expect(decideVerdict({ ...base, adjustedPValue: 0.05, difference: { estimate: 0.001, low: -0.01, high: 0.012 } })).toBe('no_detectable_difference');
  });

  test('not significant with an interval inside the detectable differences is no detectable difference', () => {
    expect(decideVerdict({ ...base, adjustedPValue: 0.6, difference: { estimate: 0.001, low: -0.029, high: 0.029 } })).toBe('no_detectable_difference');
  });

  test('not significant with an interval reaching the detectable difference upwards is inconclusive', () => {
    expect(decideVerdict({ ...base, adjustedPValue: 0.3, difference: { estimate: 0.01, low: -0.01, high: 0.03 } })).toBe('inconclusive');
  });

  test('not significant with an interval reaching the detectable difference downwards is inconclusive', () => {
    expect(decideVerdict({ ...base, adjustedPValue: 0.3, mddDecrease: 0.02, difference: { estimate: -0.005, low: -0.021, high: 0.01 } })).toBe('inconclusive');
  });

  test('a direction in which no difference is detectable leaves the result inconclusive', () => {
    expect(decideVerdict({ ...base, adjustedPValue: 0.9, mddIncrease: null, difference: { estimate: 0, low: -0.001, high: 0.001 } })).toBe('inconclusive');
  });

  test('a test that could not be computed is inconclusive', () => {
    expect(decideVerdict({ ...base, adjustedPValue: null })).toBe('inconclusive');
    expect(decideVerdict({ ...base, difference: null })).toBe('inconclusive');
  });
});
