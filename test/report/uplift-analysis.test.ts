import { describe, expect, it } from 'vitest';
import { adviceInterval, adviceOf, analyzeHoldout, type HoldoutArms } from '../../src/report/analysis/uplift.js';
import { cellStats, type GroupStats } from '../../src/segments/index.js';
import { ZERO_SHIFTS, block, cellsFromUnits } from './cells.js';

function armStats(n: number, conversions: number): GroupStats {
  const [cell] = cellsFromUnits(block(['all'], n, conversions));
  return cellStats(cell!, ZERO_SHIFTS);
}

// Segment: 120 of 800 contacted and 15 of 200 held out converted; rest: 300 of 3200 and 60 of 800.
const arms: HoldoutArms = {
  segment: { contacted: armStats(800, 120), holdout: armStats(200, 15) },
  rest: { contacted: armStats(3200, 300), holdout: armStats(800, 60) },
};
const economics = { margin: 0.4, cost_per_contact: 0.2 };

describe('analyzeHoldout', () => {
  // Check values: `python3 test/stats/reference/uplift-reference.py` (statsmodels 0.15.0,
  // scipy 1.17.1): confint_proportions_2indep(method='newcomb'), proportions_ztest, the
  // Altman & Bland (2003) difference of two estimates, ttest_ind(equal_var=False).
  it('gives every figure of a segment with both arms large enough, equal to the independent computation', () => {
    const { figures, notes } = analyzeHoldout(arms, { confidence: 0.95, minN: 30, economics });
    expect(notes).toEqual([]);
    expect(figures).toMatchObject({ holdout_n: 200, holdout_conversions: 15, uplift_p_adjusted: null, advice: null });
    expect(figures.holdout_rate).toBeCloseTo(0.075, 12);
    expect(figures.uplift).toBeCloseTo(0.075, 12);
    expect(figures.uplift_ci_low).toBeCloseTo(0.0243930271184242, 9);
    expect(figures.uplift_ci_high).toBeCloseTo(0.11424436820870282, 9);
    expect(Math.abs((figures.uplift_p_value ?? Number.NaN) - 0.005500315922190029)).toBeLessThan(1e-10);
    expect(figures.uplift_vs_rest).toBeCloseTo(0.056249999999999994, 12);
    expect(figures.uplift_vs_rest_ci_low).toBeCloseTo(0.007466223063396497, 9);
    expect(figures.uplift_vs_rest_ci_high).toBeCloseTo(0.10503377693660348, 9);
    expect(Math.abs((figures.uplift_vs_rest_p_value ?? Number.NaN) - 0.023825528062642976)).toBeLessThan(1e-10);
    expect(figures.incremental_value_per_contact).toBeCloseTo(0.765, 9);
    expect(figures.incremental_value_ci_low).toBeCloseTo(0.31291655853313344, 7);
    expect(figures.incremental_value_ci_high).toBeCloseTo(1.2170834414668665, 7);
    expect(figures.incremental_profit_per_contact).toBeCloseTo(0.10600000000000004, 9);
    expect(figures.incremental_profit_ci_low).toBeCloseTo(-0.07483337658674663, 7);
    expect(figures.incremental_profit_ci_high).toBeCloseTo(0.2868333765867466, 7);
  });

  it('leaves the profit null without economics', () => {
    const { figures } = analyzeHoldout(arms, { confidence: 0.95, minN: 30, economics: null });
    expect(figures.incremental_value_per_contact).not.toBeNull();
    expect(figures.incremental_profit_per_contact).toBeNull();
    expect(figures.incremental_profit_ci_low).toBeNull();
  });

  it('measures nothing, and says why, when an arm of the segment is below min_n', () => {
    const { figures, notes } = analyzeHoldout(arms, { confidence: 0.95, minN: 250, economics });
    expect(figures.holdout_n).toBe(200);
    expect(figures.uplift).toBeNull();
    expect(figures.incremental_profit_per_contact).toBeNull();
    expect(notes).toEqual(['The uplift was not measured: it needs at least 250 contacted and 250 held-out customers in the segment, and it has 800 and 200.']);
  });
});

describe('advice', () => {
  it('reads the profit interval at the family-adjusted confidence (here 1 − 0.05/3)', () => {
    const interval = adviceInterval(arms, { confidence: 0.95, minN: 30, economics }, 1 - 0.05 / 3);
    expect(interval?.low).toBeCloseTo(-0.11513781772450989, 7);
    expect(interval?.high).toBeCloseTo(0.32713781772451006, 7);
    expect(adviceOf(interval)).toBe('undecided');
  });

  it('reads the uplift interval without economics', () => {
    const interval = adviceInterval(arms, { confidence: 0.95, minN: 30, economics: null }, 0.95);
    expect(interval?.low).toBeCloseTo(0.0243930271184242, 9);
    expect(adviceOf(interval)).toBe('contact');
  });

  it('holds back when the whole interval is below zero, and gives none without an interval', () => {
    expect(adviceOf({ low: -0.3, high: -0.01 })).toBe('hold_back');
    expect(adviceOf({ low: -0.3, high: 0 })).toBe('undecided');
    expect(adviceOf(null)).toBeNull();
    expect(adviceInterval(arms, { confidence: 0.95, minN: 250, economics }, 0.95)).toBeNull();
  });
});
