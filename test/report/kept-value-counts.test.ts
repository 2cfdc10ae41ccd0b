/**
 * A campaign report on built-in dimensions reads its population from contact_value_counts (the
 * contacts kept as counts), an attribute report from the contacts themselves
 * (`campaignPopulationTable`); both sources give the same snapshot, figure for figure, on SQLite
 * and on PostgreSQL.
 */
import { sql } from 'kysely';
import { afterAll, beforeAll, describe, expect, test, vi } from 'vitest';
import type { Snapshot } from '../../src/report/shapes/index.js';
import type { Dialect } from '../../src/db/connect.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { recomputeContactValueCounts } from '../support/contact-value-counts.js';
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

/** Two campaigns, one with a holdout, customers partly without birth date, with an extra attribute (loyalty_tier). */
async function uploadCampaigns(context: TestApp): Promise<void> {
  const customers = generateCustomers(71, 2400, 0.08);
  await uploadRows(context.app, '/v1/customers', customers);
  const spring = generateContacts(customers, { seed: 72, baseRate: 0.1, plantedRegion: 'Eastvale', plantedRate: 0.16 }).map((contact, index) => ({ ...contact, holdout: index % 6 === 0 ? 1 : 0 }));
  await uploadRows(context.app, '/v1/campaigns/spring/contacts', spring);
  await uploadRows(context.app, '/v1/campaigns/autumn/contacts', generateContacts(customers.slice(0, 1500), { seed: 73, baseRate: 0.07, contactedAt: '2026-05-10' }));
  await recomputeContactValueCounts(context.database.handle.db);
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
      await recomputeContactValueCounts(db);
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
    ];
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
    const [both, springValue] = byDialect[0] as Snapshot[];
    // Not an empty comparison: many segments, holdout figures, ages unknown, values per conversion.
    expect(both?.segments.length).toBeGreaterThan(100);
    expect(both?.segments.some((segment) => (segment.holdout_n ?? 0) > 0)).toBe(true);
    expect(both?.data_quality.unknown_age).toBeGreaterThan(0);
    expect(springValue?.population.value_n).toBeGreaterThan(0);
  }, 240_000);
});
