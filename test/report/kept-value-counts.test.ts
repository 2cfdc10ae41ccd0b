/**
 * A campaign report on built-in dimensions reads its population from contact_value_counts (the
 * contacts kept as counts), an attribute report from the contacts themselves
 * (`campaignPopulationTable`); both sources give the same snapshot, figure for figure, on SQLite
 * and on PostgreSQL. A report on the kept counts reads its campaigns' rows once and folds them
 * in code (`keptCountAggregates`): its aggregates are those the GROUP BY queries give over the
 * same rows, arm by arm, for every value basis, scope and age axis.
 */
import { sql } from 'kysely';
import { afterAll, beforeAll, describe, expect, test, vi } from 'vitest';
import { checkCells, rebuildCells } from '../../src/aggregates/check.js';
import type { Snapshot } from '../../src/report/shapes/index.js';
import type { Dialect } from '../../src/db/connect.js';
import { sqliteConnectionOf } from '../../src/db/connect.js';
import { ageGridAxis } from '../../src/report/snapshot/profiles.js';
import {
  holdoutContacts,
  keptCountAggregates,
  shiftsAndCellAggregates,
  valueCountsByAgeBin,
  valuesByAgeOf,
  valueDistribution,
  type AggregationRequest,
  type GridAxis,
  type ValueDistributionScope,
} from '../../src/segments/index.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { TEST_DIALECTS } from '../support/database.js';
import { ARITHMETIC_TEST_SETTINGS, createReport, generateContacts, generateCustomers, refresh, uploadRows } from '../support/report-data.js';

/** Lets a refresh be made to read the contacts whatever its dimensions, to compare both sources. */
const choice = vi.hoisted(() => ({ readContacts: false }));
vi.mock('../../src/segments/population.js', async (importOriginal) => {
  const actual = await importOriginal<typeof import('../../src/segments/population.js')>();
  return {
    ...actual,
    campaignPopulationTable: (dimensions: readonly string[]) => (choice.readContacts ? 'campaign_contacts' : actual.campaignPopulationTable(dimensions)),
  };
});

/** The largest amount one row may carry. */
const MONEY_CAP = '999999999999.99';

/** Three campaigns, one with a holdout, one with revenues at the cap, customers partly without birth date, with an extra attribute (loyalty_tier). */
async function uploadCampaigns(context: TestApp): Promise<void> {
  const customers = generateCustomers(71, 2400, 0.08);
  await uploadRows(context.app, '/v1/customers', customers);
  const spring = generateContacts(customers, { seed: 72, baseRate: 0.1, plantedRegion: 'Eastvale', plantedRate: 0.16 }).map((contact, index) => ({ ...contact, holdout: index % 6 === 0 ? 1 : 0 }));
  await uploadRows(context.app, '/v1/campaigns/spring/contacts', spring);
  await uploadRows(context.app, '/v1/campaigns/autumn/contacts', generateContacts(customers.slice(0, 1500), { seed: 73, baseRate: 0.07, contactedAt: '2026-05-10' }));
  // 40 alike customers who all bought at the per-row cap: one kept count of 40 whose Σv² passes 2^63 by far.
  const alike = Array.from({ length: 40 }, (_unused, index) => ({ customer_id: `g${index}`, birth_date: '1970-04-04', region: 'Westbrook', channel: 'web', customer_type: 'company', loyalty_tier: 'gold' }));
  await uploadRows(context.app, '/v1/customers', alike);
  const grand = [...alike, ...customers.slice(0, 200)].map((customer, index) => ({
    customer_id: customer.customer_id,
    contacted_at: '2026-04-01',
    converted: index < 40 || index % 5 === 0 ? 1 : 0,
    revenue: index < 40 ? MONEY_CAP : index % 5 === 0 ? '12.50' : '0',
  }));
  await uploadRows(context.app, '/v1/campaigns/grand/contacts', grand);
  // The uploads kept the counts: the reports below read what the contacts hold.
  expect((await checkCells(context.database.handle.db)).differenceCount).toBe(0);
}

/** The parts of a snapshot that describe the data, not which report or run it is. */
function figures(snapshot: Snapshot): unknown {
  const { snapshot_id: _id, report_id: _report, duration_ms: _duration, ...rest } = snapshot;
  return rest;
}

