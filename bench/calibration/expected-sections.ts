/**
 * The expected-figure and value-test simulations as sections of `npm run calibrate`, each
 * figure with the target the report's rules must meet: the rate_expected interval covers the
 * true rate in at least 90 % of tested segments, its top-10 error is at most three quarters of
 * the raw rate's, and the value test's size stays at or below α = 0.05 in each direction.
 */
import type { CalibrationFigure, CalibrationSection, SectionResult } from './section.js';
import { SHRINKAGE_SCENARIOS, measureShrinkage } from './shrinkage.js';
import { NULL_GRID, measureValueTest } from './value-test.js';

function shownPercent(value: number): string {
  return `${(100 * value).toFixed(1)} %`;
}

function atLeastShare(rule: string, value: number, limit: number): CalibrationFigure {
  return { rule, value, shown: shownPercent(value), target: `≥ ${(100 * limit).toFixed(0)} %`, met: value >= limit };
}

function atMostShare(rule: string, value: number, limit: number): CalibrationFigure {
  return { rule, value, shown: shownPercent(value), target: `≤ ${(100 * limit).toFixed(0)} %`, met: value <= limit };
}

export const expectedRateSection: CalibrationSection = {
  name: 'Expected rate (empirical-Bayes shrinkage) and the ranking error of the top 10',
  run(options): SectionResult {
    const rows = SHRINKAGE_SCENARIOS.map((scenario, index) => measureShrinkage(scenario, { replicates: options.replicates, seed: options.seed + 1000 * index }));
    return {
      figures: rows.flatMap((row): CalibrationFigure[] => [
        atLeastShare(`${row.scenario}: rate_expected interval covers the true rate`, row.expectedCoverage, 0.9),
        {
          rule: `${row.scenario}: top-10 error of rate_expected / of the raw rate (top 10 by raw rate)`,
          value: row.rawTopErrorRatio,
          shown: row.rawTopErrorRatio.toFixed(2),
          target: '≤ 0.75',
          met: row.rawTopErrorRatio <= 0.75,
        },
      ]),
      notes: [
        'Four dimensions (5, 4, 6 and 3 labels, uneven shares), every pair crossed; true logit effects of labels N(0, 0.3²) and of crosses N(0, τ²) per scenario.',
        'Error: root mean squared error against the true rates over the 10 segments with the highest raw rates (where the winner’s curse is worst).',
      ],
    };
  },
};

export const valueTestSection: CalibrationSection = {
  name: 'Value test size under a true null (zero-inflated log-normal revenue)',
  run(options): SectionResult {
    const rows = NULL_GRID.map((scenario, index) => measureValueTest(scenario, { replicates: options.replicates, seed: options.seed + 7919 * index }));
    return {
      figures: rows.flatMap((row): CalibrationFigure[] => [
        atMostShare(`conversion ${shownPercent(row.rate)}, σ ${row.sigma}, n ${row.segmentSize}: falsely better`, row.falseBetter, 0.05),
        atMostShare(`conversion ${shownPercent(row.rate)}, σ ${row.sigma}, n ${row.segmentSize}: falsely worse`, row.falseWorse, 0.05),
      ]),
      notes: ['Segment and rest drawn from one distribution; α = 0.05 without adjustment; a direction is false when p < α with that sign of the difference of means.'],
    };
  },
};
