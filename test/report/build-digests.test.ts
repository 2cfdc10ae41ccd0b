/**
 * The snapshot build gives the same snapshot, to the last digit, as the code the digests were
 * taken with: the benchmark's report and a wide report (two dimensions of 20 labels, crossed),
 * each built once and again against the first as its previous snapshot. A digest per top-level
 * field of the snapshot says which part changed. The digests in
 * test/fixtures/snapshot-build-digests.json were written by building these same inputs (made
 * in code by bench/build-input.ts) before the build was made faster; a change that is meant to
 * change figures must write them again and say why.
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import { describe, expect, it } from 'vitest';
import { buildSnapshot, type SnapshotInput } from '../../src/report/snapshot/index.js';
import { ageGridAxis } from '../../src/report/snapshot/profiles.js';
import { benchReportInput, wideReportInput } from '../../bench/build-input.js';

const digests = JSON.parse(fs.readFileSync(new URL('../fixtures/snapshot-build-digests.json', import.meta.url), 'utf8')) as Record<string, Record<string, string>>;
const digest = (value: unknown) => createHash('sha256').update(JSON.stringify(value)).digest('hex');

function digestsOf(snapshot: object): Record<string, string> {
  const parts: Record<string, string> = { whole: digest(snapshot) };
  for (const [key, value] of Object.entries(snapshot)) parts[key] = digest(value);
  return parts;
}

const CASES: Array<[string, () => SnapshotInput]> = [
  ['bench-20000', () => benchReportInput(20000)],
  ['wide-20000-20', () => wideReportInput(20000, 20)],
];

describe('snapshot build against stored digests', () => {
  for (const [name, make] of CASES) {
    it(`${name}: first snapshot and the next one compared with it`, () => {
      const input = make();
      const first = buildSnapshot(input);
      expect(digestsOf(first)).toEqual(digests[`${name}/first`]);
      const second = buildSnapshot({ ...input, identity: { ...input.identity, sequence: 2 }, previousSnapshot: JSON.parse(JSON.stringify(first)) });
      expect(second.segments.some((segment) => segment.previous_rank !== null)).toBe(true);
      expect(digestsOf(second)).toEqual(digests[`${name}/second`]);
    }, 60_000);
  }
});

describe('inputs with a count per cell and age for ten thousand cells', () => {
  it('the age axis of the age × value grid spans the ages without spreading them into one call', () => {
    // 10,000 cells × 60 ages, as two crossed 100-label dimensions give; ages 20…79, one cell also at 18 and 95.
    const ageCounts = Array.from({ length: 600_000 }, (_unused, index) => ({ labels: [`c${index % 10_000}`], age: 20 + Math.floor(index / 10_000), count: 1 }));
    ageCounts.push({ labels: ['c0'], age: 18, count: 2 }, { labels: ['c1'], age: 95, count: 1 }, { labels: ['c2'], age: 99, count: 0 });
    const axis = ageGridAxis(ageCounts);
    expect(axis?.low).toBe(18);
    expect(axis?.high).toBe(95);
  });
});
