/**
 * Simulated campaigns with known truth, shared by the calibration sections: a seeded
 * generator of normal, binomial and log-normal draws, and a campaign whose every cell has a
 * true conversion rate and a true mean order value, built into a snapshot by the same
 * `buildSnapshot` the service uses.
 */
import { seededRandom } from '../../seed/generate.js';
import { DEFAULT_EQUIVALENCE_MARGIN, type ReportDefinition } from '../../src/report/definition/index.js';
import type { Snapshot } from '../../src/report/shapes/index.js';
import { buildSnapshot } from '../../src/report/snapshot/index.js';
import type { CellAggregate } from '../../src/segments/index.js';
import { segmentLabel } from '../../src/report/analysis/segment-row.js';

export interface CalibrationOptions {
  replicates: number;
  seed: number;
}

/** Seeded draws. */
export interface Draws {
  uniform(): number;
  normal(): number;
  /** Binomial(n, p) by geometric waiting times: O(n·p) work, exact */
  binomial(n: number, p: number): number;
  /** a log-normal value with the given mean (not median) and log-scale σ */
  logNormalWithMean(mean: number, sigma: number): number;
}

export function draws(seed: number): Draws {
  const uniform = seededRandom(seed);
  let spare: number | null = null;
  const normal = () => {
    if (spare !== null) {
      const value = spare;
      spare = null;
      return value;
    }
    // Box–Muller (Box & Muller 1958)
    const u = 1 - uniform();
    const v = uniform();
    const radius = Math.sqrt(-2 * Math.log(u));
    spare = radius * Math.sin(2 * Math.PI * v);
    return radius * Math.cos(2 * Math.PI * v);
  };
  const binomial = (n: number, p: number) => {
    if (p <= 0) return 0;
    if (p >= 1) return n;
    const logFail = Math.log(1 - p);
    let successes = 0;
    let position = 0;
    for (;;) {
      position += Math.floor(Math.log(1 - uniform()) / logFail) + 1;
      if (position > n) return successes;
      successes += 1;
    }
  };
  const logNormalWithMean = (mean: number, sigma: number) => Math.exp(Math.log(mean) - (sigma * sigma) / 2 + sigma * normal());
  return { uniform, normal, binomial, logNormalWithMean };
}

const logit = (p: number) => Math.log(p / (1 - p));
const expit = (x: number) => 1 / (1 + Math.exp(-x));

/** What a simulated campaign looks like; effects are on the logit scale (rate) and the log scale (order value). */
export interface CampaignScenario {
  name: string;
  contacts: number;
  /** labels per dimension, in report order */
  dimensions: Array<{ name: string; labels: number }>;
  baseRate: number;
  /** standard deviation of each label's effect on the logit of the rate */
  mainEffectSd: number;
  /** standard deviation of each cross's extra effect (interaction) on the logit */
  interactionSd: number;
  /** mean order value of a converted contact, money */
  meanOrderValue: number;
  /** log-scale σ of order values */
  sigma: number;
  /** standard deviation of each label's effect on the log of the mean order value */
  valueEffectSd: number;
}

export interface SimulatedCampaign {
  definition: ReportDefinition;
  snapshot: Snapshot;
  /** true conversion rate and true mean value per contact of every segment, by segment label */
  truth: Map<string, { rate: number; value: number }>;
}

function definitionFor(scenario: CampaignScenario, overrides: Partial<ReportDefinition> = {}): ReportDefinition {
  const names = scenario.dimensions.map((dimension) => dimension.name);
  const crosses: Array<[string, string]> = [];
  names.forEach((first, index) => names.slice(index + 1).forEach((second) => crosses.push([first, second])));
  return {
    name: scenario.name,
    source: { campaign_ids: ['simulated'] },
    dimensions: names,
    crosses,
    age_bands: [18, 25, 35, 45, 55, 65],
    min_n: 30,
    confidence: 0.95,
    equivalence_margin: DEFAULT_EQUIVALENCE_MARGIN,
    value_equivalence_margin: null,
    adjustment: 'bh',
    value_basis: 'per_unit',
    rank_by: 'conversion_rate',
    rank_order: 'lower_bound',
    refresh: 'manual',
    ...overrides,
  };
}

/** Uneven label shares, like real dimensions: one or two large labels and a tail. */
function shares(labels: number, random: Draws): number[] {
  const weights = Array.from({ length: labels }, () => Math.exp(0.8 * random.normal()));
  const total = weights.reduce((sum, weight) => sum + weight, 0);
  return weights.map((weight) => weight / total);
}

function pickIndex(cumulative: readonly number[], u: number): number {
  for (let index = 0; index < cumulative.length; index++) if (u < (cumulative[index] as number)) return index;
  return cumulative.length - 1;
}

