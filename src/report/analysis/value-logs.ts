/**
 * Summaries of log(value) over the positive values of a group, read from the value counts
 * (cell, value, count), for the two-part value test. A group's summary is known only when
 * every one of its cells was read value by value (large groups are not, see
 * `valueDistributionScope`), and the population's when its value counts are given; a group
 * with a negative value has none (the two-part test assumes amounts ≥ 0).
 */
import { StatsInputError, summaryFromShiftedSums, type Summary } from '../../stats/index.js';
import type { Group, GroupStats } from '../../segments/index.js';
import type { ValueBasis } from '../definition/index.js';
import { valueSummary } from './segment-tests.js';

/** Sums of log(value) − c over the positive values (c: the population's mean log, so the sums do not cancel). */
export interface LogSums {
  readonly n: number;
  readonly sum: number;
  readonly squares: number;
}

interface MutableLogSums {
  n: number;
  sum: number;
  squares: number;
  negative: boolean;
}

const emptySums = (): MutableLogSums => ({ n: 0, sum: 0, squares: 0, negative: false });

function addValue(sums: MutableLogSums, valueCents: number, count: number, shift: number): void {
  if (valueCents < 0) sums.negative = true;
  if (valueCents <= 0) return;
  const centred = Math.log(valueCents) - shift;
  sums.n += count;
  sums.sum += count * centred;
  sums.squares += count * centred * centred;
}

function settled(sums: MutableLogSums): LogSums | null {
  return sums.negative ? null : { n: sums.n, sum: sums.sum, squares: sums.squares };
}

export interface PositiveLogs {
  /** the population's sums, or null when unknown */
  readonly total: LogSums | null;
  /** a group's sums, or null when unknown */
  of(group: Pick<Group, 'dimensions' | 'labels'>): LogSums | null;
  /** the units of `whole` outside `part`: null when either is unknown or they do not nest */
  without(whole: LogSums | null, part: LogSums | null): LogSums | null;
  /** the summary of log(value) from the sums, or null when unknown or inconsistent */
  summary(sums: LogSums | null): Summary | null;
}

/**
 * Builds the lookup of log sums for a report's groups. Sums that no set of values could have
 * (counts read at different moments that disagree) give null, and the value test falls back.
 */
export function positiveLogSummaries(input: {
  dimensions: readonly string[];
  cells: ReadonlyArray<{ labels: string[]; stats: GroupStats }>;
  valueCounts: ReadonlyArray<{ labels: string[]; valueCents: number; count: number }>;
  populationValueCounts?: ReadonlyArray<{ valueCents: number; count: number }> | undefined;
  basis: ValueBasis;
}): PositiveLogs {
  // Summed in one fixed order, so both database engines (which return rows in different orders) give the same bits.
  const byValue = <T extends { valueCents: number }>(entries: readonly T[]) => [...entries].sort((left, right) => left.valueCents - right.valueCents);
  const valueCounts = byValue(input.valueCounts);
  const populationValueCounts = input.populationValueCounts === undefined ? undefined : byValue(input.populationValueCounts);
  const shiftSource: ReadonlyArray<{ valueCents: number; count: number }> = populationValueCounts ?? valueCounts;
  let logTotal = 0;
  let positives = 0;
  for (const entry of shiftSource) {
    if (entry.valueCents <= 0) continue;
    logTotal += entry.count * Math.log(entry.valueCents);
    positives += entry.count;
  }
  const shift = positives > 0 ? logTotal / positives : 0;

  const perCell = new Map<string, MutableLogSums>();
  // Value counts often share their cell's label list: its text is then made once.
  const keys = new Map<readonly string[], string>();
  for (const entry of valueCounts) {
    let key = keys.get(entry.labels);
    if (key === undefined) keys.set(entry.labels, (key = JSON.stringify(entry.labels)));
    const sums = perCell.get(key) ?? emptySums();
    addValue(sums, entry.valueCents, entry.count, shift);
    perCell.set(key, sums);
  }
  const cellSums = input.cells.map((cell): LogSums | null => {
    const sums = perCell.get(JSON.stringify(cell.labels));
    if (sums !== undefined) return settled(sums);
    // a cell that was not read is still known when its every value is 0
    const metric = valueSummary(cell.stats, input.basis);
    return metric.n === 0 || (metric.mean === 0 && metric.sumSquaredDeviations === 0) ? { n: 0, sum: 0, squares: 0 } : null;
  });
  const addAll = (indexes: number[]): LogSums | null => {
    let n = 0;
    let sum = 0;
    let squares = 0;
    for (const index of indexes) {
      const sums = cellSums[index];
      if (sums === null || sums === undefined) return null;
      n += sums.n;
      sum += sums.sum;
      squares += sums.squares;
    }
    return { n, sum, squares };
  };
  let total: LogSums | null;
  if (populationValueCounts !== undefined) {
    const sums = emptySums();
    for (const entry of populationValueCounts) addValue(sums, entry.valueCents, entry.count, shift);
    total = settled(sums);
  } else {
    total = addAll(input.cells.map((_cell, index) => index));
  }
  const cache = new Map<string, LogSums | null>();
  // Per set of dimensions, the indexes of the cells of each label combination, in cell order
  // (one pass over the cells per set, instead of one per group).
  const membersByDimensions = new Map<string, Map<string, number[]>>();
  const membersOf = (dimensions: readonly string[], labels: readonly string[]): number[] => {
    const dimensionsKey = JSON.stringify(dimensions);
    let byLabels = membersByDimensions.get(dimensionsKey);
    if (!byLabels) {
      const positions = dimensions.map((dimension) => input.dimensions.indexOf(dimension));
      byLabels = new Map();
      for (let index = 0; index < input.cells.length; index++) {
        const cellLabels = (input.cells[index] as { labels: string[] }).labels;
        const labelsKey = JSON.stringify(positions.map((position) => cellLabels[position]));
        let members = byLabels.get(labelsKey);
        if (!members) byLabels.set(labelsKey, (members = []));
        members.push(index);
      }
      membersByDimensions.set(dimensionsKey, byLabels);
    }
    return byLabels.get(JSON.stringify(labels)) ?? [];
  };
  return {
    total,
    of(group) {
      const key = JSON.stringify([group.dimensions, group.labels]);
      if (cache.has(key)) return cache.get(key) ?? null;
      const sums = addAll(membersOf(group.dimensions, group.labels));
      cache.set(key, sums);
      return sums;
    },
    without(whole, part) {
      if (whole === null || part === null || part.n > whole.n) return null;
      return { n: whole.n - part.n, sum: whole.sum - part.sum, squares: whole.squares - part.squares };
    },
    summary(sums) {
      if (sums === null) return null;
      try {
        return summaryFromShiftedSums(sums.n, shift, sums.sum, Math.max(0, sums.squares));
      } catch (error) {
        if (error instanceof StatsInputError) return null;
        throw error;
      }
    },
  };
}
