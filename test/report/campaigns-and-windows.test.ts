/**
 * Through the service and the database: a report over several campaigns compares each
 * segment within campaign (the Cochran–Mantel–Haenszel test on the stored counts), and a sales
 * report's change compares two windows, each over the customers known at its start.
 */
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import type { Snapshot, SnapshotSegment } from '../../src/report/shapes/index.js';
import { cochranMantelHaenszelTest, mantelHaenszelRiskDifference } from '../../src/stats/index.js';
import { TEST_DIALECTS } from '../support/database.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { createReport, refresh, uploadRows, REPORT_TEST_SETTINGS } from '../support/report-data.js';

const REGIONS = ['Ashgrove', 'Brindle'];
// Invented counts per campaign and region: contacted, converted. Ashgrove sits mostly in the
// autumn campaign, which converts more; within each campaign the two regions are close.
const PLAN = {
  spring: { Ashgrove: [40, 2], Brindle: [160, 9] },
  autumn: { Ashgrove: [160, 30], Brindle: [40, 7] },
} as const;

describe.each(TEST_DIALECTS)('campaign strata and sales windows (%s)', (dialect) => {
  let context: TestApp;
  let campaigns: Snapshot;
  let sales: Snapshot;

  beforeAll(async () => {
    // Customers are stored on 2026-06-15; the clock then moves on so the summer's sales are in the past.
    let clock = new Date('2026-06-15T12:00:00Z');
    context = await createTestApp(dialect, REPORT_TEST_SETTINGS, () => clock);
    const customers = REGIONS.flatMap((region) =>
      Array.from({ length: 200 }, (_unused, index) => ({ customer_id: `${region}-${index}`, birth_date: '1980-05-05', region, channel: 'web', customer_type: 'individual' })),
    );
    await uploadRows(context.app, '/v1/customers', customers);
    for (const [campaign, regions] of Object.entries(PLAN)) {
      const offset = campaign === 'spring' ? 0 : 40;
      const rows = Object.entries(regions).flatMap(([region, [n, converted]]) =>
        Array.from({ length: n }, (_unused, index) => ({
          customer_id: `${region}-${(index + (region === 'Ashgrove' ? offset : 160 - offset)) % 200}`,
          contacted_at: '2026-03-01',
          converted: index < converted ? 1 : 0,
          revenue: index < converted ? '25.00' : '0',
        })),
      );
      await uploadRows(context.app, `/v1/campaigns/${campaign}/contacts`, rows);
    }
    const both = await createReport(context.app, { name: 'Both campaigns', source: { campaign_ids: ['spring', 'autumn'] }, dimensions: ['region'] });
    campaigns = await refresh(context.app, both.report_id);

    // Sales: every customer was stored on 2026-06-15. The report's window is
    // July; the window before it starts on 2026-05-31, when only customers with an earlier sale were known.
    clock = new Date('2026-08-15T12:00:00Z');
    const earlyBuyers = customers.filter((_customer, index) => index % 4 === 0);
    await uploadRows(context.app, '/v1/sales', [
      ...earlyBuyers.map((customer, index) => ({ sale_id: `may-${index}`, customer_id: customer.customer_id, sold_at: '2026-05-02', amount: '12.00' })),
      ...customers.filter((_customer, index) => index % 3 === 0).map((customer, index) => ({ sale_id: `jun-${index}`, customer_id: customer.customer_id, sold_at: '2026-06-20', amount: '15.00' })),
      ...customers.filter((_customer, index) => index % 5 === 0).map((customer, index) => ({ sale_id: `jul-${index}`, customer_id: customer.customer_id, sold_at: '2026-07-10', amount: '18.00' })),
    ]);
    const july = await createReport(context.app, { name: 'July', source: { sales_from: '2026-07-01', sales_to: '2026-07-31' }, dimensions: ['region'] });
    sales = await refresh(context.app, july.report_id);
  }, 60_000);
  afterAll(async () => {
    await context.close();
  });

  test('two campaigns: the rate comparison is the CMH test and the Mantel–Haenszel difference on the counts per campaign', () => {
    const ashgrove = campaigns.segments.find((segment) => segment.segment === 'region=Ashgrove') as SnapshotSegment;
    const strata = (['spring', 'autumn'] as const).map((campaign) => {
      const [n1, x1] = PLAN[campaign].Ashgrove;
      const [n2, x2] = PLAN[campaign].Brindle;
      return { x1, n1, x2, n2 };
    });
    const cmh = cochranMantelHaenszelTest(strata);
    const difference = mantelHaenszelRiskDifference(strata, 0.95);
    if (!cmh.ok || !difference.ok) throw new Error('the core could not compute the stratified figures');
    expect(ashgrove).toMatchObject({ rate_test: 'cmh', strata: 2, lift: null });
    expect(ashgrove.rate_p_value).toBeCloseTo(cmh.value.pValue, 12);
    expect(ashgrove.rate_diff).toBeCloseTo(difference.value.estimate, 12);
    expect(ashgrove.rate_diff_ci_low).toBeCloseTo(difference.value.interval.low, 12);
    // Pooled, Ashgrove converts at 32/200 = 16 % against 16/200 = 8 %; within campaign the difference is small and not significant.
    expect(ashgrove.conversion_rate).toBeCloseTo(0.16, 12);
    expect(ashgrove.verdict).not.toBe('better');
    // A yes/no dimension: Brindle mirrors Ashgrove and is not a second test.
    expect(campaigns.row_counts.rate_tests).toBe(1);
    expect(campaigns.segments.find((segment) => segment.segment === 'region=Brindle')?.mirror_of).toBe('region=Ashgrove');
  });

  test('sales: each window is judged over the customers known at its start', () => {
    expect(sales.comparison.previous_window?.from).toBe('2026-05-31');
    const ashgrove = sales.segments.find((segment) => segment.segment === 'region=Ashgrove') as SnapshotSegment;
    // Known on 2026-07-01: all 200 (stored 2026-06-15). Known on 2026-05-31: only the 50 with a sale on 2026-05-02.
    expect(ashgrove.change).toMatchObject({ compared_with: 'previous_window', new_n: 200, previous_n: 50 });
    // Of those 50 (index multiple of 4), the ones with a June sale (index multiple of 3) bought in the previous window: multiples of 12 below 200.
    expect(ashgrove.change?.previous_conversions).toBe(17);
    expect(ashgrove.change?.new_conversions).toBe(40);
    // The report itself keeps its population: every stored customer.
    expect(ashgrove.n).toBe(200);
  });
});
