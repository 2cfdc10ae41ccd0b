/**
 * The holdout advice with known truth, a small fixed-seed run of the calibration section
 * (`npm run calibrate` runs the full one): regions whose true incremental profit per contact is
 * negative are rarely advised `contact`, while a region that truly gains is advised `contact`
 * often enough to show the rule is not simply silent.
 */
import { describe, expect, test } from 'vitest';
import type { CalibrationFigure } from '../../bench/calibration/index.js';
import { holdoutAdviceSection, trueProfitPerContact } from '../../bench/calibration/holdout-advice.js';

function figure(figures: CalibrationFigure[], start: string): CalibrationFigure {
  const found = figures.find((entry) => entry.rule.startsWith(start));
  if (!found) throw new Error(`no figure starting with "${start}"`);
  return found;
}

describe('holdout advice, simulated with known incremental profit', () => {
  test('the true profit per contact is margin × 40.00 × uplift − 1.00 (break-even at an uplift of 5 points)', () => {
    expect(trueProfitPerContact(0.05)).toBeCloseTo(0, 12);
    expect(trueProfitPerContact(0.1)).toBeCloseTo(1, 12);
  });

  test('losing segments are advised contact in at most 5 % of 120 cases (nominal one-sided 2.5 %); a gaining one often', () => {
    const { figures } = holdoutAdviceSection.run({ replicates: 40, seed: 7 });
    const wrongContact = figure(figures, 'true incremental profit < 0: advice contact');
    expect(wrongContact.shown).toMatch(/of 120\)$/);
    expect(wrongContact.value ?? 1).toBeLessThanOrEqual(0.05);
    expect(figure(figures, 'true incremental profit > 0: advice hold_back').value ?? 1).toBeLessThanOrEqual(0.05);
    // Not silent: the truly gaining region (profit +1.00 per contact) is advised contact in most runs.
    expect(figure(figures, 'true incremental profit > 0: advice contact').value ?? 0).toBeGreaterThan(0.5);
    expect(figure(figures, 'segments with advice').value).toBe(1);
    expect(figure(figures, 'incremental profit interval').met).toBe(true);
  }, 60_000);
});
