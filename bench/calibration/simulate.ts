/**
 * Simulated reports with known truth. A scenario names the dimensions (labels and their
 * shares), the true conversion rate of every cell and the log-normal order value of the
 * customers who convert; `simulateReport` draws the units, aggregates them into the cells the
 * database would return and builds the snapshot with the product's own pure builder, so the
 * calibration measures exactly the rules a report applies. The truth of a segment is the
 * population truth (the expected shares of its cells), not the realized sample, so a segment
 * of a dimension without effect has a true difference of exactly zero.
 */
import { emptyCell, type CellAggregate, type ValueCount } from '../../src/segments/index.js';
import { DEFAULT_EQUIVALENCE_MARGIN, type ReportDefinition } from '../../src/report/definition/index.js';
import type { Snapshot, SnapshotSegment } from '../../src/report/shapes/index.js';
import { buildSnapshot, type SnapshotInput } from '../../src/report/snapshot/index.js';
import type { Random } from './random.js';

export interface DimensionDesign {
  name: string;
  labels: string[];
  /** relative shares of the labels; equal when left out */
  shares?: number[];
}

export interface Scenario {
  dimensions: DimensionDesign[];
  /** expected number of units (contacts) */
  units: number;
  /** the true conversion rate of the cell with these labels (one per dimension, in order) */
  rateOf(labels: readonly string[]): number;
  /** log-normal order value of a converted unit, in money (major units): log-scale mean and σ */
  orderValue?: { meanLog(labels: readonly string[]): number; sigma: number };
  /** report definition fields other than the dimensions (which come from `dimensions`) */
  definition?: Partial<ReportDefinition>;
}

/** The definition a simulated report uses: the product's defaults, no crosses unless asked. */
export function simulationDefinition(dimensions: string[], overrides: Partial<ReportDefinition> = {}): ReportDefinition {
  return {
    name: 'Simulated campaign',
    source: { campaign_ids: ['simulated'] },
    dimensions,
    crosses: [],
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
    economics: null,
    ...overrides,
  };
}

/** True figures of a segment and of its rest. */
export interface TrueFigures {
  rate: number;
  restRate: number;
  /** value per unit or per conversion, as the report's value basis says */
  value: number;
  restValue: number;
}

export interface SimulatedReport {
  snapshot: Snapshot;
  input: SnapshotInput;
  /** the population truth of a snapshot segment (by its `values`) */
  truth(segment: SnapshotSegment): TrueFigures;
}

interface CellDesign {
  labels: string[];
  share: number;
  rate: number;
  meanOrderValue: number;
  meanLog: number;
}

const DEFAULT_ORDER_VALUE = { meanLog: () => Math.log(40), sigma: 1 };

function cellDesigns(scenario: Scenario): CellDesign[] {
  const orderValue = scenario.orderValue ?? DEFAULT_ORDER_VALUE;
  let designs: Array<{ labels: string[]; share: number }> = [{ labels: [], share: 1 }];
  for (const dimension of scenario.dimensions) {
    const shares = dimension.shares ?? dimension.labels.map(() => 1);
    const total = shares.reduce((sum, share) => sum + share, 0);
    designs = designs.flatMap((design) => dimension.labels.map((label, index) => ({ labels: [...design.labels, label], share: (design.share * (shares[index] as number)) / total })));
  }
  return designs.map((design) => {
    const meanLog = orderValue.meanLog(design.labels);
    return { ...design, rate: scenario.rateOf(design.labels), meanLog, meanOrderValue: Math.exp(meanLog + (orderValue.sigma * orderValue.sigma) / 2) };
  });
}

export interface DrawnUnits {
  cells: CellAggregate[];
  /** counts per (cell, value in cents) of the value basis' units, as the distribution query returns them */
  valueCounts: ValueCount[];
}

