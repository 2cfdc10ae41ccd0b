/**
 * Units counted per (bucket, value) over rows kept column by column (kept-fold.ts), e.g. per
 * age bin and value. The distinct values are indexed once and the counts kept in one flat typed
 * array of buckets × distinct values, so a million contacts' rows make no map entries and no
 * garbage besides the two arrays; past `denseLimit` entries (many buckets and many values) the
 * counts go to one map per bucket instead. Units are whole numbers, so either way gives the same
 * sums; the entries come bucket by bucket, values ascending within a bucket.
 */

/** The rows to count: row r is in group `groups[r]`, worth `values[r]` cents, `units[r]` units. */
export interface RowColumnsView {
  length: number;
  groups: Int32Array;
  values: Float64Array;
  units: Float64Array;
}

/** One counted (bucket, value): its units. */
export interface BucketValueCount {
  bucket: number;
  valueCents: number;
  count: number;
}

/** Most entries of the flat array (8 bytes each, and 1 byte to mark it used) before maps are used. */
const DENSE_COUNTS_LIMIT = 1 << 21;

/** The distinct values of the rows, ascending, and for each row the index of its value among them. */
function indexValues(rows: RowColumnsView): { distinct: Float64Array; indexOfRow: Int32Array } {
  const indexOfValue = new Map<number, number>();
  const indexOfRow = new Int32Array(rows.length);
  for (let row = 0; row < rows.length; row++) {
    const value = rows.values[row] as number;
    let index = indexOfValue.get(value);
    if (index === undefined) indexOfValue.set(value, (index = indexOfValue.size));
    indexOfRow[row] = index;
  }
  const distinct = new Float64Array(indexOfValue.size);
  for (const [value, index] of indexOfValue) distinct[index] = value;
  // Renumbered in ascending order of value.
  const order = new Int32Array(distinct.length).map((_, index) => index).sort((left, right) => (distinct[left] as number) - (distinct[right] as number));
  const rank = new Int32Array(distinct.length);
  const sorted = new Float64Array(distinct.length);
  order.forEach((index, position) => {
    rank[index] = position;
    sorted[position] = distinct[index] as number;
  });
  for (let row = 0; row < rows.length; row++) indexOfRow[row] = rank[indexOfRow[row] as number] as number;
  return { distinct: sorted, indexOfRow };
}

/** The units of each bucket, summed per bin of the value (`binOfValue`, 0 … valueBins − 1), for the buckets before `firstSkipped`. */
export interface BucketBinCount {
  bucket: number;
  valueBin: number;
  count: number;
}

/** A (bucket, value) table's figures: every entry, the totals per value, or the entries binned by value. */
export interface BucketValueTable {
  /** Each (bucket, value) with a row once, bucket by bucket, values ascending. */
  entries(): BucketValueCount[];
  /** The units of each value over every bucket, values ascending (as summing `entries()` per value). */
  valueTotals(): Array<{ valueCents: number; count: number }>;
  /** The units of buckets 0 … `bucketsKept` − 1 per bucket and value bin, by bucket then bin (as summing `entries()` so). */
  binnedByValue(bucketsKept: number, binOfValue: (valueCents: number) => number, valueBins: number): BucketBinCount[];
}

/** Sums per (bucket, value) from entries, for the tables kept in maps. */
function tableOfEntries(entries: BucketValueCount[]): BucketValueTable {
  return {
    entries: () => entries,
    valueTotals() {
      const totals = new Map<number, number>();
      for (const { valueCents, count } of entries) totals.set(valueCents, (totals.get(valueCents) ?? 0) + count);
      return [...totals].map(([valueCents, count]) => ({ valueCents, count })).sort((left, right) => left.valueCents - right.valueCents);
    },
    binnedByValue(bucketsKept, binOfValue) {
      const cells = new Map<string, BucketBinCount>();
      for (const { bucket, valueCents, count } of entries) {
        if (bucket >= bucketsKept) continue;
        const valueBin = binOfValue(valueCents);
        const key = `${bucket}|${valueBin}`;
        const cell = cells.get(key);
        if (cell) cell.count += count;
        else cells.set(key, { bucket, valueBin, count });
      }
      return [...cells.values()].sort((left, right) => left.bucket - right.bucket || left.valueBin - right.valueBin);
    },
  };
}

