/**
 * A campaign uploaded with a holdout column, end to end: the report's n, conversions and rates
 * describe the contacted customers, and each segment carries its holdout figures, equal to an
 * independent computation (`python3 test/stats/reference/uplift-reference.py`, statsmodels
 * 0.15.0 and scipy 1.17.1: confint_proportions_2indep(method='newcomb'), proportions_ztest,
 * the Altman & Bland (2003) difference of two estimates, ttest_ind(equal_var=False)).
 */
import { afterEach, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '../support/app.js';
import { TEST_DIALECTS } from '../support/database.js';
import { createReport, refresh } from '../support/report-data.js';
import { CSV, upload } from '../support/upload-client.js';

/** Per region: contacted conversions of 150, holdout conversions of 50; every conversion brought 20.00. */
const ARMS = { Saltmere: { contacted: 45, holdout: 5 }, Fennwick: { contacted: 30, holdout: 10 } } as const;

describe.each(TEST_DIALECTS)('a campaign report with holdout customers on %s', (dialect) => {
  let testApp: TestApp | undefined;
  afterEach(async () => {
    await testApp?.close();
    testApp = undefined;
  });

  async function setUp(): Promise<TestApp> {
    testApp = await createTestApp(dialect, { maxEventLoopDelayMs: 0 });
    const customers = ['customer_id,birth_date,region,channel,customer_type'];
    const contacts = ['customer_id,contacted_at,converted,revenue,holdout'];
    for (const [region, arms] of Object.entries(ARMS)) {
      for (let index = 0; index < 200; index++) {
        const id = `${region.slice(0, 1)}${index}`;
        customers.push(`${id},1980-05-0${(index % 9) + 1},${region},web shop,individual`);
        const held = index < 50;
        const converted = held ? index < arms.holdout : index - 50 < arms.contacted;
        contacts.push(`${id},2026-03-02,${converted ? 1 : 0},${converted ? '20.00' : ''},${held ? 'yes' : ''}`);
      }
    }
    expect((await upload(testApp.app, '/v1/customers', CSV, customers.join('\n') + '\n')).statusCode).toBe(201);
    const receipt = await upload(testApp.app, '/v1/campaigns/harbour-mailer/contacts', CSV, contacts.join('\n') + '\n');
    expect(receipt.json()).toMatchObject({ rows: 400, holdout_rows: 100 });
    return testApp;
  }

  it('describes the contacted customers and gives every holdout figure of a segment', async () => {
    const { app } = await setUp();
    const report = await createReport(app, {
      name: 'Harbour mailer uplift',
      source: { campaign_ids: ['harbour-mailer'] },
      dimensions: ['region'],
      min_n: 20,
      economics: { margin: 0.5, cost_per_contact: 1 },
    });
    const snapshot = await refresh(app, report.report_id);
    expect(snapshot.row_counts.population).toBe(300);
    const saltmere = snapshot.segments.find((segment) => segment.segment === 'region=Saltmere');
    expect(saltmere).toMatchObject({ n: 150, conversions: 45, holdout_n: 50, holdout_conversions: 5 });
    expect(saltmere?.conversion_rate).toBeCloseTo(0.3, 12);
    expect(saltmere?.holdout_rate).toBeCloseTo(0.1, 12);
    expect(saltmere?.uplift).toBeCloseTo(0.2, 12);
    expect(saltmere?.uplift_ci_low).toBeCloseTo(0.06781027051978727, 8);
    expect(saltmere?.uplift_ci_high).toBeCloseTo(0.29598757801139486, 8);
    expect(Math.abs((saltmere?.uplift_p_value ?? Number.NaN) - 0.004677734981047266)).toBeLessThan(1e-10);
    expect(saltmere?.uplift_vs_rest).toBeCloseTo(0.2, 12);
    expect(saltmere?.uplift_vs_rest_ci_low).toBeCloseTo(0.030639755173035133, 8);
    expect(saltmere?.uplift_vs_rest_ci_high).toBeCloseTo(0.36936024482696483, 8);
    expect(Math.abs((saltmere?.uplift_vs_rest_p_value ?? Number.NaN) - 0.0206375582439722)).toBeLessThan(1e-10);
    expect(saltmere?.incremental_value_per_contact).toBeCloseTo(4, 9);
    expect(saltmere?.incremental_value_ci_low).toBeCloseTo(1.7453488110083266, 7);
    expect(saltmere?.incremental_value_ci_high).toBeCloseTo(6.254651188991673, 7);
    expect(saltmere?.incremental_profit_per_contact).toBeCloseTo(1, 9);
    expect(saltmere?.incremental_profit_ci_low).toBeCloseTo(-0.1273255944958367, 7);
    expect(saltmere?.incremental_profit_ci_high).toBeCloseTo(2.1273255944958365, 7);
    // Two uplift tests (bh): the larger p-value stays, the smaller doubles unless the larger is smaller.
    expect(saltmere?.uplift_p_adjusted).toBeGreaterThanOrEqual(saltmere?.uplift_p_value ?? 1);
    // The profit interval already reaches below zero at 95 %, so also at the family's 97.5 %.
    expect(saltmere?.advice).toBe('undecided');
    expect(saltmere?.summary).toContain(
      'Against 50 held-out customers (10.0% converted), contacting changed the conversion rate by +20.0 points (95% CI +6.8 to +29.6). Advice on incremental profit per contact +1.00 (95% CI -0.13 to +2.13), its interval widened for the number of uplift tests: undecided: the interval reaches both sides of zero.',
    );
  });

  it('advises on the uplift without economics, and leaves the profit null', async () => {
    const { app } = await setUp();
    const report = await createReport(app, { name: 'Harbour mailer uplift', source: { campaign_ids: ['harbour-mailer'] }, dimensions: ['region'], min_n: 20 });
    const snapshot = await refresh(app, report.report_id);
    const saltmere = snapshot.segments.find((segment) => segment.segment === 'region=Saltmere');
    const fennwick = snapshot.segments.find((segment) => segment.segment === 'region=Fennwick');
    expect(saltmere?.incremental_profit_per_contact).toBeNull();
    expect(saltmere?.advice).toBe('contact');
    expect(fennwick?.uplift).toBeCloseTo(0, 12);
    expect(fennwick?.advice).toBe('undecided');
  });

  it('ranks by uplift: advice to contact first, then by the lower bound of the uplift', async () => {
    const { app } = await setUp();
    const report = await createReport(app, { name: 'Harbour mailer by uplift', source: { campaign_ids: ['harbour-mailer'] }, dimensions: ['region'], min_n: 20, rank_by: 'uplift' });
    const snapshot = await refresh(app, report.report_id);
    expect(snapshot.segments.map((segment) => [segment.segment, segment.rank, segment.advice])).toEqual([
      ['region=Saltmere', 1, 'contact'],
      ['region=Fennwick', 2, 'undecided'],
    ]);
  });

  it('refuses a ranking by incremental profit without economics, naming the field', async () => {
    const { app } = await setUp();
    const response = await app.inject({
      method: 'POST',
      url: '/v1/reports',
      payload: { name: 'No economics', source: { campaign_ids: ['harbour-mailer'] }, dimensions: ['region'], rank_by: 'incremental_profit' },
    });
    expect(response.statusCode).toBe(400);
    expect(response.json()).toMatchObject({ errors: [{ field: 'body/rank_by', reason: expect.stringContaining('incremental_profit needs economics') }] });
  });
});
