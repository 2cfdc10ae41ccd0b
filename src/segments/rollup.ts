/**
 * Rolls the finest cells up, in code, to the population total, to one-way segments (one
 * value of one dimension) and to two-way segments (one value of each of two dimensions).
 * Summaries are merged with the statistics core's `mergeSummaries`, so no raw row is needed;
 * "the rest" of a segment is the total minus the segment (`subtractGroup`).
 */
import { emptySummary, mergeSummaries, subtractSummary, summaryFromShiftedSums, type Summary } from '../stats/index.js';
import type { CellAggregate } from './cells.js';
import { NO_MONEY, type MoneySums, type PairedShiftedSums, type Shifts } from './shifted-sums.js';
import { compareLabelLists } from './text-order.js';

/**
 * The sufficient statistics of any group of units. Money is summed exactly in cents
 * (`unitValueCents`, `convertedValueCents`: merging and subtracting groups is exact integer
 * arithmetic, so the rest of a segment loses nothing to cancellation) and summarised in major
 * units (cents / 100) with one rounding at the end.
 */
export interface GroupStats {
  n: number;
  conversions: number;
  /** value of every unit */
  unitValue: Summary;
  /** value of the converted units only */
  convertedValue: Summary;
  unitValueCents: MoneySums;
  convertedValueCents: MoneySums;
  /** ages of the units with a plausible age */
  age: Summary;
  /** age (years) and value (cents) sums of the value metric's units with a plausible age, about the report's shifts */
  ageValue: PairedShiftedSums;
}

const CENTS_PER_UNIT = 100;

/**
 * The summary (major units) of exact sums of cents: mean Σv / n and sum of squared deviations
 * (n·Σv² − (Σv)²) / n, each numerator exact, so only the final divisions round: values that are
 * all zero give a mean and spread of exactly 0, and any constant gives a spread of 0.
 */
function summaryOfCents(money: MoneySums): Summary {
  if (money.n === 0) return emptySummary();
  const n = BigInt(money.n);
  const deviations = n * money.squares - money.sum * money.sum;
  return {
    n: money.n,
    mean: exactRatio(money.sum, n * BigInt(CENTS_PER_UNIT)),
    sumSquaredDeviations: deviations <= 0n ? 0 : Number(deviations) / (money.n * CENTS_PER_UNIT * CENTS_PER_UNIT),
  };
}

/** a / b with the whole part divided exactly, so a mean of equal amounts comes out as that amount. */
function exactRatio(a: bigint, b: bigint): number {
  const whole = a / b;
  return Number(whole) + Number(a - whole * b) / Number(b);
}

function addMoney(a: MoneySums, b: MoneySums): MoneySums {
  return { n: a.n + b.n, sum: a.sum + b.sum, squares: a.squares + b.squares };
}

function subtractMoney(total: MoneySums, part: MoneySums): MoneySums {
  return { n: total.n - part.n, sum: total.sum - part.sum, squares: total.squares - part.squares };
}

/** Statistics of one cell, with value summaries converted from cents to major units. */
export function cellStats(cell: CellAggregate, shifts: Shifts): GroupStats {
  return {
    n: cell.n,
    conversions: cell.conversions,
    unitValue: summaryOfCents(cell.unitValue),
    convertedValue: summaryOfCents(cell.convertedValue),
    unitValueCents: cell.unitValue,
    convertedValueCents: cell.convertedValue,
    age: summaryFromShiftedSums(cell.age.n, shifts.age, cell.age.sumOfShifted, cell.age.sumOfSquaredShifted),
    ageValue: { ...cell.ageValue },
  };
}

/** The statistics of no units, the identity of `mergeGroups`. */
function emptyGroup(): GroupStats {
  return {
    n: 0,
    conversions: 0,
    unitValue: emptySummary(),
    convertedValue: emptySummary(),
    unitValueCents: NO_MONEY,
    convertedValueCents: NO_MONEY,
    age: emptySummary(),
    ageValue: { n: 0, ageSum: 0, ageSquaredSum: 0, valueSum: 0, valueSquaredSum: 0, crossSum: 0 },
  };
}

/**
 * The statistics of two disjoint groups together: counts and sums add, summaries merge with
 * the core's `mergeSummaries` (Chan, Golub & LeVeque 1983).
 * @throws StatsInputError when a summary is invalid (from the statistics core)
 */
