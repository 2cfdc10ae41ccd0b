/**
 * Money at the per-row cap, many times over: the sums pass 2^63 cents, and the report must
 * still refresh, with exact means (all-zero segments exactly 0).
 */
import { describe, expect, it } from 'vitest';
import type { Snapshot } from '../../src/report/shapes/index.js';
import { TEST_DIALECTS } from '../support/database.js';
import { createReport, REPORT_TEST_SETTINGS } from '../support/report-data.js';
import { CSV, startApp, upload } from '../support/upload-client.js';

/** The largest amount one sale row may carry. */
const CAP = '999999999999.99';
const CUSTOMERS = 1000;
/** 93,000 sales in all: 93,000 × 99,999,999,999,999 cents ≈ 9.3e18 > 2^63 − 1 ≈ 9.22e18. */
const SALES_PER_BUYER = 186;

describe.each(TEST_DIALECTS)('money at the per-row cap on %s', (dialect) => {
  it('refreshes a sales report over 93,000 sales at the cap with exact means', { timeout: 120_000 }, async () => {
    const { app } = await startApp(dialect, { ...REPORT_TEST_SETTINGS, maxUploadBytes: 64 * 1024 * 1024 });
    const customers = ['customer_id,birth_date,region,channel,customer_type'];
    for (let index = 0; index < CUSTOMERS; index++) customers.push(`M${index},1980-05-0${(index % 9) + 1},${index % 2 === 0 ? 'Fennwick' : 'Saltmere'},web shop,individual`);
    expect((await upload(app, '/v1/customers', CSV, `${customers.join('\n')}\n`)).statusCode).toBe(201);
    // Every Fennwick customer buys at the cap; nobody in Saltmere buys anything.
    const sales = ['sale_id,customer_id,sold_at,amount'];
    for (let index = 0; index < CUSTOMERS; index += 2) {
      for (let sale = 0; sale < SALES_PER_BUYER; sale++) sales.push(`S${index}-${sale},M${index},2026-03-0${(sale % 9) + 1},${CAP}`);
    }
    expect(sales.length - 1).toBe(93_000);
    const uploaded = await upload(app, '/v1/sales', CSV, `${sales.join('\n')}\n`);
    expect(uploaded.statusCode, uploaded.body).toBe(201);

    const report = await createReport(app, { name: 'at the cap', source: { sales_from: '2026-03-01', sales_to: '2026-03-31' }, dimensions: ['region'], rank_by: 'value' });
    const refreshed = await app.inject({ method: 'POST', url: `/v1/reports/${report.report_id}/refresh` });
    expect(refreshed.statusCode, refreshed.body).toBe(201);
    const snapshot = refreshed.json<Snapshot>();
    expect(snapshot.data_quality.arithmetic).toBe('exact');

    const segment = (name: string) => snapshot.segments.find((candidate) => candidate.segment === name);
    const saltmere = segment('region=Saltmere');
    const fennwick = segment('region=Fennwick');
    // Nobody in Saltmere bought: its mean is exactly 0, as is the rest's of Fennwick.
    expect(saltmere?.value_mean).toBe(0);
    expect(fennwick?.rest?.value_mean).toBe(0);
    // Each Fennwick customer spent 186 × 999,999,999,999.99 = 185,999,999,999,998.14 exactly (by
    // hand); a double holds that to within one unit in the last place (0.03).
    const exactSpend = Number(18_599_999_999_999_814n) / 100;
    expect(Math.abs((fennwick?.value_mean ?? 0) - exactSpend)).toBeLessThanOrEqual(0.04);
    expect(Math.abs((saltmere?.rest?.value_mean ?? 0) - exactSpend)).toBeLessThanOrEqual(0.04);
    expect(fennwick?.n).toBe(500);
    expect(saltmere?.n).toBe(500);
  });
});
