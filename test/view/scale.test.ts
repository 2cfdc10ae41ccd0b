import { describe, expect, test } from 'vitest';
import { niceScale } from '../../src/view/charts/scale.js';

// Expected values worked by hand from the rule: step = the first of 1, 2, 5, 10 × 10^k at least range / targetTicks.
describe('nice axis scales', () => {
  test('a range that crosses zero gets round ends and ticks that include zero', () => {
    expect(niceScale([-2.3, 7.9], 0)).toEqual({ domain: [-4, 8], step: 2, ticks: [-4, -2, 0, 2, 4, 6, 8] });
  });

  test('all-positive values are widened down to the included zero', () => {
    expect(niceScale([80], 0)).toEqual({ domain: [0, 80], step: 20, ticks: [0, 20, 40, 60, 80] });
  });

  test('a value that is a whole number of steps does not add a step', () => {
    expect(niceScale([-10, 15], 0).domain).toEqual([-10, 15]);
  });

  test('the high end is never below the largest value', () => {
    expect(niceScale([-25, 13.2], 0).domain).toEqual([-30, 20]);
  });

  test('small fractional ranges get ticks without floating-point dust', () => {
    expect(niceScale([0.1, 0.3], 0).ticks).toEqual([0, 0.05, 0.1, 0.15, 0.2, 0.25, 0.3]);
  });

  test('no values around zero give one step either side', () => {
    expect(niceScale([], 0)).toEqual({ domain: [-1, 1], step: 0.5, ticks: [-1, -0.5, 0, 0.5, 1] });
  });

  test('a value that is not finite is refused', () => {
    expect(() => niceScale([1, Number.NaN], 0)).toThrow(/not a finite number/);
  });
});
