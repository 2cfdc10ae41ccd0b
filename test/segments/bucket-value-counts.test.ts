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

  test('sums the units of each (bucket, value), bucket by bucket, values ascending, leaving out the groups without a bucket', () => {
    expect(countByBucketAndValue(rows, bucketOfGroup, 2)).toEqual(expected);
  });

  test('gives the same counts past the limit of the flat array, through maps', () => {
    expect(countByBucketAndValue(rows, bucketOfGroup, 2, 3)).toEqual(expected);
  });

  test('gives nothing for no rows or no bucket', () => {
    expect(countByBucketAndValue(rowsOf([]), bucketOfGroup, 2)).toEqual([]);
    expect(countByBucketAndValue(rows, Int32Array.from([-1, -1, -1, -1]), 2)).toEqual([]);
  });
});