describe.each(TEST_DIALECTS)('the population of a campaign report on %s', (dialect) => {
  let context: TestApp;
  beforeAll(async () => {
    context = await createTestApp(dialect, ARITHMETIC_TEST_SETTINGS);
    await uploadCampaigns(context);
  }, 120_000);
  afterAll(async () => {
    await context.close();
  });

  test('is read from contact_value_counts for built-in dimensions, and from the contacts for an extra attribute', async () => {
    const builtIn = await createReport(context.app, { name: 'Spring', source: { campaign_ids: ['spring'] }, dimensions: ['age_band', 'region', 'channel', 'customer_type'] });
    const byTier = await createReport(context.app, { name: 'Spring by tier', source: { campaign_ids: ['spring'] }, dimensions: ['region', 'loyalty_tier'] });
    const builtInBefore = await refresh(context.app, builtIn.report_id);
    const byTierBefore = await refresh(context.app, byTier.report_id);
    const db = context.database.handle.db;
    const { rows } = await sql<{ channel: string; customer_type: string; age: number; revenue_cents: number }>`
      select channel, customer_type, age, revenue_cents from contact_value_counts
      where campaign_id = 'spring' and region = 'Northfield' and holdout = 0 and converted = 0`.execute(db);
    const row = rows[0];
    if (row === undefined) throw new Error('no kept count to change');
    try {
      // 40 contacts that no contact row holds: only a report reading the kept counts sees them.
      await sql`update contact_value_counts set units = units + 40
        where campaign_id = 'spring' and region = 'Northfield' and channel = ${row.channel} and customer_type = ${row.customer_type}
          and age = ${row.age} and holdout = 0 and converted = 0 and revenue_cents = ${row.revenue_cents}`.execute(db);
      const builtInAfter = await refresh(context.app, builtIn.report_id);
      const byTierAfter = await refresh(context.app, byTier.report_id);
      expect(builtInAfter.population.n).toBe(builtInBefore.population.n + 40);
      const northfield = (snapshot: Snapshot) => snapshot.segments.find((segment) => segment.segment === 'region=Northfield')?.n;
      expect(northfield(builtInAfter)).toBe((northfield(builtInBefore) as number) + 40);
      expect(byTierAfter.population.n).toBe(byTierBefore.population.n);
      expect(byTierAfter.fingerprint).toBe(byTierBefore.fingerprint);
    } finally {
      await rebuildCells(db);
    }
  });
});

async function snapshotsFromBothSources(dialect: Dialect): Promise<{ fromContacts: Snapshot[]; fromCounts: Snapshot[] }> {
  const context = await createTestApp(dialect, ARITHMETIC_TEST_SETTINGS);
  try {
    await uploadCampaigns(context);
    const definitions = [
      { name: 'Both campaigns', source: { campaign_ids: ['spring', 'autumn'] }, dimensions: ['age_band', 'region', 'channel', 'customer_type'] },
      { name: 'Spring value', source: { campaign_ids: ['spring'] }, dimensions: ['region', 'customer_type'], rank_by: 'value', value_basis: 'per_conversion' },
      { name: 'Autumn value', source: { campaign_ids: ['autumn'] }, dimensions: ['age_band', 'channel'], rank_by: 'value', value_basis: 'per_unit' },
      { name: 'Grand value', source: { campaign_ids: ['grand'] }, dimensions: ['region', 'channel'], rank_by: 'value', value_basis: 'per_conversion' },
      // Several campaigns, one with a holdout, money at the cap, unknown ages, value per unit.
      { name: 'All three by unit', source: { campaign_ids: ['spring', 'autumn', 'grand'] }, dimensions: ['age_band', 'region', 'customer_type'], rank_by: 'value', value_basis: 'per_unit' },
      { name: 'Spring and grand by conversion', source: { campaign_ids: ['grand', 'spring'] }, dimensions: ['channel', 'age_band'], rank_by: 'value', value_basis: 'per_conversion' },
    ];
    const { rows } = await sql<{ units: unknown }>`select max(units) as units from contact_value_counts where campaign_id = 'grand' and converted = 1`.execute(context.database.handle.db);
    // The split sums are weighted by a count of 40 units, not only by single contacts.
    expect(Number(rows[0]?.units)).toBe(40);
    const fromContacts: Snapshot[] = [];
    const fromCounts: Snapshot[] = [];
    for (const definition of definitions) {
      const read = await createReport(context.app, definition);
      const kept = await createReport(context.app, definition);
      choice.readContacts = true;
      try {
        fromContacts.push(await refresh(context.app, read.report_id));
      } finally {
        choice.readContacts = false;
      }
      fromCounts.push(await refresh(context.app, kept.report_id));
    }
    return { fromContacts, fromCounts };
  } finally {
    await context.close();
  }
}

