/**
 * Calibration of reports over several campaigns. Two campaigns convert at different rates
 * and one region was contacted mostly in the better campaign; within each campaign the region
 * converts like everyone else. Pooling the campaigns as one sample calls the region better;
 * comparing within campaign (Cochran–Mantel–Haenszel) should keep its size. Half of the
 * customers are contacted in both campaigns and carry their own propensity to buy, so the
 * two campaigns' contacts of one customer are correlated, as in real data.
 */
import { emptyCell, type CampaignCellCount, type CellAggregate } from '../../src/segments/index.js';
import { buildSnapshot } from '../../src/report/snapshot/index.js';
import type { SnapshotSegment } from '../../src/report/shapes/index.js';
import { seededRandom, type Random } from './random.js';
import { atLeast, atMost, type CalibrationSection } from './section.js';
import { simulationDefinition, snapshotInputOf } from './simulate.js';

const REGIONS = ['Ashgrove', 'Brindle', 'Copperfield', 'Dunmore'];
const CAMPAIGN_RATES = { spring: 0.05, autumn: 0.15 };
const CUSTOMERS = 3000;
/** Standard deviation of a customer's propensity on the logit scale (invented; makes repeat contacts correlated). */
const PROPENSITY_SD = 0.8;

const logit = (p: number) => Math.log(p / (1 - p));
const expit = (x: number) => 1 / (1 + Math.exp(-x));

interface Drawn {
  cells: CellAggregate[];
  strata: CampaignCellCount[];
}

function draw(random: Random): Drawn {
  const cells = new Map<string, CellAggregate>();
  const strata = new Map<string, CampaignCellCount>();
  for (let customer = 0; customer < CUSTOMERS; customer += 1) {
    const region = REGIONS[random.pick([1, 1, 1, 1])] as string;
    const propensity = PROPENSITY_SD * random.normal();
    // Ashgrove was contacted mostly in autumn, the better campaign; the others evenly.
    const autumnShare = region === 'Ashgrove' ? 0.85 : 0.45;
    const both = random.bernoulli(0.5) === 1;
    const campaigns = both ? (['spring', 'autumn'] as const) : random.bernoulli(autumnShare) === 1 ? (['autumn'] as const) : (['spring'] as const);
    for (const campaign of campaigns) {
      const converted = random.bernoulli(expit(logit(CAMPAIGN_RATES[campaign]) + propensity));
      const labels = [region];
      const key = JSON.stringify(labels);
      const cell = cells.get(key) ?? emptyCell(labels);
      cell.n += 1;
      cell.unitValue.n += 1;
      if (converted) {
        cell.conversions += 1;
        cell.convertedValue.n += 1;
        cell.unitValue.sum += 4000n;
        cell.unitValue.squares += 4000n * 4000n;
        cell.convertedValue.sum += 4000n;
        cell.convertedValue.squares += 4000n * 4000n;
      }
      cells.set(key, cell);
      const stratumKey = JSON.stringify([campaign, labels]);
      const stratum = strata.get(stratumKey) ?? { campaign, labels, n: 0, conversions: 0 };
      stratum.n += 1;
      stratum.conversions += converted;
      strata.set(stratumKey, stratum);
    }
  }
  return { cells: [...cells.values()], strata: [...strata.values()] };
}

const falselyDifferent = (segment: SnapshotSegment | undefined) => segment?.verdict === 'better' || segment?.verdict === 'worse';

export const campaignSection: CalibrationSection = {
  name: 'Several campaigns in one report',
  run(options) {
    const definition = simulationDefinition(['region'], { source: { campaign_ids: ['spring', 'autumn'] }, adjustment: 'none' });
    let pooledFalse = 0;
    let stratifiedFalse = 0;
    let covered = 0;
    for (let replicate = 0; replicate < options.replicates; replicate += 1) {
      const drawn = draw(seededRandom(options.seed + 50_000 + replicate));
      // Every converted contact is worth 40.00, so the value distribution is two counts per cell.
      const valueCounts = drawn.cells.flatMap((cell) => [
        { labels: cell.labels, valueCents: 0, count: cell.n - cell.conversions },
        { labels: cell.labels, valueCents: 4000, count: cell.conversions },
      ]);
      const pooled = buildSnapshot(snapshotInputOf({ cells: drawn.cells, valueCounts }, definition));
      const stratified = buildSnapshot({ ...snapshotInputOf({ cells: drawn.cells, valueCounts }, definition), strata: drawn.strata });
      const pick = (snapshot: typeof pooled) => snapshot.segments.find((segment) => segment.segment === 'region=Ashgrove');
      if (falselyDifferent(pick(pooled))) pooledFalse += 1;
      const segment = pick(stratified);
      if (falselyDifferent(segment)) stratifiedFalse += 1;
      if ((segment?.rate_diff_ci_low ?? 1) <= 0 && (segment?.rate_diff_ci_high ?? -1) >= 0) covered += 1;
    }
    const slack = 2 * Math.sqrt((0.05 * 0.95) / options.replicates);
    const stratifiedFigure = atMost('within campaign (CMH, α = 0.05 unadjusted): region falsely better/worse', stratifiedFalse, options.replicates, 0.05);
    const coverage = atLeast('within campaign: Mantel–Haenszel difference interval (Sato variance) covers the true 0', covered, options.replicates, 0.95);
    return {
      figures: [
        { rule: 'campaigns pooled as one sample (the old rule): region falsely better/worse', value: pooledFalse / options.replicates, shown: `${((100 * pooledFalse) / options.replicates).toFixed(1)} % (${pooledFalse} of ${options.replicates})` },
        { ...stratifiedFigure, met: (stratifiedFigure.value ?? 0) <= 0.05 + slack },
        { ...coverage, met: (coverage.value ?? 0) >= 0.95 - slack },
      ],
      notes: [
        `${CUSTOMERS.toLocaleString('en-US')} customers in 4 regions; campaigns convert at 5 % and 15 %; Ashgrove was contacted 85 % in the better campaign, the others 45 %; within each campaign every region has the same rate.`,
        `Half of the customers are contacted in both campaigns, each with a propensity (normal, SD ${PROPENSITY_SD} on the logit scale) that carries over, so their two contacts are correlated.`,
        'The true within-campaign difference of Ashgrove is 0 in each campaign, so any better/worse verdict is false.',
      ],
    };
  },
};
