/**
 * The reversal check (Simpson's paradox): a pair of values of one dimension whose order on
 * the ranking metric overall is reversed within every level of another dimension. Source:
 * Simpson, E. H. (1951). The interpretation of interaction in contingency tables. JRSS B 13,
 * 238–241.
 *
 * Only cells with at least `min_n` units take part, both overall and within levels, so that a
 * "reversal" is not just the noise of tiny cells; at least two levels must be compared.
 */
import { groupBy, type Group, type GroupStats } from '../../segments/index.js';
import type { Reversal } from '../shapes/index.js';

/** Fewest levels of the other dimension in which a reversal must hold. */
const MIN_LEVELS_FOR_REVERSAL = 2;

export interface ReversalInput {
  dimensions: readonly string[];
  cells: ReadonlyArray<{ labels: string[]; stats: GroupStats }>;
  minN: number;
  /** the ranking metric of a group, or null when it cannot be computed */
  metric: (stats: GroupStats) => number | null;
}

/**
 * Every reversal among the report's dimensions, in a stable order (dimension, other
 * dimension, higher value, lower value). The `sentence` is left empty for the caller to word.
 * @example
 * findReversals({ dimensions: ['region', 'channel'], cells, minN: 30, metric: (stats) => stats.conversions / stats.n });
 */
export function findReversals(input: ReversalInput): Array<Omit<Reversal, 'sentence'>> {
  const found: Array<Omit<Reversal, 'sentence'>> = [];
  const { dimensions, cells, minN, metric } = input;
  const metricOf = (group: Group | undefined) => (group === undefined || group.stats.n < minN ? null : metric(group.stats));
  dimensions.forEach((dimension, index) => {
    const overall = groupBy(cells, dimensions, [index]);
    dimensions.forEach((within, withinIndex) => {
      if (withinIndex === index) return;
      const pairs = groupBy(cells, dimensions, [index, withinIndex]);
      const levels = [...new Set(pairs.map((group) => group.labels[1] as string))];
      const levelIndex = new Map(levels.map((level, position) => [level, position]));
      // Each value's metric within each level, computed once (null: no such cell, or too small).
      const withinLevels = new Map<string, Array<number | null>>();
      for (const group of pairs) {
        const label = group.labels[0] as string;
        let row = withinLevels.get(label);
        if (!row) withinLevels.set(label, (row = levels.map(() => null)));
        row[levelIndex.get(group.labels[1] as string) as number] = metricOf(group);
      }
      const overallMetrics = overall.map(metricOf);
      for (const [firstIndex, first] of overall.entries()) {
        const firstMetric = overallMetrics[firstIndex] ?? null;
        if (firstMetric === null) continue;
        const higher = first.labels[0] as string;
        const higherLevels = withinLevels.get(higher);
        for (const [secondIndex, second] of overall.entries()) {
          const secondMetric = overallMetrics[secondIndex] ?? null;
          if (secondMetric === null || !(firstMetric > secondMetric)) continue;
          const lower = second.labels[0] as string;
          const lowerLevels = withinLevels.get(lower);
          let compared = 0;
          let reversedEverywhere = true;
          for (let level = 0; level < levels.length && higherLevels !== undefined && lowerLevels !== undefined; level++) {
            const higherWithin = higherLevels[level] ?? null;
            const lowerWithin = lowerLevels[level] ?? null;
            if (higherWithin === null || lowerWithin === null) continue;
            compared += 1;
            if (!(higherWithin < lowerWithin)) {
              // one level not reversed settles it
              reversedEverywhere = false;
              break;
            }
          }
          if (reversedEverywhere && compared >= MIN_LEVELS_FOR_REVERSAL) {
            found.push({
              dimension,
              within,
              higher_overall: higher,
              lower_overall: lower,
              higher_overall_metric: firstMetric,
              lower_overall_metric: secondMetric,
              levels_compared: compared,
            });
          }
        }
      }
    });
  });
  return found;
}