describe('the kept counts and the contacts', () => {
  test('give the same snapshots, figure for figure, on every engine tested', async () => {
    const byDialect: Snapshot[][] = [];
    for (const dialect of TEST_DIALECTS) {
      const { fromContacts, fromCounts } = await snapshotsFromBothSources(dialect);
      expect(fromCounts.map(figures)).toEqual(fromContacts.map(figures));
      byDialect.push(fromCounts);
    }
    for (const snapshots of byDialect.slice(1)) expect(snapshots.map(figures)).toEqual((byDialect[0] as Snapshot[]).map(figures));
    const [both, springValue, , grandValue, allThree, springAndGrand] = byDialect[0] as Snapshot[];
    for (const snapshot of [allThree, springAndGrand]) {
      // Holdout figures from the holdout arm, several campaigns compared within campaign, the cap's conversions included.
      expect(snapshot?.segments.some((segment) => (segment.holdout_n ?? 0) > 0)).toBe(true);
      expect(snapshot?.segments.some((segment) => segment.strata !== null)).toBe(true);
      expect(snapshot?.segments.find((segment) => segment.segment === 'region=Westbrook' || segment.segment === 'channel=web')?.conversions).toBeGreaterThanOrEqual(40);
    }
    const westbrook = grandValue?.segments.find((segment) => segment.segment === 'region=Westbrook');
    expect(grandValue?.data_quality.arithmetic).toBe('exact');
    // The 40 conversions at the cap are in the compared figures: their Σv² needs the split sums.
    expect(westbrook?.conversions).toBeGreaterThanOrEqual(40);
    // Not an empty comparison: many segments, holdout figures, ages unknown, values per conversion.
    expect(both?.segments.length).toBeGreaterThan(100);
    expect(both?.segments.some((segment) => (segment.holdout_n ?? 0) > 0)).toBe(true);
    expect(both?.data_quality.unknown_age).toBeGreaterThan(0);
    expect(springValue?.population.value_n).toBeGreaterThan(0);
  }, 240_000);
});

/** Value counts merged per key and sorted, so two lists in different orders (or split differently) compare as counts. */
function mergedCounts<T extends { count: number }>(entries: readonly T[], keyOf: (entry: T) => string): Array<[string, number]> {
  const merged = new Map<string, number>();
  for (const entry of entries) merged.set(keyOf(entry), (merged.get(keyOf(entry)) ?? 0) + entry.count);
  return [...merged].sort(([left], [right]) => (left < right ? -1 : left > right ? 1 : 0));
}

