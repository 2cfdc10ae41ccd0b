/**
 * Small-cell suppression of snapshots (src/report/snapshot/withholding.ts): the primary rule
 * (fewer units than the threshold, in the segment or its rest), the greedy complementary rule
 * over each margin, histogram bars and grid cells, and withholding stored snapshots on reading.
 * Practice followed: Hundepool et al. (2012), Statistical Disclosure Control, Wiley, ch. 7.
 */
import { describe, expect, test } from 'vitest';
import type { ReportDefinition } from '../../src/report/definition/index.js';
import { isPublished, type Snapshot, type SnapshotSegment } from '../../src/report/shapes/index.js';
import { buildSnapshot, type SnapshotInput } from '../../src/report/snapshot/index.js';
import { segmentsToWithhold, storedTextIsWithheldAt, withholdSnapshot } from '../../src/report/snapshot/withholding.js';
import { ZERO_SHIFTS, block, cellsFromUnits, countsFromUnits, type TestUnit } from './cells.js';

const DEFINITION: ReportDefinition = {
  name: 'Withholding',
  source: { campaign_ids: ['w'] },
  dimensions: ['region', 'channel'],
  crosses: [['region', 'channel']],
  age_bands: [18, 25, 35, 45, 55, 65],
  min_n: 2,
  confidence: 0.95,
  adjustment: 'bh',
  value_basis: 'per_unit',
  rank_by: 'conversion_rate',
  rank_order: 'lower_bound',
  equivalence_margin: 0.02,
  value_equivalence_margin: null,
  refresh: 'manual',
  economics: null,
};

function input(units: TestUnit[], threshold: number, overrides: Partial<SnapshotInput> = {}): SnapshotInput {
  return {
    identity: { snapshotId: 'snap', reportId: 'report', reportName: 'Withholding', sequence: 1, createdAt: '2026-06-15T12:00:00.000Z', trigger: 'manual' },
    definition: DEFINITION,
    shifts: ZERO_SHIFTS,
    arithmetic: 'exact',
    cells: cellsFromUnits(units),
    ...countsFromUnits(units),
    quality: { customersOutsidePopulation: 0, customersWithoutAnySale: 0, rejectedRows: [] },
    previousWindow: null,
    previousSnapshot: null,
    publicationThreshold: threshold,
    ...overrides,
  };
}

// Invented: three regions, one of them (Orrin Coast) with a single customer who bought for 87.30.
const UNITS = [
  ...block(['Brackenmoor', 'web'], 60, 9),
  ...block(['Brackenmoor', 'mail'], 40, 10),
  ...block(['Saltmere', 'web'], 30, 3),
  ...block(['Saltmere', 'mail'], 14, 4),
  ...block(['Orrin Coast', 'web'], 1, 1, 8730, 52),
];

function byName(snapshot: Snapshot, name: string): SnapshotSegment {
  const found = snapshot.segments.find((segment) => segment.segment === name);
  if (!found) throw new Error(`no segment ${name}`);
  return found;
}

