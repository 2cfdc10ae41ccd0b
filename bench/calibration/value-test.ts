/**
 * Calibration of the value test: segments and rests drawn from one distribution (a true null)
 * of zero-inflated log-normal revenue, and how often the test calls the segment better or
 * worse at α = 0.05, per conversion rate, log-scale σ and segment size; beside it Welch's
 * t-test (the previous rule) and the coverage of Welch's interval for the difference of mean
 * revenue per contact, under the null and with a true difference.
 */
import { valueTest } from '../../src/report/analysis/segment-tests.js';
import { summaryFromShiftedSums, welchTTest, type Summary } from '../../src/stats/index.js';
import { draws, percent, type CalibrationOptions, type Draws } from './units-and-cells.js';

const ALPHA = 0.05;
const POPULATION = 5_000;
const MEAN_ORDER_VALUE = 60;

export interface ValueTestScenario {
  rate: number;
  sigma: number;
  segmentSize: number;
  /** the segment's mean order value relative to the rest's: 1 is the null */
  orderValueRatio: number;
}

export interface ValueTestFigures extends ValueTestScenario {
  falseBetter: number;
  falseWorse: number;
  notTested: number;
  /** Student's pooled t on the raw values, the fallback for groups not read value by value */
  pooledFalseBetter: number;
  pooledFalseWorse: number;
  welchFalseBetter: number;
  welchFalseWorse: number;
  /** share of replicates whose Welch interval holds the true difference of mean revenue per contact */
  intervalCoverage: number;
}

function sample(random: Draws, n: number, rate: number, orderMean: number, sigma: number): { unit: Summary; logPositive: Summary; conversions: number } {
  const conversions = random.binomial(n, rate);
  let sum = 0;
  let squares = 0;
  let logSum = 0;
  let logSquares = 0;
  for (let index = 0; index < conversions; index++) {
    const cents = Math.max(1, Math.round(100 * random.logNormalWithMean(orderMean, sigma)));
    const value = cents / 100;
    sum += value;
    squares += value * value;
    logSum += Math.log(cents);
    logSquares += Math.log(cents) ** 2;
  }
  return { unit: summaryFromShiftedSums(n, 0, sum, squares), logPositive: summaryFromShiftedSums(conversions, 0, logSum, logSquares), conversions };
}

export function measureValueTest(scenario: ValueTestScenario, options: CalibrationOptions): ValueTestFigures {
  const random = draws(options.seed);
  let better = 0;
  let worse = 0;
  let untested = 0;
  let welchBetter = 0;
  let pooledBetter = 0;
  let pooledWorse = 0;
  let welchWorse = 0;
  let covered = 0;
  let intervals = 0;
  const trueDifference = scenario.rate * MEAN_ORDER_VALUE * (scenario.orderValueRatio - 1);
  for (let replicate = 0; replicate < options.replicates; replicate++) {
    const segment = sample(random, scenario.segmentSize, scenario.rate, MEAN_ORDER_VALUE * scenario.orderValueRatio, scenario.sigma);
    const rest = sample(random, POPULATION - scenario.segmentSize, scenario.rate, MEAN_ORDER_VALUE, scenario.sigma);
    const test = valueTest(
      { summary: segment.unit, conversions: segment.conversions, logPositive: segment.logPositive },
      { summary: rest.unit, conversions: rest.conversions, logPositive: rest.logPositive },
      1 - ALPHA,
    );
    const pooled = valueTest({ summary: segment.unit, conversions: segment.conversions, logPositive: null }, { summary: rest.unit, conversions: rest.conversions, logPositive: null }, 1 - ALPHA);
    if (pooled.ok && pooled.value.pValue < ALPHA) {
      if (pooled.value.difference > 0) pooledBetter += 1;
      else pooledWorse += 1;
    }
    if (!test.ok) untested += 1;
    else {
      if (test.value.pValue < ALPHA && test.value.difference > 0) better += 1;
      if (test.value.pValue < ALPHA && test.value.difference < 0) worse += 1;
      intervals += 1;
      if (test.value.interval.low <= trueDifference && trueDifference <= test.value.interval.high) covered += 1;
    }
    const welch = welchTTest(segment.unit, rest.unit, 1 - ALPHA);
    if (welch.ok && welch.value.pValue < ALPHA) {
      if (welch.value.difference > 0) welchBetter += 1;
      else welchWorse += 1;
    }
  }
  const all = options.replicates;
  return {
    ...scenario,
    falseBetter: better / all,
    falseWorse: worse / all,
    notTested: untested / all,
    pooledFalseBetter: pooledBetter / all,
    pooledFalseWorse: pooledWorse / all,
    welchFalseBetter: welchBetter / all,
    welchFalseWorse: welchWorse / all,
    intervalCoverage: intervals > 0 ? covered / intervals : Number.NaN,
  };
}

