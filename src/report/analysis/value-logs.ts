/**
 * Summaries of log(value) over the positive values of a group, read from the value counts
 * (cell, value, count), for the two-part value test. A group's summary is known only when
 * every one of its cells was read value by value (large groups are not, see
 * `valueDistributionScope`), and the population's when its value counts are given; a group
 * with a negative value has none (the two-part test assumes amounts ≥ 0).
 */
import { emptySummary, mergeSummaries, subtractSummary, summaryFromShiftedSums, type Summary } from '../../stats/index.js';
import type { Group, GroupStats } from '../../segments/index.js';
import type { ValueBasis } from '../definition/index.js';
import { valueSummary } from './segment-tests.js';

interface LogSums {
  n: number;
  sum: number;
  squares: number;
  negative: boolean;
}

const emptySums = (): LogSums => ({ n: 0, sum: 0, squares: 0, negative: false });

function addValue(sums: LogSums, valueCents: number, count: number): void {
  if (valueCents < 0) sums.negative = true;
  if (valueCents <= 0) return;
  const logValue = Math.log(valueCents);
  sums.n += count;
  sums.sum += count * logValue;
  sums.squares += count * logValue * logValue;
}

function toSummary(sums: LogSums): Summary | null {
  if (sums.negative) return null;
  return sums.n === 0 ? emptySummary() : summaryFromShiftedSums(sums.n, 0, sums.sum, sums.squares);
}

export interface PositiveLogs {
  /** the population's summary, or null when unknown */
  total: Summary | null;
  /** a group's summary, or null when unknown */
  of(group: Pick<Group, 'dimensions' | 'labels'>): Summary | null;
  /** the units of `whole` outside `part`: null when either is unknown */
  without(whole: Summary | null, part: Summary | null): Summary | null;
}

/**
 * Builds the lookup of log summaries for a report's groups.
 * @throws StatsInputError when the counts are inconsistent (from the statistics core)
 */
export function positiveLogSummaries(input: {
  dimensions: readonly string[];
  cells: ReadonlyArray<{ labels: string[]; stats: GroupStats }>;
  valueCounts: ReadonlyArray<{ labels: string[]; valueCents: number; count: number }>;
  populationValueCounts?: ReadonlyArray<{ valueCents: number; count: number }> | undefined;
  basis: ValueBasis;
}): PositiveLogs {
  const perCell = new Map<string, LogSums>();
  for (const entry of input.valueCounts) {
    const key = JSON.stringify(entry.labels);
    const sums = perCell.get(key) ?? emptySums();
    addValue(sums, entry.valueCents, entry.count);
    perCell.set(key, sums);
  }
  const cellSummaries = input.cells.map((cell) => {
    const sums = perCell.get(JSON.stringify(cell.labels));
    if (sums !== undefined) return toSummary(sums);
    // a cell that was not read is still known when its every value is 0
    const metric = valueSummary(cell.stats, input.basis);
    return metric.n === 0 || (metric.mean === 0 && metric.sumSquaredDeviations === 0) ? emptySummary() : null;
  });
  const mergeAll = (indexes: number[]): Summary | null => {
    let merged = emptySummary();
    for (const index of indexes) {
      const summary = cellSummaries[index];
      if (summary === null || summary === undefined) return null;
      merged = mergeSummaries(merged, summary);
    }
    return merged;
  };
  let total: Summary | null;
  if (input.populationValueCounts !== undefined) {
    const sums = emptySums();
    for (const entry of input.populationValueCounts) addValue(sums, entry.valueCents, entry.count);
    total = toSummary(sums);
  } else {
    total = mergeAll(input.cells.map((_cell, index) => index));
  }
  const cache = new Map<string, Summary | null>();
  return {
    total,
    of(group) {
      const key = JSON.stringify([group.dimensions, group.labels]);
      if (cache.has(key)) return cache.get(key) ?? null;
      const positions = group.dimensions.map((dimension) => input.dimensions.indexOf(dimension));
      const members: number[] = [];
      input.cells.forEach((cell, index) => {
        if (positions.every((position, at) => cell.labels[position] === group.labels[at])) members.push(index);
      });
      const summary = mergeAll(members);
      cache.set(key, summary);
      return summary;
    },
    without(whole, part) {
      if (whole === null || part === null) return null;
      return subtractSummary(whole, part);
    },
  };
}