/** Draws the units of a scenario into cells (exact money sums). */
export function drawCells(random: Random, scenario: Scenario, basis: ReportDefinition['value_basis'] = 'per_unit', designs: readonly CellDesign[] = cellDesigns(scenario)): DrawnUnits {
  const orderValue = scenario.orderValue ?? DEFAULT_ORDER_VALUE;
  const cells = designs.map((design) => emptyCell(design.labels));
  const counts = designs.map(() => new Map<number, number>());
  const count = (index: number, cents: number) => {
    const map = counts[index] as Map<number, number>;
    map.set(cents, (map.get(cents) ?? 0) + 1);
  };
  const shares = designs.map((design) => design.share);
  for (let unit = 0; unit < scenario.units; unit += 1) {
    const index = random.pick(shares);
    const design = designs[index] as CellDesign;
    const cell = cells[index] as CellAggregate;
    cell.n += 1;
    cell.unitValue.n += 1;
    if (random.bernoulli(design.rate) === 0) {
      if (basis === 'per_unit') count(index, 0);
      continue;
    }
    const cents = Math.max(1, Math.round(100 * Math.exp(design.meanLog + orderValue.sigma * random.normal())));
    cell.conversions += 1;
    const exact = BigInt(cents);
    cell.unitValue.sum += exact;
    cell.unitValue.squares += exact * exact;
    cell.convertedValue.n += 1;
    cell.convertedValue.sum += exact;
    cell.convertedValue.squares += exact * exact;
    count(index, cents);
  }
  const valueCounts = cells.flatMap((cell, index) => [...(counts[index] as Map<number, number>)].map(([valueCents, n]) => ({ labels: cell.labels, valueCents, count: n })));
  return { cells: cells.filter((cell) => cell.n > 0), valueCounts };
}

/** The population truth of the cells matching (or not matching) a segment's labels. */
function truthOf(designs: readonly CellDesign[], dimensions: readonly string[], basis: ReportDefinition['value_basis']) {
  const figures = (members: readonly CellDesign[]) => {
    const share = members.reduce((sum, cell) => sum + cell.share, 0);
    const converted = members.reduce((sum, cell) => sum + cell.share * cell.rate, 0);
    const money = members.reduce((sum, cell) => sum + cell.share * cell.rate * cell.meanOrderValue, 0);
    return { rate: converted / share, value: basis === 'per_unit' ? money / share : money / converted };
  };
  return (segment: SnapshotSegment): TrueFigures => {
    const inSegment = (cell: CellDesign) => Object.entries(segment.values).every(([dimension, label]) => cell.labels[dimensions.indexOf(dimension)] === label);
    const own = figures(designs.filter(inSegment));
    const rest = figures(designs.filter((cell) => !inSegment(cell)));
    return { rate: own.rate, restRate: rest.rate, value: own.value, restValue: rest.value };
  };
}

/** The input of `buildSnapshot` for these cells. */
export function snapshotInputOf(drawn: DrawnUnits, definition: ReportDefinition, sequence = 1, previousSnapshot: Snapshot | null = null): SnapshotInput {
  return {
    identity: { snapshotId: `simulated-${sequence}`, reportId: 'simulated', reportName: definition.name, sequence, createdAt: '2026-06-15T12:00:00.000Z', trigger: 'manual' },
    definition,
    shifts: { unitValue: 0, convertedValue: 0, age: 0 },
    arithmetic: 'floating',
    cells: drawn.cells,
    ageCounts: [],
    valueCounts: drawn.valueCounts,
    quality: { customersOutsidePopulation: 0, customersWithoutAnySale: 0, rejectedRows: [] },
    previousWindow: null,
    previousSnapshot,
  };
}

/** Draws one report of a scenario and builds its snapshot. */
export function simulateReport(random: Random, scenario: Scenario): SimulatedReport {
  const dimensions = scenario.dimensions.map((dimension) => dimension.name);
  const definition = simulationDefinition(dimensions, scenario.definition);
  const designs = cellDesigns(scenario);
  const input = snapshotInputOf(drawCells(random, scenario, definition.value_basis, designs), definition);
  return { snapshot: buildSnapshot(input), input, truth: truthOf(designs, dimensions, definition.value_basis) };
}
