import { describe, expect, test } from 'vitest';
import { countByBucketAndValue, type RowColumnsView } from '../../src/segments/bucket-value-counts.js';

/** Rows of a few groups with repeated values, in no particular order of value. */
function rowsOf(entries: Array<[group: number, valueCents: number, units: number]>): RowColumnsView {
  return {
    length: entries.length,
    groups: Int32Array.from(entries, ([group]) => group),
    values: Float64Array.from(entries, ([, value]) => value),
    units: Float64Array.from(entries, ([, , units]) => units),
  };
}

describe('units per bucket and value', () => {
  const rows = rowsOf([
    [0, 500, 2],
    [0, 0, 7],
    [1, 500, 3],
    [2, 99_999_999_999_999, 1],
    [2, 500, 4],
    [3, 0, 5],
    [1, 12, 1],
    [0, 500, 1],
  ]);
  // Groups 0 and 1 in bucket 1, group 2 in bucket 0, group 3 left out.
  const bucketOfGroup = Int32Array.from([1, 1, 0, -1]);
  const expected = [
    { bucket: 0, valueCents: 500, count: 4 },
    { bucket: 0, valueCents: 99_999_999_999_999, count: 1 },
    { bucket: 1, valueCents: 0, count: 7 },
    { bucket: 1, valueCents: 12, count: 1 },
    { bucket: 1, valueCents: 500, count: 6 },
  ];

  const totals = [
    { valueCents: 0, count: 7 },
    { valueCents: 12, count: 1 },
    { valueCents: 500, count: 10 },
    { valueCents: 99_999_999_999_999, count: 1 },
  ];
  // Values up to 100 in bin 0, the rest in bin 1.
  const binOfValue = (valueCents: number) => (valueCents <= 100 ? 0 : 1);

  // The flat array (the default limit) and the maps (a limit of 3 entries, below 2 buckets × 4 values).
  test.each([undefined, 3])('sums the units of each (bucket, value), per value and per value bin, leaving out the groups without a bucket (limit %s)', (limit) => {
    const table = countByBucketAndValue(rows, bucketOfGroup, 2, limit);
    expect(table.entries()).toEqual(expected);
    expect(table.valueTotals()).toEqual(totals);
    expect(table.binnedByValue(2, binOfValue, 2)).toEqual([
      { bucket: 0, valueBin: 1, count: 5 },
      { bucket: 1, valueBin: 0, count: 8 },
      { bucket: 1, valueBin: 1, count: 6 },
    ]);
    // Only the buckets before the one given, as the grid leaves out the units of no known age.
    expect(table.binnedByValue(1, binOfValue, 2)).toEqual([{ bucket: 0, valueBin: 1, count: 5 }]);
  });

  test.each([undefined, 0])('gives nothing for no rows or no bucket (limit %s)', (limit) => {
    for (const table of [countByBucketAndValue(rowsOf([]), bucketOfGroup, 2, limit), countByBucketAndValue(rows, Int32Array.from([-1, -1, -1, -1]), 2, limit)]) {
      expect(table.entries()).toEqual([]);
      expect(table.valueTotals()).toEqual([]);
      expect(table.binnedByValue(2, binOfValue, 2)).toEqual([]);
    }
  });
});
