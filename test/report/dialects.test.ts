/**
 * The same data on SQLite and on PostgreSQL give the same snapshot, figure for figure: the
 * aggregation is exact integer arithmetic on both engines and every ordering is made in code.
 */
import { describe, expect, test } from 'vitest';
import type { Snapshot } from '../../src/report/shapes/index.js';
import { TEST_DIALECTS } from '../support/database.js';
import { createTestApp } from '../support/app.js';
import { createReport, generateContacts, generateCustomers, refresh, uploadRows, REPORT_TEST_SETTINGS } from '../support/report-data.js';
import { seededRandom } from '../../seed/generate.js';

const BOTH = TEST_DIALECTS.includes('postgres');

/** The parts of a snapshot that identify it rather than describe the data. */
function comparable(snapshot: Snapshot): unknown {
  const { snapshot_id: _id, report_id: _report, duration_ms: _duration, comparison, ...rest } = snapshot;
  return { ...rest, comparison: { ...comparison, previous_snapshot_id: comparison.previous_snapshot_id === null ? null : 'set' } };
}

async function snapshotsOn(dialect: 'sqlite' | 'postgres'): Promise<Snapshot[]> {
  const context = await createTestApp(dialect, REPORT_TEST_SETTINGS);
  try {
    const customers = generateCustomers(41, 3000, 0.05);
    await uploadRows(context.app, '/v1/customers', customers as unknown as Array<Record<string, unknown>>);
    await uploadRows(context.app, '/v1/campaigns/equal/contacts', generateContacts(customers, { seed: 42, baseRate: 0.09, plantedRegion: 'Lakeshore', plantedRate: 0.14 }) as unknown as Array<Record<string, unknown>>);
    const random = seededRandom(43);
    const sales = customers
      .filter(() => random() < 0.6)
      .map((customer, index) => ({
        sale_id: `q${index}`,
        customer_id: customer.customer_id,
        sold_at: `2026-0${1 + Math.floor(random() * 5)}-${String(1 + Math.floor(random() * 28)).padStart(2, '0')}`,
        amount: (1 + random() * 250).toFixed(2),
      }));
    await uploadRows(context.app, '/v1/sales', sales);
    const campaign = await createReport(context.app, { name: 'Equal campaign', source: { campaign_ids: ['equal'] }, dimensions: ['age_band', 'region', 'channel', 'loyalty_tier'] });
    const byValue = await createReport(context.app, { name: 'Equal value', source: { campaign_ids: ['equal'] }, dimensions: ['region', 'customer_type'], rank_by: 'value', value_basis: 'per_conversion' });
    const salesReport = await createReport(context.app, { name: 'Equal sales', source: { sales_from: '2026-03-01', sales_to: '2026-05-31' }, dimensions: ['age_band', 'region', 'loyalty_tier'] });
    return [await refresh(context.app, campaign.report_id), await refresh(context.app, byValue.report_id), await refresh(context.app, salesReport.report_id), await refresh(context.app, campaign.report_id)];
  } finally {
    await context.close();
  }
}

describe('SQLite and PostgreSQL', () => {
  test.skipIf(!BOTH)('give the same snapshots, figure for figure, for the same data', async () => {
    const onSqlite = await snapshotsOn('sqlite');
    const onPostgres = await snapshotsOn('postgres');
    expect(onSqlite.map((snapshot) => snapshot.fingerprint)).toEqual(onPostgres.map((snapshot) => snapshot.fingerprint));
    expect(onSqlite.map(comparable)).toEqual(onPostgres.map(comparable));
    // The comparison is not empty: many segments, every kind of figure.
    expect(onSqlite[0]?.segments.length).toBeGreaterThan(100);
    expect(onSqlite[2]?.comparison.compared_with).toBe('previous_window');
    expect(onSqlite[3]?.comparison.compared_with).toBe('previous_snapshot');
  }, 120_000);
});
