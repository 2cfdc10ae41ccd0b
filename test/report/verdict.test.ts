import { describe, expect, test } from 'vitest';
import { decideVerdict, type VerdictInput } from '../../src/report/analysis/index.js';

const base: VerdictInput = {
  tested: true,
  difference: 0.05,
  adjustedPValue: 0.001,
  adjustedEquivalencePValue: 0.9,
  alpha: 0.05,
};

describe('the verdict rule', () => {
  test('an untested segment is too small, whatever its figures', () => {
    expect(decideVerdict({ ...base, tested: false })).toBe('too_small');
  });

  test('significant after adjustment with a positive difference is better', () => {
    expect(decideVerdict(base)).toBe('better');
  });

  test('significant after adjustment with a negative difference is worse', () => {
    expect(decideVerdict({ ...base, difference: -0.05 })).toBe('worse');
  });

  test('an adjusted p-value equal to alpha is not significant', () => {
    expect(decideVerdict({ ...base, adjustedPValue: 0.05, difference: 0.001 })).toBe('inconclusive');
  });

  test('not significant, and the equivalence test within the margin significant after adjustment: equivalent', () => {
    expect(decideVerdict({ ...base, adjustedPValue: 0.6, difference: 0.001, adjustedEquivalencePValue: 0.01 })).toBe('equivalent');
  });

  test('an adjusted equivalence p-value equal to alpha is not enough', () => {
    expect(decideVerdict({ ...base, adjustedPValue: 0.6, difference: 0.001, adjustedEquivalencePValue: 0.05 })).toBe('inconclusive');
  });

  test('a real difference is reported as such even when it also lies within the margin', () => {
    expect(decideVerdict({ ...base, difference: 0.004, adjustedEquivalencePValue: 0.001 })).toBe('better');
  });

  test('without an equivalence test (no margin for the metric) a non-significant result is inconclusive', () => {
    expect(decideVerdict({ ...base, adjustedPValue: 0.9, difference: 0, adjustedEquivalencePValue: null })).toBe('inconclusive');
  });

  test('a test that could not be computed is inconclusive unless equivalence was shown', () => {
    expect(decideVerdict({ ...base, adjustedPValue: null })).toBe('inconclusive');
    expect(decideVerdict({ ...base, difference: null })).toBe('inconclusive');
  });
});
