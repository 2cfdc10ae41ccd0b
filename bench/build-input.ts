/**
 * The input of `buildSnapshot` for the benchmark's report, made in code without a database: the
 * contacts bench/data.ts draws are grouped and folded the way the report's reads group and fold
 * them (cells with exact money sums and age sums, counts per cell and age, campaign strata,
 * value counts per cell for the groups small enough to be described value by value, the
 * population's value counts and its age × value grid). Deterministic from the seed, so the
 * build can be profiled and compared before and after a change.
 */
import { emptyCell, ageBandOf, compareLabelLists, compareText, shiftsFromTotals, valueCountsOf, gridCountsOf, binIndex } from '../src/segments/index.js';
import type { AgeBinValueCount } from '../src/segments/age-value-grid.js';
import type { AgeCount, CampaignCellCount, CellAggregate, Shifts, ValueCount } from '../src/segments/index.js';
import { exactTotals } from '../src/segments/shifted-sums.js';
import { plausibleAgeOf } from '../src/segments/population.js';
import { ageInYears } from '../src/ingest/fields.js';
import type { ReportDefinition } from '../src/report/definition/index.js';
import { simulationDefinition } from './calibration/simulate.js';
import { ageGridAxis, ageValueGridAxes, isExpandable } from '../src/report/snapshot/profiles.js';
import type { SnapshotInput } from '../src/report/snapshot/index.js';
import { seededRandom } from '../seed/generate.js';
import { drawBenchData, type BenchCustomer } from './data.js';

/** One unit as the population's row gives it: its campaign, its labels, its age at contact, its outcome and value. */
interface Unit {
  campaign: string;
  labels: string[];
  age: number | null;
  converted: boolean;
  cents: number;
}

/** One group of the cell query: units of one campaign, cell, age and outcome, with exact money sums. */
interface Group {
  campaign: string;
  labels: string[];
  age: number | null;
  converted: boolean;
  n: number;
  valueSum: bigint;
  valueSquares: bigint;
}

/** Groups units by campaign, cell, age and outcome; keeps every unit's value for the value counts. */
class UnitGroups {
  readonly groups = new Map<string, Group>();
  /** cell key → value → count, of units converted or worth more than 0 */
  readonly values = new Map<string, { labels: string[]; counts: Map<number, number> }>();
  /** age → value → count, over the whole population */
  readonly ageValues = new Map<number | null, Map<number, number>>();

  add(unit: Unit): void {
    const cellKey = JSON.stringify(unit.labels);
    const key = `${unit.campaign}|${cellKey}|${unit.age ?? ''}|${unit.converted ? 1 : 0}`;
    let group = this.groups.get(key);
    if (!group) this.groups.set(key, (group = { campaign: unit.campaign, labels: unit.labels, age: unit.age, converted: unit.converted, n: 0, valueSum: 0n, valueSquares: 0n }));
    group.n += 1;
    const cents = BigInt(unit.cents);
    group.valueSum += cents;
    group.valueSquares += cents * cents;
    if (unit.converted || unit.cents !== 0) {
      let cell = this.values.get(cellKey);
      if (!cell) this.values.set(cellKey, (cell = { labels: unit.labels, counts: new Map() }));
      cell.counts.set(unit.cents, (cell.counts.get(unit.cents) ?? 0) + 1);
    }
    let byValue = this.ageValues.get(unit.age);
    if (!byValue) this.ageValues.set(unit.age, (byValue = new Map()));
    byValue.set(unit.cents, (byValue.get(unit.cents) ?? 0) + 1);
  }
}

/** Σ(v − c) and Σ(v − c)² of a group as numbers, as the cell fold computes them. */
function shiftedMoney(n: number, sum: bigint, squares: bigint, shift: number): { sum: number; squares: number } {
  const count = BigInt(n);
  const c = BigInt(shift);
  return { sum: Number(sum - count * c), squares: Number(squares - 2n * c * sum + count * c * c) };
}

