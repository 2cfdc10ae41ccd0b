/**
 * Calibration of the expected (shrunk) rate: on simulated campaigns with known true rates,
 * how often the rate_expected interval covers the true rate, and how far rate_expected and the
 * raw conversion rate are from the truth for the segments at the top of the ranking.
 */
import type { SnapshotSegment } from '../../src/report/shapes/index.js';
import { draws, percent, simulateCampaign, type CalibrationOptions, type CampaignScenario } from './units-and-cells.js';

const DIMENSIONS = [
  { name: 'region', labels: 5 },
  { name: 'channel', labels: 4 },
  { name: 'age', labels: 6 },
  { name: 'type', labels: 3 },
];

export const SHRINKAGE_SCENARIOS: CampaignScenario[] = [
  { name: '4,000 contacts, 5 %', contacts: 4_000, dimensions: DIMENSIONS, baseRate: 0.05, mainEffectSd: 0.3, interactionSd: 0.15, meanOrderValue: 60, sigma: 1.5, valueEffectSd: 0.2 },
  { name: '4,000 contacts, 10 %', contacts: 4_000, dimensions: DIMENSIONS, baseRate: 0.1, mainEffectSd: 0.3, interactionSd: 0.15, meanOrderValue: 60, sigma: 1.5, valueEffectSd: 0.2 },
  { name: '20,000 contacts, 10 %', contacts: 20_000, dimensions: DIMENSIONS, baseRate: 0.1, mainEffectSd: 0.3, interactionSd: 0.15, meanOrderValue: 60, sigma: 1.5, valueEffectSd: 0.2 },
  { name: '20,000 contacts, 20 %, no interactions', contacts: 20_000, dimensions: DIMENSIONS, baseRate: 0.2, mainEffectSd: 0.3, interactionSd: 0, meanOrderValue: 60, sigma: 1.5, valueEffectSd: 0.2 },
  { name: '20,000 contacts, 10 %, strong interactions', contacts: 20_000, dimensions: DIMENSIONS, baseRate: 0.1, mainEffectSd: 0.3, interactionSd: 0.4, meanOrderValue: 60, sigma: 1.5, valueEffectSd: 0.2 },
];

export interface ShrinkageFigures {
  scenario: string;
  segments: number;
  /** share of tested segments whose rate_expected interval covers the true rate */
  expectedCoverage: number;
  /** the same for the raw (Wilson) interval */
  rawCoverage: number;
  /** coverage among the 10 segments ranked highest */
  topCoverage: number;
  /** top 10 by rank: root mean squared error of rate_expected / of the raw rate, against the truth */
  topErrorRatio: number;
  /** top 10 by the raw rate (the winner's curse at its worst): the same ratio */
  rawTopErrorRatio: number;
  /** mean of (raw rate − true rate) over the raw top 10: the winner's curse */
  rawTopBias: number;
  /** mean of (rate_expected − true rate) over the same segments */
  expectedTopBias: number;
  /** share of tested segments whose value_expected interval covers the true value per contact */
  valueCoverage: number;
}

