/**
 * Rolls the finest cells up, in code, to the population total, to one-way segments (one
 * value of one dimension) and to two-way segments (one value of each of two dimensions).
 * Summaries are merged with the statistics core's `mergeSummaries`, so no raw row is needed;
 * "the rest" of a segment is the total minus the segment (`subtractGroup`).
 */
import { emptySummary, mergeSummaries, subtractSummary, summaryFromShiftedSums, type Summary } from '../stats/index.js';
import type { CellAggregate } from './cells.js';
import type { PairedShiftedSums, Shifts } from './shifted-sums.js';
import { compareLabelLists } from './text-order.js';

/** The sufficient statistics of any group of units. Money is in major units (cents / 100). */
export interface GroupStats {
  n: number;
  conversions: number;
  /** value of every unit */
  unitValue: Summary;
  /** value of the converted units only */
  convertedValue: Summary;
  /** ages of the units with a plausible age */
  age: Summary;
  /** age (years) and value (cents) sums of the value metric's units with a plausible age, about the report's shifts */
  ageValue: PairedShiftedSums;
}

const CENTS_PER_UNIT = 100;

/** Statistics of one cell, with value summaries converted from cents to major units. */
export function cellStats(cell: CellAggregate, shifts: Shifts): GroupStats {
  const money = (sums: CellAggregate['unitValue'], shift: number): Summary =>
    summaryFromShiftedSums(sums.n, shift / CENTS_PER_UNIT, sums.sumOfShifted / CENTS_PER_UNIT, sums.sumOfSquaredShifted / (CENTS_PER_UNIT * CENTS_PER_UNIT));
  return {
    n: cell.n,
    conversions: cell.conversions,
    unitValue: money(cell.unitValue, shifts.unitValue),
    convertedValue: money(cell.convertedValue, shifts.convertedValue),
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
  return {
    n: a.n + b.n,
    conversions: a.conversions + b.conversions,
    unitValue: mergeSummaries(a.unitValue, b.unitValue),
    convertedValue: mergeSummaries(a.convertedValue, b.convertedValue),
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
  return {
    n: total.n - part.n,
    conversions: total.conversions - part.conversions,
    unitValue: subtractSummary(total.unitValue, part.unitValue),
    convertedValue: subtractSummary(total.convertedValue, part.convertedValue),
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
