import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import type { Snapshot } from '../../src/report/shapes/index.js';
import { createKey } from '../../src/auth/keys.js';
import { planHoldoutCampaign } from '../../src/stats/index.js';
import { TEST_DIALECTS } from '../support/database.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { createReport, generateDataset, refresh, uploadDataset, REPORT_TEST_SETTINGS } from '../support/report-data.js';

describe.each(TEST_DIALECTS)('campaign plans (%s)', (dialect) => {
  let context: TestApp;
  let reportId: string;
  let emptyReportId: string;
  let snapshot: Snapshot;

  beforeAll(async () => {
    context = await createTestApp(dialect, REPORT_TEST_SETTINGS);
    const dataset = generateDataset({ seed: 12, customers: 1500, baseRate: 0.1, plantedRegion: 'Northfield', plantedRate: 0.2 });
    await uploadDataset(context.app, dataset, 'spring');
    reportId = (await createReport(context.app, { name: 'Spring', source: { campaign_ids: ['spring'] }, dimensions: ['region'], confidence: 0.9 })).report_id;
    emptyReportId = (await createReport(context.app, { name: 'Not yet run', source: { campaign_ids: ['spring'] }, dimensions: ['region'] })).report_id;
    snapshot = await refresh(context.app, reportId);
  });
  afterAll(async () => {
    await context.close();
  });

  const postPlan = (payload: unknown) => context.app.inject({ method: 'POST', url: '/v1/plans', payload: payload as object });

  test('POST /v1/plans with equal groups answers R power.prop.test n rounded up', async () => {
    // R 4.2.2: power.prop.test(p1 = 0.10, p2 = 0.15, power = 0.8, tol = 1e-12)$n → 685.596858325361 → 686 per group
    const response = await postPlan({ baseline_rate: 0.1, min_uplift: 0.05, holdout_share: 0.5 });
    expect(response.statusCode).toBe(200);
    expect(response.json()).toEqual({
      baseline_rate: 0.1,
      min_uplift: 0.05,
      holdout_share: 0.5,
      segments: 1,
      confidence: 0.95,
      power: 0.8,
      holdout_per_segment: 686,
      treated_per_segment: 686,
      contacts_per_segment: 1372,
      total_contacts: 1372,
      alpha_per_test: 0.05,
      sentence: expect.stringContaining('686 customers held back and 686 contacted'),
    });
  });

  test('POST /v1/plans splits α over segments, with the defaults for the rest', async () => {
    // python3 + scipy brentq (test/stats/campaign-plan.test.ts): (0.04, 0.05, r = 4, power 0.8, α = 0.05/3) → n1 = 5789.158704427915, n2 = 23156.63481771166
    const body = (await postPlan({ baseline_rate: 0.04, min_uplift: 0.01, segments: 3 })).json();
    expect(body).toMatchObject({ holdout_share: 0.2, power: 0.8, holdout_per_segment: 5790, treated_per_segment: 23157, contacts_per_segment: 28947, total_contacts: 86841 });
    expect(body.alpha_per_test).toBeCloseTo(0.05 / 3, 14);
    expect(body.sentence).toBe(
      'To detect a rise of 1.0 percentage points from 4.0% to 5.0% with 80% power at 95% confidence over 3 segments (two-sided α = 0.01667 per segment), each segment needs 5,790 customers held back and 23,157 contacted (28,947 in all, 20% held back); 86,841 customers over the 3 segments.',
    );
  });

  test('POST /v1/plans refuses bad input as a problem naming the field, and a rise past a rate of 1', async () => {
    const outOfRange = await postPlan({ baseline_rate: 0.1, min_uplift: 0.02, holdout_share: 1 });
    expect(outOfRange.statusCode).toBe(400);
    expect(outOfRange.headers['content-type']).toMatch(/^application\/problem\+json/);
    expect(JSON.stringify(outOfRange.json())).toContain('holdout_share');
    const missing = await postPlan({ baseline_rate: 0.1 });
    expect(missing.statusCode).toBe(400);
    expect(JSON.stringify(missing.json())).toContain('min_uplift');
    const pastOne = await postPlan({ baseline_rate: 0.9, min_uplift: 0.2 });
    expect(pastOne.statusCode).toBe(400);
    expect(pastOne.json().detail).toMatch(/above a rate of 1/);
    const unknown = await postPlan({ baseline_rate: 0.1, min_uplift: 0.02, budget: 10 });
    expect(unknown.statusCode).toBe(400);
    const text = await context.app.inject({ method: 'POST', url: '/v1/plans', payload: 'baseline_rate=0.1', headers: { 'content-type': 'text/plain' } });
    expect(text.statusCode).toBe(415);
  });

  test('GET /v1/reports/{id}/plan plans every segment from the rest’s rate at the report’s confidence', async () => {
    const response = await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/plan?min_uplift=0.03` });
    expect(response.statusCode).toBe(200);
    const body = response.json();
    const compared = snapshot.segments.filter((segment) => segment.mirror_of === null).length;
    expect(body).toMatchObject({ report_id: reportId, snapshot_id: snapshot.snapshot_id, min_uplift: 0.03, holdout_share: 0.2, confidence: 0.9, power: 0.8, segments_compared: compared });
    expect(body.segments).toHaveLength(snapshot.segments.length);
    let total = 0;
    for (const planned of body.segments) {
      const segment = snapshot.segments.find((candidate) => candidate.segment === planned.segment)!;
      if (segment.rest === null || segment.rest.conversion_rate === null || segment.n === null) {
        expect(planned.contacts_per_segment).toBeNull();
        expect(planned.note).not.toBeNull();
        continue;
      }
      expect(planned.baseline_source).toBe('rest');
      expect(planned.baseline_rate).toBe(segment.rest.conversion_rate);
      const expected = planHoldoutCampaign({ baselineRate: segment.rest.conversion_rate, minUplift: 0.03, segments: compared, confidence: 0.9 });
      if (!expected.ok) throw new Error(expected.reason);
      expect(planned).toMatchObject({
        holdout_per_segment: expected.value.holdoutPerSegment,
        treated_per_segment: expected.value.treatedPerSegment,
        contacts_per_segment: expected.value.contactsPerSegment,
        last_treated: segment.n,
        last_holdout: null,
        last_had_enough: segment.n >= expected.value.contactsPerSegment,
      });
      total += expected.value.contactsPerSegment;
    }
    expect(body.total_contacts).toBe(total);
  });

  test('GET /v1/reports/{id}/plan says whether the last campaign had enough: a large uplift needs few customers', async () => {
    const body = (await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/plan?min_uplift=0.5&segments=1` })).json();
    const planned = body.segments.filter((segment: { contacts_per_segment: number | null }) => segment.contacts_per_segment !== null);
    expect(planned.length).toBeGreaterThan(0);
    for (const segment of planned) expect(segment.last_had_enough).toBe(segment.last_treated >= segment.contacts_per_segment);
    expect(planned.some((segment: { last_had_enough: boolean }) => segment.last_had_enough)).toBe(true);
    const tiny = (await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/plan?min_uplift=0.001` })).json();
    expect(tiny.segments.every((segment: { last_had_enough: boolean | null }) => segment.last_had_enough !== true)).toBe(true);
  });

  test('GET /v1/reports/{id}/plan needs min_uplift, a known report and a snapshot', async () => {
    expect((await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/plan` })).statusCode).toBe(400);
    expect((await context.app.inject({ method: 'GET', url: '/v1/reports/no-such-report/plan?min_uplift=0.01' })).statusCode).toBe(404);
    expect((await context.app.inject({ method: 'GET', url: `/v1/reports/${emptyReportId}/plan?min_uplift=0.01` })).statusCode).toBe(404);
  });
});

describe.each(TEST_DIALECTS)('who may plan (%s)', (dialect) => {
  let context: TestApp;
  beforeAll(async () => {
    context = await createTestApp(dialect, { authMode: 'keys' });
  });
  afterAll(async () => {
    await context.close();
  });

  test('a read key may ask for a plan; an ingest key and no key may not', async () => {
    const ask = (authorization?: string) =>
      context.app.inject({
        method: 'POST',
        url: '/v1/plans',
        payload: { baseline_rate: 0.1, min_uplift: 0.05 },
        headers: authorization === undefined ? {} : { authorization },
      });
    const reader = await createKey(context.database.handle.db, 'read', 'planner');
    const ingest = await createKey(context.database.handle.db, 'ingest', 'uploads');
    expect((await ask(`Bearer ${reader.key}`)).statusCode).toBe(200);
    expect((await ask(`Bearer ${ingest.key}`)).statusCode).toBe(403);
    expect((await ask()).statusCode).toBe(401);
  });
});
