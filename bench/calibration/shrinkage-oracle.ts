/**
 * How near the truth any normal–normal shrinkage of the crosses could come, on the same
 * simulated campaigns as the shrinkage section: the top-10 error ratio (over the 10 segments
 * with the highest raw rates, root mean squared error against the true rates, over that of
 * the raw rate) of posterior means computed with the simulation's TRUE spreads instead of
 * fitted ones.
 *
 * `npx tsx bench/calibration/shrinkage-oracle.ts [replicates] [seed] [scenario index…]`
 * (the scenarios of SHRINKAGE_SCENARIOS; seeds as in the section, seed + 1000 · index).
 *
 * - report: rate_expected as the report computes it (fitted spreads);
 * - centre, nominal spreads: each one-way segment toward the population with τ² = mainEffectSd²,
 *   each cross toward its parents' prediction (logit a + logit b − logit total, with their
 *   posterior variances) with τ² = interactionSd²;
 * - centre, effective spreads: the same with the spreads the true segment rates actually show in
 *   that campaign (one-way: mean squared true logit about the population's; cross: about the
 *   true parents' prediction, per dimension pair);
 * - table, nominal / effective spreads: each dimension pair's table predicted jointly
 *   (labels N(0, σ²), interactions N(0, τ²), intercept free; the Bayes posterior mean of the
 *   Gaussian model, dense), one-way segments as above;
 * - true centre: each cross shrunk toward the TRUE parents' prediction with the effective τ²,
 *   which no estimator has — a floor for shrinking toward the parents.
 */
import { SHRINKAGE_SCENARIOS } from './shrinkage.js';
import { draws, simulateCampaign } from './units-and-cells.js';

const logit = (p: number) => Math.log(p / (1 - p));
const expit = (x: number) => 1 / (1 + Math.exp(-x));
const empirical = (x: number, n: number) => ({ y: Math.log((x + 0.5) / (n - x + 0.5)), s2: 1 / (x + 0.5) + 1 / (n - x + 0.5) });

/** Gaussian elimination with partial pivoting (small dense systems). */
function solve(matrix: number[][], right: number[]): number[] {
  const size = right.length;
  const m = matrix.map((row, index) => [...row, right[index] as number]);
  for (let column = 0; column < size; column++) {
    let pivot = column;
    for (let row = column + 1; row < size; row++) if (Math.abs((m[row] as number[])[column] as number) > Math.abs((m[pivot] as number[])[column] as number)) pivot = row;
    [m[column], m[pivot]] = [m[pivot] as number[], m[column] as number[]];
    const top = m[column] as number[];
    for (let row = column + 1; row < size; row++) {
      const line = m[row] as number[];
      const factor = (line[column] as number) / (top[column] as number);
      for (let k = column; k <= size; k++) line[k] = (line[k] as number) - factor * (top[k] as number);
    }
  }
  const x = new Array<number>(size).fill(0);
  for (let row = size - 1; row >= 0; row--) {
    const line = m[row] as number[];
    let sum = line[size] as number;
    for (let k = row + 1; k < size; k++) sum -= (line[k] as number) * (x[k] as number);
    x[row] = sum / (line[row] as number);
  }
  return x;
}

interface Observed {
  key: string;
  dimensions: string[];
  labels: string[];
  y: number;
  s2: number;
  truth: number;
  raw: number;
  report: number;
}

const METHODS = ['report', 'centre, nominal spreads', 'centre, effective spreads', 'table, nominal spreads', 'table, effective spreads', 'true centre, effective spreads'] as const;
type Method = (typeof METHODS)[number];