/** One simulated campaign: true effects, contacts drawn cell by cell, and its snapshot. */
export function simulateCampaign(scenario: CampaignScenario, random: Draws, overrides: Partial<ReportDefinition> = {}): SimulatedCampaign {
  const definition = definitionFor(scenario, overrides);
  const dims = scenario.dimensions;
  const labelName = (dimension: number, label: number) => `${dims[dimension]?.name.charAt(0) ?? 'x'}${label + 1}`;
  const cumulative = dims.map((dimension) => {
    let running = 0;
    return shares(dimension.labels, random).map((share) => (running += share));
  });
  const main = dims.map((dimension) => Array.from({ length: dimension.labels }, () => scenario.mainEffectSd * random.normal()));
  const valueMain = dims.map((dimension) => Array.from({ length: dimension.labels }, () => scenario.valueEffectSd * random.normal()));
  const interaction = new Map<string, number>();
  const interactionOf = (a: number, la: number, b: number, lb: number) => {
    const key = `${a}:${la}|${b}:${lb}`;
    let effect = interaction.get(key);
    if (effect === undefined) {
      effect = scenario.interactionSd * random.normal();
      interaction.set(key, effect);
    }
    return effect;
  };
  // count contacts per cell
  const counts = new Map<string, { labels: number[]; n: number }>();
  for (let unit = 0; unit < scenario.contacts; unit++) {
    const labels = cumulative.map((cum) => pickIndex(cum, random.uniform()));
    const key = labels.join(',');
    const entry = counts.get(key);
    if (entry) entry.n += 1;
    else counts.set(key, { labels, n: 1 });
  }
  const cells: CellAggregate[] = [];
  const valueCounts: Array<{ labels: string[]; valueCents: number; count: number }> = [];
  const cellTruth: Array<{ labels: number[]; n: number; rate: number; value: number }> = [];
  for (const { labels, n } of counts.values()) {
    let eta = logit(scenario.baseRate);
    let logValue = 0;
    labels.forEach((label, dimension) => {
      eta += main[dimension]?.[label] as number;
      logValue += valueMain[dimension]?.[label] as number;
    });
    for (let a = 0; a < labels.length; a++) for (let b = a + 1; b < labels.length; b++) eta += interactionOf(a, labels[a] as number, b, labels[b] as number);
    const rate = expit(eta);
    const orderMean = scenario.meanOrderValue * Math.exp(logValue);
    const conversions = random.binomial(n, rate);
    let sum = 0n;
    let squares = 0n;
    const cellLabels = labels.map((label, dimension) => labelName(dimension, label));
    const cellValues = new Map<number, number>();
    if (n > conversions) cellValues.set(0, n - conversions);
    for (let index = 0; index < conversions; index++) {
      const cents = Math.max(1, Math.round(100 * random.logNormalWithMean(orderMean, scenario.sigma)));
      sum += BigInt(cents);
      squares += BigInt(cents) * BigInt(cents);
      cellValues.set(cents, (cellValues.get(cents) ?? 0) + 1);
    }
    for (const [valueCents, count] of cellValues) valueCounts.push({ labels: cellLabels, valueCents, count });
    const sums = (count: number) => ({ n: count, sum, squares });
    cells.push({
      labels: cellLabels,
      n,
      conversions,
      unitValue: sums(n),
      convertedValue: sums(conversions),
      age: { n: 0, sumOfShifted: 0, sumOfSquaredShifted: 0 },
      ageValue: { n: 0, ageSum: 0, ageSquaredSum: 0, valueSum: 0, valueSquaredSum: 0, crossSum: 0 },
    });
    cellTruth.push({ labels, n, rate, value: rate * orderMean });
  }
  // the truth of a segment: the mean of its contacts' true rates (and values)
  const truth = new Map<string, { rate: number; value: number; n: number }>();
  const add = (label: string, cell: (typeof cellTruth)[number]) => {
    const entry = truth.get(label) ?? { rate: 0, value: 0, n: 0 };
    entry.rate += cell.n * cell.rate;
    entry.value += cell.n * cell.value;
    entry.n += cell.n;
    truth.set(label, entry);
  };
  for (const cell of cellTruth) {
    const names = cell.labels.map((label, dimension) => labelName(dimension, label));
    dims.forEach((dimension, index) => add(segmentLabel([dimension.name], [names[index] as string]), cell));
    for (const [first, second] of definition.crosses) {
      const a = dims.findIndex((dimension) => dimension.name === first);
      const b = dims.findIndex((dimension) => dimension.name === second);
      add(segmentLabel([first, second], [names[a] as string, names[b] as string]), cell);
    }
  }
  const snapshot = buildSnapshot({
    identity: { snapshotId: 'simulated', reportId: 'simulated', reportName: scenario.name, sequence: 1, createdAt: '2026-01-01T00:00:00.000Z', trigger: 'manual' },
    definition,
    shifts: { unitValue: 0, convertedValue: 0, age: 0 },
    arithmetic: 'exact',
    cells,
    ageCounts: [],
    valueCounts,
    quality: { customersOutsidePopulation: 0, customersWithoutAnySale: 0, rejectedRows: [] },
    previousWindow: null,
    previousSnapshot: null,
  });
  return {
    definition,
    snapshot,
    truth: new Map([...truth].map(([label, entry]) => [label, { rate: entry.rate / entry.n, value: entry.value / entry.n }])),
  };
}

/** Formats a fraction as a percentage with one decimal. */
export const percent = (fraction: number) => (Number.isFinite(fraction) ? `${(100 * fraction).toFixed(1)} %` : '–');
