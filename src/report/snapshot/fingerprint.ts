/** The fingerprint of a snapshot's inputs, to tell whether two snapshots were computed from the same data. */
import { createHash, type Hash } from 'node:crypto';
import { compareLabelLists } from '../../segments/index.js';
import type { SnapshotInput } from './input.js';

/**
 * The rows in label-list order (`compareLabelLists`), then by `tail`. The distinct label lists
 * are ordered once and the rows by their rank, which is the same order: rows are many (a cell
 * per age or value), distinct lists few (the cells).
 */
function sortedCounts<T extends { labels: string[] }>(rows: readonly T[], tail: (row: T) => number | null): T[] {
  // Rows often share their cell's label list: its text is then made once.
  const keys = new Map<readonly string[], string>();
  const keyOf = (labels: readonly string[]) => {
    let key = keys.get(labels);
    if (key === undefined) keys.set(labels, (key = JSON.stringify(labels)));
    return key;
  };
  const distinct = new Map<string, readonly string[]>();
  for (const row of rows) {
    const key = keyOf(row.labels);
    if (!distinct.has(key)) distinct.set(key, row.labels);
  }
  const ordered = [...distinct].sort((left, right) => compareLabelLists(left[1], right[1]));
  const rankOf = new Map<string, number>();
  let rank = 0;
  ordered.forEach(([key, labels], index) => {
    // lists the comparison calls equal share a rank, as they would tie in a direct sort
    if (index > 0 && compareLabelLists((ordered[index - 1] as [string, readonly string[]])[1], labels) !== 0) rank += 1;
    rankOf.set(key, rank);
  });
  const keyed = rows.map((row) => ({ row, rank: rankOf.get(keyOf(row.labels)) as number, tail: tail(row) ?? -1 }));
  keyed.sort((left, right) => left.rank - right.rank || left.tail - right.tail);
  return keyed.map((entry) => entry.row);
}

/**
 * Feeds texts to a hash in batches: hashing the concatenation gives the digest of hashing them
 * one by one, with a fraction of the calls.
 */
class BatchedHash {
  private pending: string[] = [];
  private length = 0;
  constructor(private readonly hash: Hash) {}
  update(text: string): void {
    this.pending.push(text);
    this.length += text.length;
    if (this.length >= 1 << 16) this.flush();
  }
  digest(): string {
    this.flush();
    return this.hash.digest('hex');
  }
  private flush(): void {
    if (this.pending.length === 0) return;
    this.hash.update(this.pending.join(''));
    this.pending = [];
    this.length = 0;
  }
}

/** JSON text of a cell, its exact money sums (BigInt) written as decimal digits. */
function cellText(cell: unknown): string {
  return JSON.stringify(cell, (_key, value: unknown) => (typeof value === 'bigint' ? value.toString() : value));
}

/**
 * A SHA-256 over everything the snapshot was computed from: the definition, the shifts and
 * every cell aggregate and grouped count (sorted), the previous window's cells (and this
 * window's over the customers known at its start), and the campaign strata. Equal data
 * give an equal fingerprint on either database engine.
 */
export function fingerprintOf(input: SnapshotInput): string {
  const hash = new BatchedHash(createHash('sha256'));
  hash.update(JSON.stringify({ definition: input.definition, shifts: input.shifts, arithmetic: input.arithmetic }));
  for (const cell of input.cells) hash.update(cellText(cell));
  for (const entry of sortedCounts(input.ageCounts, (row) => row.age)) hash.update(JSON.stringify(entry));
  for (const entry of sortedCounts(input.valueCounts, (row) => row.valueCents)) hash.update(JSON.stringify(entry));
  if (input.populationValueCounts) {
    for (const entry of [...input.populationValueCounts].sort((left, right) => left.valueCents - right.valueCents)) hash.update(JSON.stringify(entry));
  }
  if (input.ageValueGrid) {
    hash.update(JSON.stringify(input.ageValueGrid.axes));
    for (const entry of [...input.ageValueGrid.counts].sort((left, right) => left.ageBin - right.ageBin || left.valueBin - right.valueBin)) hash.update(JSON.stringify(entry));
  }
  if (input.previousWindow) {
    hash.update(JSON.stringify({ from: input.previousWindow.from, to: input.previousWindow.to, shifts: input.previousWindow.shifts }));
    for (const cell of input.previousWindow.cells) hash.update(cellText(cell));
    if (input.previousWindow.current) {
      hash.update(JSON.stringify({ currentShifts: input.previousWindow.current.shifts }));
      for (const cell of input.previousWindow.current.cells) hash.update(cellText(cell));
    }
  }
  for (const stratum of input.strata ?? []) hash.update(JSON.stringify(stratum));
  return hash.digest();
}