function measureOracle(scenarioIndex: number, replicates: number, seed: number): { scenario: string; ratios: Record<Method, number>; effectiveOneWay: number; effectiveCross: number } {
  const scenario = SHRINKAGE_SCENARIOS[scenarioIndex];
  if (scenario === undefined) throw new Error(`no scenario ${scenarioIndex}`);
  const random = draws(seed + 1000 * scenarioIndex);
  const squares = Object.fromEntries(METHODS.map((method) => [method, 0])) as Record<Method, number>;
  let rawSquares = 0;
  let effectiveOneWay = 0;
  let effectiveCross = 0;
  for (let replicate = 0; replicate < replicates; replicate++) {
    const { snapshot, truth } = simulateCampaign(scenario, random);
    const segments: Observed[] = snapshot.segments
      .filter((segment) => segment.tested && segment.rate_expected !== null && segment.n !== null && segment.conversions !== null)
      .map((segment) => {
        const parts = segment.segment.split(' & ').map((part) => part.split('='));
        const { y, s2 } = empirical(segment.conversions as number, segment.n as number);
        const rate = (truth.get(segment.segment) as { rate: number }).rate;
        return { key: segment.segment, dimensions: parts.map((part) => part[0] as string), labels: parts.map((part) => part[1] as string), y, s2, truth: rate, raw: segment.conversion_rate as number, report: segment.rate_expected as number };
      });
    const byKey = new Map(segments.map((segment) => [segment.key, segment]));
    const oneWays = segments.filter((segment) => segment.dimensions.length === 1);
    const firstDimension = (oneWays[0] as Observed).dimensions[0];
    const partition = snapshot.segments.filter((segment) => segment.dimensions === firstDimension);
    const populationN = partition.reduce((sum, segment) => sum + (segment.n as number), 0);
    const population = empirical(
      partition.reduce((sum, segment) => sum + (segment.conversions as number), 0),
      populationN,
    );
    const truePopulation = logit(partition.reduce((sum, segment) => sum + (segment.n as number) * (truth.get(segment.segment) as { rate: number }).rate, 0) / populationN);
    const parentKey = (segment: Observed, side: 0 | 1) => `${segment.dimensions[side] as string}=${segment.labels[side] as string}`;
    const trueCentre = (segment: Observed) => logit((byKey.get(parentKey(segment, 0)) as Observed).truth) + logit((byKey.get(parentKey(segment, 1)) as Observed).truth) - truePopulation;
    const dimensionNames = [...new Set(oneWays.map((segment) => segment.dimensions[0] as string))];
    const labelSpread = new Map(
      dimensionNames.map((name) => {
        const members = oneWays.filter((segment) => segment.dimensions[0] === name);
        return [name, members.reduce((sum, segment) => sum + (logit(segment.truth) - truePopulation) ** 2, 0) / members.length];
      }),
    );
    const tables = new Map<string, Observed[]>();
    for (const segment of segments) if (segment.dimensions.length === 2) tables.set(segment.dimensions.join('&'), [...(tables.get(segment.dimensions.join('&')) ?? []), segment]);
    const crossSpread = new Map([...tables].map(([pair, members]) => [pair, members.reduce((sum, segment) => sum + (logit(segment.truth) - trueCentre(segment)) ** 2, 0) / members.length]));
    const oneWayEffective = [...labelSpread.values()].reduce((sum, value) => sum + value, 0) / labelSpread.size;
    effectiveOneWay += oneWayEffective / replicates;
    effectiveCross += [...crossSpread.values()].reduce((sum, value) => sum + value, 0) / crossSpread.size / replicates;

    const estimates = new Map<Method, Map<string, number>>(METHODS.map((method) => [method, new Map()]));
    const set = (method: Method, key: string, logitValue: number) => (estimates.get(method) as Map<string, number>).set(key, expit(logitValue));
    for (const segment of segments) (estimates.get('report') as Map<string, number>).set(segment.key, segment.report);
    const oneWayPosterior = (spread: number) =>
      new Map(
        oneWays.map((segment) => {
          const shrinkage = segment.s2 / (segment.s2 + spread);
          return [segment.key, { mean: population.y + (1 - shrinkage) * (segment.y - population.y), variance: segment.s2 * (1 - shrinkage) }];
        }),
      );
    const variants: Array<{ centre: Method; table: Method; oneWay: number; label: (name: string) => number; cross: (pair: string) => number }> = [
      { centre: 'centre, nominal spreads', table: 'table, nominal spreads', oneWay: scenario.mainEffectSd ** 2, label: () => scenario.mainEffectSd ** 2, cross: () => scenario.interactionSd ** 2 },
      { centre: 'centre, effective spreads', table: 'table, effective spreads', oneWay: oneWayEffective, label: (name) => labelSpread.get(name) as number, cross: (pair) => crossSpread.get(pair) as number },
    ];
    for (const variant of variants) {
      const posterior = oneWayPosterior(variant.oneWay);
      for (const [key, { mean }] of posterior) {
        set(variant.centre, key, mean);
        set(variant.table, key, mean);
      }
      for (const [pair, members] of tables) {
        const tau2 = variant.cross(pair);
        for (const segment of members) {
          const first = posterior.get(parentKey(segment, 0)) as { mean: number; variance: number };
          const second = posterior.get(parentKey(segment, 1)) as { mean: number; variance: number };
          const centre = first.mean + second.mean - population.y;
          const shrinkage = segment.s2 / (segment.s2 + tau2 + first.variance + second.variance + population.s2);
          set(variant.centre, segment.key, centre + (1 - shrinkage) * (segment.y - centre));
        }
        // the table's prior covariance; a variance of 100 for the intercept stands for a flat prior
        const prior = members.map((left, i) =>
          members.map((right, j) => 100 + (left.labels[0] === right.labels[0] ? variant.label(left.dimensions[0] as string) : 0) + (left.labels[1] === right.labels[1] ? variant.label(left.dimensions[1] as string) : 0) + (i === j ? tau2 : 0)),
        );
        const weights = solve(
          prior.map((row, i) => row.map((value, j) => value + (i === j ? (members[i] as Observed).s2 : 0))),
          members.map((segment) => segment.y - population.y),
        );
        members.forEach((segment, i) => set(variant.table, segment.key, population.y + (prior[i] as number[]).reduce((sum, value, j) => sum + value * (weights[j] as number), 0)));
      }
    }
    for (const segment of oneWays) {
      const spread = labelSpread.get(segment.dimensions[0] as string) as number;
      const shrinkage = segment.s2 / (segment.s2 + spread);
      set('true centre, effective spreads', segment.key, truePopulation + (1 - shrinkage) * (segment.y - truePopulation));
    }
    for (const [pair, members] of tables) {
      for (const segment of members) {
        const centre = trueCentre(segment);
        const shrinkage = segment.s2 / (segment.s2 + (crossSpread.get(pair) as number));
        set('true centre, effective spreads', segment.key, centre + (1 - shrinkage) * (segment.y - centre));
      }
    }
    for (const segment of [...segments].sort((left, right) => right.raw - left.raw).slice(0, 10)) {
      rawSquares += (segment.raw - segment.truth) ** 2;
      for (const method of METHODS) squares[method] += (((estimates.get(method) as Map<string, number>).get(segment.key) as number) - segment.truth) ** 2;
    }
  }
  const ratios = Object.fromEntries(METHODS.map((method) => [method, Math.sqrt(squares[method] / rawSquares)])) as Record<Method, number>;
  return { scenario: scenario.name, ratios, effectiveOneWay, effectiveCross };
}

const [replicatesArgument, seedArgument, ...indices] = process.argv.slice(2);
const replicates = Number(replicatesArgument ?? 200);
const seed = Number(seedArgument ?? 20261203);
const chosen = indices.length > 0 ? indices.map(Number) : SHRINKAGE_SCENARIOS.map((_scenario, index) => index);
process.stdout.write(`| scenario | effective one-way τ² | effective cross τ² | ${METHODS.join(' | ')} |\n| --- | ---: | ---: |${METHODS.map(() => ' ---: |').join('')}\n`);
for (const index of chosen) {
  const { scenario, ratios, effectiveOneWay, effectiveCross } = measureOracle(index, replicates, seed);
  process.stdout.write(`| ${scenario} | ${effectiveOneWay.toFixed(3)} | ${effectiveCross.toFixed(3)} | ${METHODS.map((method) => ratios[method].toFixed(3)).join(' | ')} |\n`);
}