/** The cells, counts per cell and age, and strata of the groups, folded as the report's cell read folds its rows (per-unit value basis). */
function foldGroups(groups: readonly Group[], shifts: Shifts, stratified: boolean) {
  const cells = new Map<string, CellAggregate>();
  const ageCounts = new Map<string, AgeCount>();
  const strata = new Map<string, CampaignCellCount>();
  for (const { campaign, labels, age, converted, n, valueSum, valueSquares } of groups) {
    const conversions = converted ? n : 0;
    if (stratified) {
      const stratumKey = JSON.stringify([campaign, labels]);
      const stratum = strata.get(stratumKey);
      if (stratum) {
        stratum.n += n;
        stratum.conversions += conversions;
      } else strata.set(stratumKey, { campaign, labels, n, conversions });
    }
    const key = JSON.stringify(labels);
    let cell = cells.get(key);
    if (!cell) cells.set(key, (cell = emptyCell(labels)));
    cell.n += n;
    cell.conversions += conversions;
    cell.unitValue = { n: cell.n, sum: cell.unitValue.sum + valueSum, squares: cell.unitValue.squares + valueSquares };
    if (converted) cell.convertedValue = { n: cell.conversions, sum: cell.convertedValue.sum + valueSum, squares: cell.convertedValue.squares + valueSquares };
    const ageKey = `${key}|${age ?? ''}`;
    const ageCount = ageCounts.get(ageKey);
    if (ageCount) ageCount.count += n;
    else ageCounts.set(ageKey, { labels, age, count: n });
    if (age === null) continue;
    const shiftedAge = age - shifts.age;
    cell.age = { n: cell.age.n + n, sumOfShifted: cell.age.sumOfShifted + n * shiftedAge, sumOfSquaredShifted: cell.age.sumOfSquaredShifted + n * shiftedAge * shiftedAge };
    const money = shiftedMoney(n, valueSum, valueSquares, shifts.unitValue);
    cell.ageValue = {
      n: cell.ageValue.n + n,
      ageSum: cell.ageValue.ageSum + n * shiftedAge,
      ageSquaredSum: cell.ageValue.ageSquaredSum + n * shiftedAge * shiftedAge,
      valueSum: cell.ageValue.valueSum + money.sum,
      valueSquaredSum: cell.ageValue.valueSquaredSum + money.squares,
      crossSum: cell.ageValue.crossSum + shiftedAge * money.sum,
    };
  }
  return {
    cells: [...cells.values()].sort((left, right) => compareLabelLists(left.labels, right.labels)),
    ageCounts: [...ageCounts.values()],
    strata: [...strata.values()].sort((left, right) => compareText(left.campaign, right.campaign) || compareLabelLists(left.labels, right.labels)),
  };
}

/** Which cells get value counts: those in a label whose units are few enough to be described value by value (as the refresh decides). */
function inValueScope(cells: readonly CellAggregate[], dimensions: readonly string[]): (labels: readonly string[]) => boolean {
  if (isExpandable(cells.reduce((sum, cell) => sum + cell.n, 0))) return () => true;
  const small = dimensions.map((_dimension, index) => {
    const sizes = new Map<string, number>();
    for (const cell of cells) sizes.set(cell.labels[index] as string, (sizes.get(cell.labels[index] as string) ?? 0) + cell.n);
    return new Set([...sizes].filter(([, size]) => isExpandable(size)).map(([label]) => label));
  });
  return (labels) => labels.some((label, index) => small[index]?.has(label) === true);
}

function inputOf(units: UnitGroups, definition: ReportDefinition, campaigns: number): SnapshotInput {
  const groups = [...units.groups.values()];
  const shifts = shiftsFromTotals(exactTotals(groups));
  const { cells, ageCounts, strata } = foldGroups(groups, shifts, campaigns > 1);
  const inScope = inValueScope(cells, definition.dimensions);
  const valueCounts: ValueCount[] = [];
  for (const cell of cells) {
    if (!inScope(cell.labels)) continue;
    const counts = units.values.get(JSON.stringify(cell.labels))?.counts ?? new Map<number, number>();
    for (const [valueCents, count] of counts) valueCounts.push({ labels: cell.labels, valueCents, count });
    const zeros = cell.n - cell.conversions - (counts.get(0) ?? 0);
    if (zeros > 0) valueCounts.push({ labels: cell.labels, valueCents: 0, count: zeros });
  }
  const ageAxis = ageGridAxis(ageCounts);
  const byAgeBin = new Map<string, AgeBinValueCount>();
  for (const [age, byValue] of units.ageValues) {
    const ageBin = age === null || ageAxis === null ? null : binIndex(age, ageAxis);
    for (const [valueCents, count] of byValue) {
      const key = `${ageBin}|${valueCents}`;
      const entry = byAgeBin.get(key);
      if (entry) entry.count += count;
      else byAgeBin.set(key, { ageBin, valueCents, count });
    }
  }
  const ageBinValues = [...byAgeBin.values()];
  const populationValueCounts = valueCountsOf(ageBinValues);
  const axes = ageValueGridAxes(ageCounts, populationValueCounts);
  return {
    identity: { snapshotId: 'bench-build', reportId: 'bench-report', reportName: definition.name, sequence: 1, createdAt: '2026-12-03T09:00:00.000Z', trigger: 'manual' },
    definition,
    shifts,
    arithmetic: 'exact',
    cells,
    ageCounts,
    valueCounts,
    populationValueCounts,
    ageValueGrid: axes === null ? null : { axes, counts: gridCountsOf(ageBinValues, axes) },
    quality: { customersOutsidePopulation: 0, customersWithoutAnySale: 0, rejectedRows: [] },
    strata,
    previousWindow: null,
    previousSnapshot: null,
    earlierContactsChanged: false,
    publicationThreshold: 10,
  };
}