function mergeGroups(a: GroupStats, b: GroupStats): GroupStats {
  const unitValueCents = addMoney(a.unitValueCents, b.unitValueCents);
  const convertedValueCents = addMoney(a.convertedValueCents, b.convertedValueCents);
  return {
    n: a.n + b.n,
    conversions: a.conversions + b.conversions,
    unitValue: summaryOfCents(unitValueCents),
    convertedValue: summaryOfCents(convertedValueCents),
    unitValueCents,
    convertedValueCents,
    age: mergeSummaries(a.age, b.age),
    ageValue: {
      n: a.ageValue.n + b.ageValue.n,
      ageSum: a.ageValue.ageSum + b.ageValue.ageSum,
      ageSquaredSum: a.ageValue.ageSquaredSum + b.ageValue.ageSquaredSum,
      valueSum: a.ageValue.valueSum + b.ageValue.valueSum,
      valueSquaredSum: a.ageValue.valueSquaredSum + b.ageValue.valueSquaredSum,
      crossSum: a.ageValue.crossSum + b.ageValue.crossSum,
    },
  };
}

/** The units of `total` that are not in `part` (the rest of a segment). */
export function subtractGroup(total: GroupStats, part: GroupStats): GroupStats {
  const unitValueCents = subtractMoney(total.unitValueCents, part.unitValueCents);
  const convertedValueCents = subtractMoney(total.convertedValueCents, part.convertedValueCents);
  return {
    n: total.n - part.n,
    conversions: total.conversions - part.conversions,
    unitValue: summaryOfCents(unitValueCents),
    convertedValue: summaryOfCents(convertedValueCents),
    unitValueCents,
    convertedValueCents,
    age: subtractSummary(total.age, part.age),
    ageValue: {
      n: total.ageValue.n - part.ageValue.n,
      ageSum: total.ageValue.ageSum - part.ageValue.ageSum,
      ageSquaredSum: total.ageValue.ageSquaredSum - part.ageValue.ageSquaredSum,
      valueSum: total.ageValue.valueSum - part.ageValue.valueSum,
      valueSquaredSum: total.ageValue.valueSquaredSum - part.ageValue.valueSquaredSum,
      crossSum: total.ageValue.crossSum - part.ageValue.crossSum,
    },
  };
}

/** One group of the roll-up: the dimensions it fixes (in report order) and their values. */
export interface Group {
  dimensions: string[];
  labels: string[];
  stats: GroupStats;
}

/**
 * Groups the cells by the dimensions at `indexes` (positions in the report's dimension list)
 * and merges each group's cell statistics. Groups come back ordered by their values.
 */
export function groupBy(cells: ReadonlyArray<{ labels: string[]; stats: GroupStats }>, dimensions: readonly string[], indexes: readonly number[]): Group[] {
  const groups = new Map<string, Group>();
  for (const cell of cells) {
    const values = indexes.map((index) => cell.labels[index] as string);
    const key = JSON.stringify(values);
    const existing = groups.get(key);
    if (existing) existing.stats = mergeGroups(existing.stats, cell.stats);
    else groups.set(key, { dimensions: indexes.map((index) => dimensions[index] as string), labels: values, stats: cell.stats });
  }
  return [...groups.values()].sort((left, right) => compareLabelLists(left.labels, right.labels));
}

export interface Rollup {
  total: GroupStats;
  /** one-way segments, dimension by dimension in report order, then two-way segments cross by cross */
  segments: Group[];
}

/**
 * The population total, every one-way segment and every two-way segment of the requested
 * crosses, from the finest cells.
 * @throws Error when a cross names a dimension that is not among `dimensions`
 * @example
 * rollUp(cells, ['region', 'channel'], [['region', 'channel']]).segments.length; // regions + channels + pairs seen
 */
export function rollUp(cells: ReadonlyArray<{ labels: string[]; stats: GroupStats }>, dimensions: readonly string[], crosses: ReadonlyArray<readonly [string, string]>): Rollup {
  let total = emptyGroup();
  for (const cell of cells) total = mergeGroups(total, cell.stats);
  const segments: Group[] = [];
  dimensions.forEach((_dimension, index) => segments.push(...groupBy(cells, dimensions, [index])));
  for (const [first, second] of crosses) {
    const firstIndex = dimensions.indexOf(first);
    const secondIndex = dimensions.indexOf(second);
    if (firstIndex < 0 || secondIndex < 0) throw new Error(`cross ${first} × ${second} names a dimension the report does not have`);
    segments.push(...groupBy(cells, dimensions, [Math.min(firstIndex, secondIndex), Math.max(firstIndex, secondIndex)]));
  }
  return { total, segments };
}
