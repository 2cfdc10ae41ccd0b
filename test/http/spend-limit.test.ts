/**
 * One customer's spend within a sales window is a sales report's unit value, summed as one
 * 64-bit integer: up to 2^63 − 1 cents it refreshes with an exact mean; past it the refresh is
 * refused with 422 spend-too-large naming the window, and nothing is stored.
 */
import { describe, expect, it } from 'vitest';
import type { Snapshot } from '../../src/report/shapes/index.js';
import { TEST_DIALECTS } from '../support/database.js';
import { ARITHMETIC_TEST_SETTINGS, createReport } from '../support/report-data.js';
import { CSV, problemOf, startApp, upload } from '../support/upload-client.js';

/** The largest amount one sale row may carry: 99,999,999,999,999 cents. */
const CAP = '999999999999.99';
/** 92,233 × 99,999,999,999,999 = 9,223,299,999,999,907,767 cents (by hand) ≤ 2^63 − 1 = 9,223,372,036,854,775,807; one sale more is past it. */
const SALES_BELOW_LIMIT = 92_233;

describe.each(TEST_DIALECTS)("one customer's spend at the 64-bit limit on %s", (dialect) => {
  it('refreshes with an exact mean just below 2^63 cents, and refuses one sale more with 422 spend-too-large', { timeout: 120_000 }, async () => {
    const { app } = await startApp(dialect, { ...ARITHMETIC_TEST_SETTINGS, maxUploadBytes: 64 * 1024 * 1024 });
    const customers = 'customer_id,birth_date,region,channel,customer_type\nM0,1980-05-01,Fennwick,web shop,individual\nM1,1981-06-02,Saltmere,web shop,individual\n';
    expect((await upload(app, '/v1/customers', CSV, customers)).statusCode).toBe(201);
    const sales = ['sale_id,customer_id,sold_at,amount'];
    for (let sale = 0; sale < SALES_BELOW_LIMIT; sale++) sales.push(`S${sale},M0,2026-03-0${(sale % 9) + 1},${CAP}`);
    const uploaded = await upload(app, '/v1/sales', CSV, `${sales.join('\n')}\n`);
    expect(uploaded.statusCode, uploaded.body).toBe(201);

    const report = await createReport(app, { name: 'one big buyer', source: { sales_from: '2026-03-01', sales_to: '2026-03-31' }, dimensions: ['region'], rank_by: 'value' });
    const refreshed = await app.inject({ method: 'POST', url: `/v1/reports/${report.report_id}/refresh` });
    expect(refreshed.statusCode, refreshed.body).toBe(201);
    const fennwick = refreshed.json<Snapshot>().segments.find((segment) => segment.segment === 'region=Fennwick');
    // 9,223,299,999,999,907,767 cents; doubles near 9.2e16 are 16 apart, so within 32 of the exact figure.
    expect(Math.abs((fennwick?.value_mean ?? 0) - Number(9_223_299_999_999_907_767n) / 100)).toBeLessThanOrEqual(32);
    expect(fennwick?.rest?.value_mean).toBe(0);

    expect((await upload(app, '/v1/sales', CSV, `sale_id,customer_id,sold_at,amount\nS-last,M0,2026-03-15,${CAP}\n`)).statusCode).toBe(201);
    const refused = await app.inject({ method: 'POST', url: `/v1/reports/${report.report_id}/refresh` });
    const problem = problemOf(refused, 422);
    expect(problem).toMatchObject({ type: '/problems/spend-too-large', sales_from: '2026-03-01', sales_to: '2026-03-31', customers: 1 });
    expect(problem.detail).toContain('9223372036854775807 cents');
    const snapshots = await app.inject({ method: 'GET', url: `/v1/reports/${report.report_id}/snapshots` });
    expect(snapshots.json<{ snapshots: unknown[] }>().snapshots).toHaveLength(1);
  });
});