export function measureShrinkage(scenario: CampaignScenario, options: CalibrationOptions): ShrinkageFigures {
  const random = draws(options.seed);
  let segments = 0;
  let covered = 0;
  let rawCovered = 0;
  let valueCovered = 0;
  let valueCounted = 0;
  let top = 0;
  let topCovered = 0;
  let topExpectedSquares = 0;
  let topRawSquares = 0;
  let rawTopExpectedSquares = 0;
  let rawTopRawSquares = 0;
  let rawTopBias = 0;
  let expectedTopBias = 0;
  let rawTopCount = 0;
  for (let replicate = 0; replicate < options.replicates; replicate++) {
    const { snapshot, truth } = simulateCampaign(scenario, random);
    const tested = snapshot.segments.filter((segment) => segment.tested && segment.rate_expected !== null && segment.conversion_rate !== null);
    const trueOf = (segment: SnapshotSegment) => truth.get(segment.segment) as { rate: number; value: number };
    for (const segment of tested) {
      const truthOf = trueOf(segment);
      segments += 1;
      if ((segment.rate_expected_ci_low as number) <= truthOf.rate && truthOf.rate <= (segment.rate_expected_ci_high as number)) covered += 1;
      if ((segment.conversion_rate_ci_low as number) <= truthOf.rate && truthOf.rate <= (segment.conversion_rate_ci_high as number)) rawCovered += 1;
      if (segment.value_expected_ci_low !== null && segment.value_expected_ci_high !== null) {
        valueCounted += 1;
        if (segment.value_expected_ci_low <= truthOf.value && truthOf.value <= segment.value_expected_ci_high) valueCovered += 1;
      }
    }
    const byRank = [...tested].sort((left, right) => (left.rank as number) - (right.rank as number)).slice(0, 10);
    for (const segment of byRank) {
      const rate = trueOf(segment).rate;
      top += 1;
      if ((segment.rate_expected_ci_low as number) <= rate && rate <= (segment.rate_expected_ci_high as number)) topCovered += 1;
      topExpectedSquares += ((segment.rate_expected as number) - rate) ** 2;
      topRawSquares += ((segment.conversion_rate as number) - rate) ** 2;
    }
    const byRaw = [...tested].sort((left, right) => (right.conversion_rate as number) - (left.conversion_rate as number)).slice(0, 10);
    for (const segment of byRaw) {
      const rate = trueOf(segment).rate;
      rawTopCount += 1;
      rawTopExpectedSquares += ((segment.rate_expected as number) - rate) ** 2;
      rawTopRawSquares += ((segment.conversion_rate as number) - rate) ** 2;
      rawTopBias += (segment.conversion_rate as number) - rate;
      expectedTopBias += (segment.rate_expected as number) - rate;
    }
  }
  return {
    scenario: scenario.name,
    segments,
    expectedCoverage: covered / segments,
    rawCoverage: rawCovered / segments,
    topCoverage: topCovered / top,
    topErrorRatio: Math.sqrt(topExpectedSquares / topRawSquares),
    rawTopErrorRatio: Math.sqrt(rawTopExpectedSquares / rawTopRawSquares),
    rawTopBias: rawTopBias / rawTopCount,
    expectedTopBias: expectedTopBias / rawTopCount,
    valueCoverage: valueCounted > 0 ? valueCovered / valueCounted : Number.NaN,
  };
}

/** The section as markdown: one row per scenario. */
export function run(options: CalibrationOptions): string {
  const rows = SHRINKAGE_SCENARIOS.map((scenario, index) => measureShrinkage(scenario, { replicates: options.replicates, seed: options.seed + 1000 * index }));
  const points = (fraction: number) => `${(100 * fraction).toFixed(2)} pt`;
  const lines = [
    '## Expected rate (empirical-Bayes shrinkage)',
    '',
    `${options.replicates} simulated campaigns per scenario (seed ${options.seed}); four dimensions (5, 4, 6 and 3 labels, uneven shares), every pair crossed;`,
    'true logit effects of labels N(0, 0.3²) and of crosses N(0, τ²). Coverage: share of tested segments whose 95 % interval holds the true rate.',
    'Error ratio: root mean squared error of rate_expected over that of the raw rate, against the true rates, for the 10 segments ranked first (by the report) or with the highest raw rates.',
    '',
    '| scenario | tested segments | rate_expected coverage | raw (Wilson) coverage | coverage, top 10 by rank | error ratio, top 10 by rank | error ratio, top 10 by raw rate | raw rate − truth, raw top 10 | rate_expected − truth, raw top 10 | value_expected coverage |',
    '| --- | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: |',
    ...rows.map(
      (row) =>
        `| ${row.scenario} | ${row.segments} | ${percent(row.expectedCoverage)} | ${percent(row.rawCoverage)} | ${percent(row.topCoverage)} | ${row.topErrorRatio.toFixed(2)} | ${row.rawTopErrorRatio.toFixed(2)} | ${points(row.rawTopBias)} | ${points(row.expectedTopBias)} | ${percent(row.valueCoverage)} |`,
    ),
    '',
  ];
  return lines.join('\n');
}
