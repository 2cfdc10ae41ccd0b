/** The fingerprint of a snapshot's inputs, to tell whether two snapshots were computed from the same data. */
import { createHash } from 'node:crypto';
import { compareLabelLists } from '../../segments/index.js';
import type { SnapshotInput } from './input.js';

function sortedCounts<T extends { labels: string[] }>(rows: readonly T[], tail: (row: T) => number | null): T[] {
  return [...rows].sort((left, right) => compareLabelLists(left.labels, right.labels) || (tail(left) ?? -1) - (tail(right) ?? -1));
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
  const hash = createHash('sha256');
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
  return hash.digest('hex');
}
