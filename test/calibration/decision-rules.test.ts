/**
 * Small fixed-seed versions of the calibration (`npm run calibrate` runs the full ones): the
 * same simulations with known truth, few replicates, and the same targets within their
 * Monte-Carlo tolerance. A rule that drifts out of calibration fails here first.
 */
import { describe, expect, test } from 'vitest';
import { campaignSection } from '../../bench/calibration/campaigns.js';
import { changeSection } from '../../bench/calibration/changes.js';
import type { CalibrationFigure } from '../../bench/calibration/index.js';
import { verdictSection } from '../../bench/calibration/verdicts.js';

const OPTIONS = { replicates: 12, seed: 7 };

function figure(figures: CalibrationFigure[], start: string): CalibrationFigure {
  const found = figures.find((entry) => entry.rule.startsWith(start));
  if (!found) throw new Error(`no figure starting with "${start}"`);
  return found;
}

describe('calibration of the decision rules, small fixed-seed runs', () => {
  test('verdicts: false discoveries, equivalence beyond the margin and the power of the stated MDD meet their targets', () => {
    const { figures } = verdictSection.run(OPTIONS);
    for (const entry of figures.filter((item) => item.met !== undefined)) expect(entry.met, `${entry.rule}: ${entry.shown}`).toBe(true);
    // Without adjustment most null reports show a false finding: the adjustment is what keeps the rate down.
    expect(figure(figures, 'no effect anywhere, adjustment none').value).toBeGreaterThan(0.5);
    expect(figure(figures, 'effects in some regions, adjustment bh: tested segments found equivalent').value).toBeGreaterThan(0);
  }, 60_000);

  test('change: a refresh with no new data shows no change; unchanged rates rarely show one', () => {
    const { figures } = changeSection.run(OPTIONS);
    expect(figure(figures, 'refresh with no new contacts').value).toBe(0);
    expect(figure(figures, 'new contacts from unchanged rates (bh)').met).toBe(true);
  }, 60_000);

  test('several campaigns: comparing within campaign keeps the size that pooling loses', () => {
    const { figures } = campaignSection.run({ replicates: 40, seed: 7 });
    expect(figure(figures, 'campaigns pooled as one sample').value).toBeGreaterThan(0.15);
    expect(figure(figures, 'within campaign (CMH').met).toBe(true);
    expect(figure(figures, 'within campaign: Mantel–Haenszel').met).toBe(true);
  }, 60_000);
});