describe('withholding segments', () => {
  const published = buildSnapshot(input(UNITS, 1));
  const withheld = buildSnapshot(input(UNITS, 10));

  test('at threshold 1 the segment of one is published, so the data do hold a figure to protect', () => {
    expect(byName(published, 'region=Orrin Coast').n).toBe(1);
    expect(byName(published, 'region=Orrin Coast').value_mean).toBe(87.3);
  });

  test('a segment of one is withheld: no count, rate, value, rest or sufficient statistics, verdict too_small, not ranked', () => {
    const segment = byName(withheld, 'region=Orrin Coast');
    expect(segment.withheld_below).toBe(10);
    expect(segment).toMatchObject({ n: null, share: null, conversions: null, conversion_rate: null, value_mean: null, rest: null, sufficient_statistics: null, rank: null, verdict: 'too_small', tested: false });
    expect(JSON.stringify(segment)).not.toContain('87.3');
    expect(segment.summary).toContain('withheld');
    // The only number the sentence quotes is the threshold.
    expect(segment.summary.match(/\d+/g)).toEqual(['10', '10', '10']);
  });

  test('the next-smallest region is withheld too, so the one cannot be recovered by subtraction from the population', () => {
    // One-way regions: Brackenmoor 100, Saltmere 44, Orrin Coast 1; withheld 1 < 10, so Saltmere (44) goes as well.
    expect(byName(withheld, 'region=Saltmere').withheld_below).toBe(10);
    expect(isPublished(byName(withheld, 'region=Brackenmoor'))).toBe(true);
  });

  test('crosses: within web, the one is withheld with the next-smallest web cross; a margin without small cells is left alone', () => {
    // web crosses: Brackenmoor 60, Saltmere 30, Orrin Coast 1 → Orrin Coast, then Saltmere & web (30).
    expect(byName(withheld, 'region=Orrin Coast & channel=web').withheld_below).toBe(10);
    expect(byName(withheld, 'region=Saltmere & channel=web').withheld_below).toBe(10);
    expect(isPublished(byName(withheld, 'region=Brackenmoor & channel=web'))).toBe(true);
    // Within Saltmere the withheld web cross already holds 30 ≥ 10, and channel=mail has no small
    // cell, so the mail cross (14) stays published: Saltmere & web and Orrin Coast & web are known
    // only as their sum 31, which no margin separates.
    expect(isPublished(byName(withheld, 'region=Saltmere & channel=mail'))).toBe(true);
    expect(isPublished(byName(withheld, 'channel=mail'))).toBe(true);
  });

  test('every margin with a withheld member keeps at least the threshold withheld, or is withheld whole', () => {
    const hidden = segmentsToWithhold(published.segments, published.population.n, 10);
    const groups = new Map<string, SnapshotSegment[]>();
    for (const segment of published.segments) {
      const dims = Object.keys(segment.values);
      const keys = dims.length === 1 ? [`one:${dims[0]}`] : dims.map((dim) => `cross:${dim}=${segment.values[dim]}`);
      for (const key of keys) groups.set(key, [...(groups.get(key) ?? []), segment]);
    }
    for (const members of groups.values()) {
      const hiddenMembers = members.filter((segment) => hidden.has(segment.segment));
      if (hiddenMembers.length === 0 || hiddenMembers.length === members.length) continue;
      expect(hiddenMembers.reduce((sum, segment) => sum + (segment.n as number), 0)).toBeGreaterThanOrEqual(10);
    }
  });

  test('a segment whose rest is below the threshold is withheld: its figures and the population would give the rest', () => {
    const units = [...block(['Brackenmoor', 'web'], 200, 30), ...block(['Saltmere', 'web'], 4, 1)];
    const snapshot = buildSnapshot(input(units, 10, { definition: { ...DEFINITION, crosses: [] } }));
    expect(byName(snapshot, 'channel=web').withheld_below).toBe(10);
    expect(byName(snapshot, 'region=Brackenmoor').withheld_below).toBe(10);
  });

  test('ranks are renumbered 1, 2, … over the published segments, and the counts and summary agree', () => {
    const ranks = withheld.segments.filter((segment) => segment.rank !== null).map((segment) => segment.rank);
    expect(ranks).toEqual(ranks.map((_rank, index) => index + 1));
    expect(withheld.segments.filter((segment) => segment.withheld_below !== null).every((segment) => segment.rank === null)).toBe(true);
    expect(withheld.disclosure?.withheld_segments).toBe(withheld.segments.filter((segment) => segment.withheld_below !== null).length);
    expect(withheld.verdict_counts.too_small).toBe(withheld.segments.filter((segment) => segment.verdict === 'too_small').length);
    expect(withheld.summary).toContain('shown without figures');
  });

  test('dimension profiles leave out withheld values; reversals naming them are dropped', () => {
    const regions = withheld.dimensions.find((profile) => profile.dimension === 'region');
    expect(regions?.values.map((value) => value.value)).toEqual(['Brackenmoor']);
    expect(JSON.stringify(withheld.dimensions)).not.toContain('Orrin Coast');
  });

  test('withholding twice changes nothing, and the stored text says at which threshold it was withheld', () => {
    const again = withholdSnapshot(withheld, 10);
    for (const key of Object.keys(withheld) as Array<keyof Snapshot>) expect(again[key], key).toEqual(withheld[key]);
    const text = JSON.stringify(withheld);
    expect(storedTextIsWithheldAt(text, 10)).toBe(true);
    expect(storedTextIsWithheldAt(text, 11)).toBe(false);
    expect(storedTextIsWithheldAt(JSON.stringify(published), 10)).toBe(false);
  });

  test('a snapshot stored before withholding existed is withheld as it is read, the same as a new one', () => {
    const { disclosure: _none, ...old } = published;
    const read = withholdSnapshot(old as Snapshot, 10);
    expect(read.segments.map((segment) => [segment.segment, segment.n])).toEqual(withheld.segments.map((segment) => [segment.segment, segment.n]));
  });

  test('a change against a previous count below the threshold is dropped', () => {
    // Contacts are only added between the snapshots, so each change compares the new ones with the earlier ones.
    const before = buildSnapshot(input([...block(['Brackenmoor', 'web'], 60, 9), ...block(['Saltmere', 'web'], 25, 3), ...block(['Saltmere', 'mail'], 4, 1)], 1));
    const after = buildSnapshot(input(UNITS, 10, { previousSnapshot: before }));
    // Mail had 4 units before (Saltmere) and has 54 now; Brackenmoor had 60 and has 100.
    expect(byName(after, 'region=Brackenmoor').change?.previous_n).toBe(60);
    const mail = after.segments.find((segment) => segment.segment === 'channel=mail');
    expect(mail?.change).toBeNull();
  });
});