describe.each(TEST_DIALECTS)('the kept rows folded in code on %s', (dialect) => {
  let context: TestApp;
  beforeAll(async () => {
    context = await createTestApp(dialect, ARITHMETIC_TEST_SETTINGS);
    await uploadCampaigns(context);
  }, 120_000);
  afterAll(async () => {
    await context.close();
  });

  const requests: Array<{ campaigns: string[]; dimensions: string[]; valueBasis: AggregationRequest['valueBasis']; split: boolean }> = [
    { campaigns: ['spring', 'autumn', 'grand'], dimensions: ['age_band', 'region', 'channel', 'customer_type'], valueBasis: 'per_unit', split: true },
    { campaigns: ['spring', 'autumn', 'grand'], dimensions: ['region', 'age_band'], valueBasis: 'per_conversion', split: true },
    { campaigns: ['spring'], dimensions: ['channel', 'age_band'], valueBasis: 'per_unit', split: false },
    { campaigns: ['grand'], dimensions: ['region', 'channel'], valueBasis: 'per_conversion', split: false },
    { campaigns: ['autumn', 'grand'], dimensions: ['customer_type'], valueBasis: 'per_unit', split: false },
  ];

  test.each(requests)('gives what the queries give over the same rows: $campaigns by $dimensions, $valueBasis, arms split: $split', async ({ campaigns, dimensions, valueBasis, split }) => {
    const handle = context.database.handle;
    const request: AggregationRequest = {
      source: { kind: 'campaigns', campaignIds: campaigns, table: 'contact_value_counts', ...(split ? { arm: 'contacted' as const } : {}) },
      dimensions,
      ageEdges: [25, 35, 45, 55, 65],
      valueBasis,
    };
    await handle.readDb.transaction().execute(async (trx) => {
      const kept = await keptCountAggregates(trx, sqliteConnectionOf(handle.readDb), request, split);
      const queried = await shiftsAndCellAggregates(trx, request);
      // Cells (exact money, age sums, age–value co-moments), shifts, strata, age counts and unconverted units per age.
      expect(kept.population.cells).toEqual(queried.cells);
      expect(kept.population.shifts).toEqual(queried.shifts);
      expect(kept.population.strata).toEqual(queried.strata);
      expect(kept.population.arithmetic).toBe('exact');
      expect(mergedCounts(kept.population.ageCounts, (entry) => JSON.stringify([entry.labels, entry.age]))).toEqual(mergedCounts(queried.ageCounts, (entry) => JSON.stringify([entry.labels, entry.age])));
      expect([...kept.population.unconvertedByAge].sort()).toEqual([...queried.unconvertedByAge].sort());
      if (campaigns.length > 1) expect(kept.population.strata.length).toBeGreaterThan(0);
      if (split) {
        const holdout = await shiftsAndCellAggregates(trx, { ...request, source: { ...request.source, arm: 'holdout' } as AggregationRequest['source'] });
        expect(holdout.cells.length).toBeGreaterThan(0);
        expect(kept.holdout?.cells).toEqual(holdout.cells);
        expect(kept.holdout?.shifts).toEqual(holdout.shifts);
      } else expect(kept.holdout).toBeNull();
      // The refresh splits the arms as it reads and learns from that read whether there is a holdout at all.
      expect(kept.holdoutUnits).toBe(await holdoutContacts(trx, request.source as Parameters<typeof holdoutContacts>[1]));
      if (kept.holdoutUnits === 0 && !split) {
        const splitWithoutHoldout = await keptCountAggregates(trx, sqliteConnectionOf(handle.readDb), request, true);
        expect(splitWithoutHoldout.population).toEqual(kept.population);
        expect(splitWithoutHoldout.holdoutUnits).toBe(0);
      }
      // Every scope the refresh may ask for: all cells, some labels of one or two dimensions (an age band among them), none.
      const firstLabels = [...new Set(queried.cells.map((cell) => cell.labels[0] as string))];
      const bandIndex = dimensions.indexOf('age_band');
      const scopes: ValueDistributionScope[] = [
        'all',
        [{ dimensionIndex: 0, labels: firstLabels.slice(0, 1) }],
        ...(bandIndex >= 0 ? [[{ dimensionIndex: bandIndex, labels: ['unknown', '35-44'] }, { dimensionIndex: 0, labels: firstLabels.slice(-1) }]] : []),
        [],
      ];
      for (const scope of scopes) {
        const expected = await valueDistribution(trx, request, scope, queried.cells);
        const folded = kept.valueCounts(scope);
        expect(mergedCounts(folded, (entry) => JSON.stringify([entry.labels, entry.valueCents]))).toEqual(mergedCounts(expected, (entry) => JSON.stringify([entry.labels, entry.valueCents])));
        if (scope !== 'all' && scope.length === 0) expect(folded).toEqual([]);
        else expect(folded.length).toBeGreaterThan(0);
      }
      const axes: Array<GridAxis | null> = [ageGridAxis(queried.ageCounts), { low: 20, high: 80, bins: 7 }, null];
      expect(axes[0]).not.toBeNull();
      for (const axis of axes) {
        const expected = await valueCountsByAgeBin(trx, request, axis, queried.unconvertedByAge);
        expect(mergedCounts(kept.valueCountsByAgeBin(axis), (entry) => JSON.stringify([entry.ageBin, entry.valueCents]))).toEqual(
          mergedCounts(expected, (entry) => JSON.stringify([entry.ageBin, entry.valueCents])),
        );
        // The counts per value and the grid's cells, as the refresh takes them, without the entries above.
        const folded = kept.valuesByAge(axis);
        const queriedValues = valuesByAgeOf(expected);
        expect(folded.wholeValueCounts).toEqual(queriedValues.wholeValueCounts);
        expect(folded.wholeValueCounts.length).toBeGreaterThan(0);
        for (const gridAxes of [{ age: axis ?? { low: 0, high: 1, bins: 1 }, valueCents: { low: 0, high: 100_000, bins: 9 } }, { age: axis ?? { low: 0, high: 1, bins: 1 }, valueCents: { low: 0, high: 0, bins: 1 } }]) {
          expect(folded.gridCounts(gridAxes)).toEqual(queriedValues.gridCounts(gridAxes));
          if (axis !== null) expect(folded.gridCounts(gridAxes).length).toBeGreaterThan(0);
        }
        expect(() => folded.gridCounts({ age: { low: 0, high: 1, bins: 1 }, valueCents: { low: 0.5, high: 10, bins: 2 } })).toThrow(/value axis/);
      }
    });
  });

  test('reads rows of money at the cap, unknown ages and both arms (the data the comparisons above rest on)', async () => {
    const { rows } = await sql<{ capped: unknown; unknown_age: unknown; holdout: unknown }>`
      select sum(case when revenue_cents = 99999999999999 then units else 0 end) as capped,
        sum(case when age = -1 then units else 0 end) as unknown_age,
        sum(case when holdout = 1 then units else 0 end) as holdout
      from contact_value_counts`.execute(context.database.handle.db);
    expect(Number(rows[0]?.capped)).toBe(40);
    expect(Number(rows[0]?.unknown_age)).toBeGreaterThan(0);
    expect(Number(rows[0]?.holdout)).toBeGreaterThan(0);
  });
});
