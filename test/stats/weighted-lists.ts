/** Lists given as (value, count) pairs, shared by the tests of the statistics that read counts. */

/** The list in which each value appears `count` times. */
export function expand(counts: ReadonlyArray<{ value: number; count: number }>): number[] {
  return counts.flatMap((entry) => Array.from({ length: entry.count }, () => entry.value));
}

/** A right-skewed list of 58 amounts, mostly 0, as counts (invented). */
export const SKEWED = [
  { value: 0, count: 40 },
  { value: 12.5, count: 7 },
  { value: 19.99, count: 3 },
  { value: 20, count: 5 },
  { value: 55, count: 2 },
  { value: 240.1, count: 1 },
];