describe('withholding histogram bars and grid cells', () => {
  const base = buildSnapshot(input(UNITS, 1));
  const histogram = (counts: number[]) => ({ rule: 'fixed', bin_width: 10, bins: counts.map((count, index) => ({ low: index * 10, high: index * 10 + 10, count })), note: null });

  test('bars below the threshold lose their count, and the next-smallest goes too when the withheld total is below it', () => {
    const snapshot = withholdSnapshot({ ...base, population: { ...base.population, age_histogram: histogram([0, 3, 50, 20, 12]) }, disclosure: undefined } as unknown as Snapshot, 10);
    expect(snapshot.population.age_histogram?.bins.map((bin) => bin.count)).toEqual([0, null, 50, 20]);
    expect(snapshot.disclosure?.withheld_histogram_bars).toBeGreaterThanOrEqual(2);
  });

  test('bars that together reach the threshold are withheld alone', () => {
    const snapshot = withholdSnapshot({ ...base, population: { ...base.population, age_histogram: histogram([6, 5, 50, 20]) } } as Snapshot, 10);
    expect(snapshot.population.age_histogram?.bins.map((bin) => bin.count)).toEqual([50, 20]);
  });

  test('withheld and empty bars at the ends are left out, so the edges do not give the extremes of a few units', () => {
    const snapshot = withholdSnapshot({ ...base, population: { ...base.population, age_histogram: histogram([40, 0, 30, 0, 0, 1]) } } as Snapshot, 10);
    // The 1 is withheld with the next-smallest bar (30); from the end, every withheld or empty bar goes.
    expect(snapshot.population.age_histogram?.bins.map((bin) => [bin.low, bin.count])).toEqual([[0, 40]]);
    expect(snapshot.disclosure?.withheld_histogram_bars).toBeGreaterThanOrEqual(2);
  });

  test('grid cells below the threshold are left out, with the same complementary rule', () => {
    const cell = (count: number, index: number) => ({ age_low: 20 + index * 10, age_high: 30 + index * 10, value_low: 0, value_high: 50, count });
    const grid = [2, 40, 11, 30].map(cell);
    const snapshot = withholdSnapshot({ ...base, population: { ...base.population, age_value_grid: grid } } as Snapshot, 10);
    expect(snapshot.population.age_value_grid?.map((entry) => entry.count)).toEqual([40, 30]);
    expect(snapshot.disclosure?.withheld_grid_cells).toBe(2);
  });
});