/** The stored definition of the benchmark's report (bench/run.ts): the defaults, every pair crossed. */
/** The product's defaults (the simulated reports' definition) over these campaigns, with every pair of dimensions crossed. */
function reportDefinition(name: string, campaignIds: string[], dimensions: string[]): ReportDefinition {
  const crosses: Array<[string, string]> = [];
  dimensions.forEach((first, index) => dimensions.slice(index + 1).forEach((second) => crosses.push([first, second])));
  return simulationDefinition(dimensions, { name, source: { campaign_ids: campaignIds }, crosses });
}

const CAMPAIGNS = 4;
const campaignId = (index: number) => `bench-campaign-${index + 1}`;

/**
 * The benchmark's report (bench/run.ts) over `contacts` contacts in 4 campaigns of a quarter
 * each, a quarter as many customers: age band × region × channel with every cross.
 */
export function benchReportInput(contacts: number, seed = 42): SnapshotInput {
  const definition = reportDefinition('bench', Array.from({ length: CAMPAIGNS }, (_unused, index) => campaignId(index)), ['age_band', 'region', 'channel']);
  const customers: BenchCustomer[] = [];
  const units = new UnitGroups();
  drawBenchData(
    { customers: contacts / CAMPAIGNS, campaigns: CAMPAIGNS, contactsPerCampaign: contacts / CAMPAIGNS, seed },
    {
      customer: (customer) => customers.push(customer),
      contact: (contact) => {
        const customer = customers[contact.customerIndex] as BenchCustomer;
        const age = plausibleAgeOf(customer.birthDate === '' ? null : ageInYears(customer.birthDate, contact.contactedAt));
        units.add({
          campaign: campaignId(contact.campaignIndex),
          labels: [ageBandOf(age, definition.age_bands), customer.region, customer.channel],
          age,
          converted: contact.converted,
          cents: Math.round(Number(contact.revenue) * 100),
        });
      },
    },
  );
  return inputOf(units, definition, CAMPAIGNS);
}

/**
 * The widest report a definition allows in practice: two extra attributes of `labels` labels
 * each (uneven shares), crossed, over `contacts` contacts in 4 campaigns.
 */
export function wideReportInput(contacts: number, labels = 100, seed = 7): SnapshotInput {
  const definition = reportDefinition('wide', Array.from({ length: CAMPAIGNS }, (_unused, index) => campaignId(index)), ['segment_a', 'segment_b']);
  const random = seededRandom(seed);
  const cumulativeShares = () => {
    const weights = Array.from({ length: labels }, () => Math.exp(1.6 * (random() - 0.5)));
    const total = weights.reduce((sum, weight) => sum + weight, 0);
    let running = 0;
    return weights.map((weight) => (running += weight / total));
  };
  const shares = [cumulativeShares(), cumulativeShares()];
  const labelEffect = shares.map(() => Array.from({ length: labels }, () => 0.06 * (random() - 0.5)));
  const pick = (cumulative: readonly number[]) => {
    const u = random();
    const index = cumulative.findIndex((bound) => u < bound);
    return index < 0 ? cumulative.length - 1 : index;
  };
  const units = new UnitGroups();
  for (let unit = 0; unit < contacts; unit++) {
    const a = pick(shares[0] as number[]);
    const b = pick(shares[1] as number[]);
    const rate = 0.12 + (labelEffect[0]?.[a] as number) + (labelEffect[1]?.[b] as number);
    const converted = random() < rate;
    const age = random() < 0.03 ? null : 18 + Math.floor(random() * 63);
    units.add({
      campaign: campaignId(unit % CAMPAIGNS),
      labels: [`a${String(a + 1).padStart(3, '0')}`, `b${String(b + 1).padStart(3, '0')}`],
      age,
      converted,
      cents: converted ? 1000 + Math.floor(random() * 9000) : 0,
    });
  }
  return inputOf(units, definition, CAMPAIGNS);
}