/**
 * The units of the rows per bucket and value.
 * `bucketOfGroup[g]`: the bucket (0 … bucketCount − 1) of group g's rows, or −1 to leave them out.
 */
export function countByBucketAndValue(rows: RowColumnsView, bucketOfGroup: Int32Array, bucketCount: number, denseLimit = DENSE_COUNTS_LIMIT): BucketValueTable {
  const { distinct, indexOfRow } = indexValues(rows);
  const width = distinct.length;
  if (bucketCount * width > denseLimit) {
    const perBucket = Array.from({ length: bucketCount }, () => new Map<number, number>());
    for (let row = 0; row < rows.length; row++) {
      const bucket = bucketOfGroup[rows.groups[row] as number] as number;
      if (bucket < 0) continue;
      const values = perBucket[bucket] as Map<number, number>;
      const index = indexOfRow[row] as number;
      values.set(index, (values.get(index) ?? 0) + (rows.units[row] as number));
    }
    const entries: BucketValueCount[] = [];
    perBucket.forEach((values, bucket) => {
      for (const index of [...values.keys()].sort((left, right) => left - right)) entries.push({ bucket, valueCents: distinct[index] as number, count: values.get(index) as number });
    });
    return tableOfEntries(entries);
  }
  const sums = new Float64Array(bucketCount * width);
  const used = new Uint8Array(bucketCount * width);
  for (let row = 0; row < rows.length; row++) {
    const bucket = bucketOfGroup[rows.groups[row] as number] as number;
    if (bucket < 0) continue;
    const slot = bucket * width + (indexOfRow[row] as number);
    sums[slot] = (sums[slot] as number) + (rows.units[row] as number);
    used[slot] = 1;
  }
  return {
    entries() {
      const entries: BucketValueCount[] = [];
      for (let bucket = 0; bucket < bucketCount; bucket++) {
        for (let index = 0; index < width; index++) {
          const slot = bucket * width + index;
          if (used[slot] === 1) entries.push({ bucket, valueCents: distinct[index] as number, count: sums[slot] as number });
        }
      }
      return entries;
    },
    valueTotals() {
      const totals: Array<{ valueCents: number; count: number }> = [];
      for (let index = 0; index < width; index++) {
        let count = 0;
        let seen = false;
        for (let bucket = 0; bucket < bucketCount; bucket++) {
          const slot = bucket * width + index;
          if (used[slot] === 1) {
            seen = true;
            count += sums[slot] as number;
          }
        }
        if (seen) totals.push({ valueCents: distinct[index] as number, count });
      }
      return totals;
    },
    binnedByValue(bucketsKept, binOfValue, valueBins) {
      const binOfIndex = Int32Array.from(distinct, (valueCents) => binOfValue(valueCents));
      const binned: BucketBinCount[] = [];
      const binSums = new Float64Array(valueBins);
      const binUsed = new Uint8Array(valueBins);
      for (let bucket = 0; bucket < Math.min(bucketsKept, bucketCount); bucket++) {
        binSums.fill(0);
        binUsed.fill(0);
        for (let index = 0; index < width; index++) {
          const slot = bucket * width + index;
          if (used[slot] !== 1) continue;
          const bin = binOfIndex[index] as number;
          binSums[bin] = (binSums[bin] as number) + (sums[slot] as number);
          binUsed[bin] = 1;
        }
        for (let bin = 0; bin < valueBins; bin++) if (binUsed[bin] === 1) binned.push({ bucket, valueBin: bin, count: binSums[bin] as number });
      }
      return binned;
    },
  };
}
