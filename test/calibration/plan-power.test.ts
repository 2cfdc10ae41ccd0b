import { describe, expect, it } from 'vitest';
import { simulatePlanPower } from '../../bench/calibration/plan-power.js';

// Small fixed-seed version of `npx tsx bench/calibration/plan-power.ts`: campaigns drawn at the
// planned sizes must detect the planned uplift about as often as the plan promises, and reject
// about α of the time when there is no uplift. Bounds are about 3.5 binomial standard errors.
describe('campaigns sized by planHoldoutCampaign reach the planned power', () => {
  it('detects the planned uplift in about 80 % of 1,500 campaigns (20 % holdout)', () => {
    const reading = simulatePlanPower({ baselineRate: 0.1, minUplift: 0.05 }, 1500, 101);
    // SE of a share of 0.8 over 1,500 draws: √(0.8·0.2/1500) ≈ 0.0103
    expect(Math.abs(reading.power - 0.8)).toBeLessThan(0.036);
    // SE at α = 0.05: √(0.05·0.95/1500) ≈ 0.0056
    expect(Math.abs(reading.falseAlarms - 0.05)).toBeLessThan(0.02);
  });

  it('keeps 90 % power with α split over 6 segments and a 10 % holdout', () => {
    const reading = simulatePlanPower({ baselineRate: 0.02, minUplift: 0.01, holdoutShare: 0.1, segments: 6, power: 0.9 }, 800, 202);
    // SE √(0.9·0.1/800) ≈ 0.0106
    expect(Math.abs(reading.power - 0.9)).toBeLessThan(0.037);
    expect(reading.alpha).toBeCloseTo(0.05 / 6, 14);
    // SE at α/6: √(0.0083·0.9917/800) ≈ 0.0032
    expect(reading.falseAlarms).toBeLessThan(0.0083 + 0.012);
  });

});