export const NULL_GRID: ValueTestScenario[] = [0.05, 0.1, 0.2].flatMap((rate) =>
  [0.5, 1.0, 1.5].flatMap((sigma) => [30, 40, 100, 230, 1000].map((segmentSize) => ({ rate, sigma, segmentSize, orderValueRatio: 1 }))),
);

const ALTERNATIVE_GRID: ValueTestScenario[] = [0.05, 0.1, 0.2].flatMap((rate) => [100, 230, 1000].map((segmentSize) => ({ rate, sigma: 1.5, segmentSize, orderValueRatio: 1.5 })));

/** The section as markdown. */
export function run(options: CalibrationOptions): string {
  const nullRows = NULL_GRID.map((scenario, index) => measureValueTest(scenario, { replicates: options.replicates, seed: options.seed + 7919 * index }));
  const alternativeRows = ALTERNATIVE_GRID.map((scenario, index) => measureValueTest(scenario, { replicates: options.replicates, seed: options.seed + 104729 * (index + 1) }));
  const worst = (pick: (row: ValueTestFigures) => number) => Math.max(...nullRows.map(pick));
  return [
    '## Value test (revenue per contact) under a true null',
    '',
    `${options.replicates} replicates per row (seed ${options.seed}); population ${POPULATION.toLocaleString('en')} contacts, mean order value ${MEAN_ORDER_VALUE}, log-normal order values;`,
    `segment and rest from the same distribution, α = ${ALPHA}, no multiplicity adjustment. "false better/worse": p < α in that direction.`,
    `Test used (value_p_value): Lachenbruch's two-part test, made only with ≥ 2 converted units in the segment and the rest; beside it Student's pooled t on the raw values`,
    `(the fallback for groups too large to be read value by value) and Welch's t (the previous rule). Direction: the sign of the difference of means.`,
    '',
    `Largest false better: ${percent(worst((row) => row.falseBetter))}; largest false worse: ${percent(worst((row) => row.falseWorse))} (pooled t: ${percent(worst((row) => row.pooledFalseBetter))} and ${percent(worst((row) => row.pooledFalseWorse))}; Welch: ${percent(worst((row) => row.welchFalseBetter))} and ${percent(worst((row) => row.welchFalseWorse))}).`,
    '',
    '| conversion rate | σ | segment n | false better | false worse | not compared | pooled t false better | pooled t false worse | Welch false better | Welch false worse | Welch interval coverage |',
    '| ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: |',
    ...nullRows.map(
      (row) =>
        `| ${percent(row.rate)} | ${row.sigma} | ${row.segmentSize} | ${percent(row.falseBetter)} | ${percent(row.falseWorse)} | ${percent(row.notTested)} | ${percent(row.pooledFalseBetter)} | ${percent(row.pooledFalseWorse)} | ${percent(row.welchFalseBetter)} | ${percent(row.welchFalseWorse)} | ${percent(row.intervalCoverage)} |`,
    ),
    '',
    '### With a true difference: the segment\'s order values 1.5 times the rest\'s (σ = 1.5)',
    '',
    '| conversion rate | segment n | true difference per contact | found better | found worse | not compared | Welch interval coverage |',
    '| ---: | ---: | ---: | ---: | ---: | ---: | ---: |',
    ...alternativeRows.map(
      (row) =>
        `| ${percent(row.rate)} | ${row.segmentSize} | ${(row.rate * MEAN_ORDER_VALUE * (row.orderValueRatio - 1)).toFixed(2)} | ${percent(row.falseBetter)} | ${percent(row.falseWorse)} | ${percent(row.notTested)} | ${percent(row.intervalCoverage)} |`,
    ),
    '',
  ].join('\n');
}
