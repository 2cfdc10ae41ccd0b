/** A frequency table of labelled counts in Pareto order. */
import { StatsInputError } from './errors.js';
import { computed, notComputable } from './result.js';
import type { Outcome } from './result.js';
import { requireCount } from './validate.js';

/** One category's count and shares in a frequency table. */
export interface FrequencyRow {
  readonly label: string;
  readonly count: number;
  /** count / total */
  readonly share: number;
  /** share of this row and all rows above it; 1 on the last row */
  readonly cumulativeShare: number;
}

/**
 * Frequency table in Pareto order: rows sorted by descending count, ties by label (ascending
 * by UTF-16 code units, so the order does not depend on the locale), each with its share of
 * the total and the cumulative share down to it. Cumulative shares are running counts over
 * the total, so the last one is exactly 1. Source: common practice (the ordering of a Pareto
 * chart). Undefined (with a reason) when the total is 0.
 * @throws StatsInputError for a negative or non-integer count or a repeated label
 * @example
 * frequencyTable([{ label: 'north', count: 2 }, { label: 'east', count: 5 }, { label: 'west', count: 2 }]);
 * // rows: east 5 (0.5556, 0.5556), north 2 (0.2222, 0.7778), west 2 (0.2222, 1)
 */
export function frequencyTable(
  counts: ReadonlyArray<{ readonly label: string; readonly count: number }>,
): Outcome<FrequencyRow[]> {
  if (!Array.isArray(counts)) throw new StatsInputError('counts', 'counts must be an array of { label, count }');
  const seen = new Set<string>();
  let total = 0;
  counts.forEach((entry, index) => {
    if (entry === null || typeof entry !== 'object' || typeof entry.label !== 'string') {
      throw new StatsInputError('counts', `counts[${index}] must be an object { label: string, count: number }`);
    }
    requireCount(`counts[${index}].count`, entry.count);
    if (seen.has(entry.label)) {
      throw new StatsInputError('counts', `counts has the label ${JSON.stringify(entry.label)} more than once`);
    }
    seen.add(entry.label);
    total += entry.count;
  });
  if (total === 0) return notComputable('The shares are undefined: the counts add up to 0.');
  const ordered = [...counts].sort((left, right) => {
    if (left.count !== right.count) return right.count - left.count;
    if (left.label === right.label) return 0;
    return left.label < right.label ? -1 : 1;
  });
  let runningCount = 0;
  return computed(
    ordered.map((entry) => {
      runningCount += entry.count;
      return {
        label: entry.label,
        count: entry.count,
        share: entry.count / total,
        cumulativeShare: runningCount / total,
      };
    }),
  );
}
