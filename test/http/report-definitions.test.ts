import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { TEST_DIALECTS } from '../support/database.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { createReport, generateDataset, refresh, uploadDataset, REPORT_TEST_SETTINGS } from '../support/report-data.js';

describe.each(TEST_DIALECTS)('report definitions and snapshots over HTTP (%s)', (dialect) => {
  let context: TestApp;
  beforeAll(async () => {
    context = await createTestApp(dialect, REPORT_TEST_SETTINGS);
    await uploadDataset(context.app, generateDataset({ seed: 21, customers: 400, baseRate: 0.15 }), 'autumn');
  });
  afterAll(async () => {
    await context.close();
  });

  test('a saved definition is answered with 201, its location, its id and every default', async () => {
    const response = await context.app.inject({ method: 'POST', url: '/v1/reports', payload: { name: 'Autumn', source: { campaign_ids: ['autumn'] } } });
    expect(response.statusCode).toBe(201);
    const report = response.json();
    expect(response.headers.location).toBe(`/v1/reports/${report.report_id}`);
    expect(report).toMatchObject({
      name: 'Autumn',
      source: { campaign_ids: ['autumn'] },
      dimensions: ['age_band', 'region', 'channel'],
      min_n: 30,
      confidence: 0.95,
      adjustment: 'bh',
      refresh: 'manual',
      created_at: '2026-06-15T12:00:00.000Z',
      latest_snapshot: null,
    });
    const read = await context.app.inject({ method: 'GET', url: `/v1/reports/${report.report_id}` });
    expect(read.statusCode).toBe(200);
    expect(read.json()).toEqual(report);
  });

  test('an extra customer column can be a dimension', async () => {
    const report = await createReport(context.app, { name: 'By tier', source: { campaign_ids: ['autumn'] }, dimensions: ['loyalty_tier', 'customer_type'] });
    expect(report.dimensions).toEqual(['loyalty_tier', 'customer_type']);
    const snapshot = await refresh(context.app, report.report_id);
    expect(snapshot.segments.filter((segment) => segment.dimensions === 'loyalty_tier').map((segment) => segment.values['loyalty_tier']).sort()).toEqual(['bronze', 'gold', 'silver']);
  });

  test('an invalid definition is refused as problem+json naming each field', async () => {
    const response = await context.app.inject({
      method: 'POST',
      url: '/v1/reports',
      payload: { name: 'Bad', source: { campaign_ids: ['autumn', 'nope'] }, dimensions: ['region', 'shoe_size'], age_bands: [18, 30, 30], confidence: 1, min_n: 1 },
    });
    expect(response.statusCode).toBe(400);
    expect(response.headers['content-type']).toMatch(/^application\/problem\+json/);
    const problem = response.json();
    expect(problem).toMatchObject({ type: '/problems/invalid-request', status: 400, title: 'The request is not valid' });
    expect(problem.errors.map((error: { field: string }) => error.field).sort()).toEqual([
      'body/age_bands/2',
      'body/confidence',
      'body/dimensions/1',
      'body/min_n',
      'body/source/campaign_ids/1',
    ]);
  });

  test('a single problem is stated in the detail itself', async () => {
    const response = await context.app.inject({ method: 'POST', url: '/v1/reports', payload: { name: 'Bad', source: { campaign_ids: ['autumn'] }, min_n: 1 } });
    expect(response.json().detail).toBe('body/min_n: must be a whole number from 2 to 1000000, got 1');
  });

  test('a body that is not JSON is refused with 415', async () => {
    const response = await context.app.inject({ method: 'POST', url: '/v1/reports', headers: { 'content-type': 'text/plain' }, payload: 'name=x' });
    expect(response.statusCode).toBe(415);
    expect(response.headers['content-type']).toMatch(/^application\/problem\+json/);
  });

  test('reports are listed by creation time, then by name', async () => {
    const response = await context.app.inject({ method: 'GET', url: '/v1/reports' });
    expect(response.statusCode).toBe(200);
    // The test clock is fixed, so every report has the same creation time and the names decide.
    const names = response.json().reports.map((report: { name: string }) => report.name);
    expect(names).toEqual(['Autumn', 'By tier']);
  });

  test('an unknown report is 404 for reading, refreshing and its snapshots', async () => {
    for (const [method, url] of [
      ['GET', '/v1/reports/missing'],
      ['POST', '/v1/reports/missing/refresh'],
      ['GET', '/v1/reports/missing/snapshots'],
      ['GET', '/v1/reports/missing/snapshots/latest'],
      ['GET', '/v1/reports/missing/segments'],
    ] as const) {
      const response = await context.app.inject({ method, url });
      expect(response.statusCode, `${method} ${url}`).toBe(404);
      expect(response.json().type).toBe('/problems/not-found');
    }
  });

  test('snapshots are numbered, listed newest first and readable by id or as latest', async () => {
    const report = await createReport(context.app, { name: 'Numbered', source: { campaign_ids: ['autumn'] }, dimensions: ['region'] });
    const none = await context.app.inject({ method: 'GET', url: `/v1/reports/${report.report_id}/snapshots/latest` });
    expect(none.statusCode).toBe(404);
    expect(none.json().detail).toMatch(/has no snapshot yet/);

    const refreshed = await context.app.inject({ method: 'POST', url: `/v1/reports/${report.report_id}/refresh` });
    expect(refreshed.statusCode).toBe(201);
    const first = refreshed.json();
    expect(refreshed.headers.location).toBe(`/v1/reports/${report.report_id}/snapshots/${first.snapshot_id}`);
    const second = await refresh(context.app, report.report_id);
    expect([first.sequence, second.sequence]).toEqual([1, 2]);
    // The data did not change, so neither did the fingerprint.
    expect(second.fingerprint).toBe(first.fingerprint);
    expect(second.fingerprint).toMatch(/^[0-9a-f]{64}$/);

    const list = await context.app.inject({ method: 'GET', url: `/v1/reports/${report.report_id}/snapshots` });
    expect(list.json()).toMatchObject({ report_id: report.report_id, total: 2, limit: 100, offset: 0 });
    expect(list.json().snapshots.map((snapshot: { snapshot_id: string }) => snapshot.snapshot_id)).toEqual([second.snapshot_id, first.snapshot_id]);
    expect(list.json().snapshots[0]).toMatchObject({ sequence: 2, population_rows: 400, segment_count: second.segments.length, trigger: 'manual', fingerprint: second.fingerprint });

    const latest = await context.app.inject({ method: 'GET', url: `/v1/reports/${report.report_id}/snapshots/latest` });
    expect(latest.json().snapshot_id).toBe(second.snapshot_id);
    const byId = await context.app.inject({ method: 'GET', url: `/v1/reports/${report.report_id}/snapshots/${first.snapshot_id}` });
    expect(byId.json()).toEqual(first);

    const read = await context.app.inject({ method: 'GET', url: `/v1/reports/${report.report_id}` });
    expect(read.json().latest_snapshot).toEqual({ snapshot_id: second.snapshot_id, sequence: 2, created_at: second.created_at });
    const missing = await context.app.inject({ method: 'GET', url: `/v1/reports/${report.report_id}/snapshots/not-a-snapshot` });
    expect(missing.statusCode).toBe(404);
  });

  test('a snapshot carries its definition, row counts and timing', async () => {
    const report = await createReport(context.app, { name: 'Counts', source: { campaign_ids: ['autumn'] }, dimensions: ['region', 'channel'], crosses: [] });
    const snapshot = await refresh(context.app, report.report_id);
    expect(snapshot.definition).toMatchObject({ name: 'Counts', dimensions: ['region', 'channel'], crosses: [] });
    expect(snapshot.row_counts.population).toBe(400);
    expect(snapshot.row_counts.segments).toBe(9);
    expect(snapshot.row_counts.cells).toBe(20);
    expect(Number.isInteger(snapshot.duration_ms) && snapshot.duration_ms >= 0).toBe(true);
    expect(snapshot.trigger).toBe('manual');
  });

  test('a whole snapshot answers If-None-Match with 304', async () => {
    const report = await createReport(context.app, { name: 'Tagged', source: { campaign_ids: ['autumn'] }, dimensions: ['region'] });
    const snapshot = await refresh(context.app, report.report_id);
    const url = `/v1/reports/${report.report_id}/snapshots/${snapshot.snapshot_id}`;
    const first = await context.app.inject({ method: 'GET', url });
    const tag = first.headers.etag as string;
    expect(tag).toMatch(/^"[A-Za-z0-9_-]+"$/);
    const again = await context.app.inject({ method: 'GET', url, headers: { 'if-none-match': tag } });
    expect(again.statusCode).toBe(304);
    expect(again.body).toBe('');
  });

  // These three were once accepted, and every refresh of such a report then failed with 500.
  test.each([0.9999999999999999, 1e-300, 5e-324])('a confidence of %j is refused when the report is defined', async (confidence) => {
    const response = await context.app.inject({ method: 'POST', url: '/v1/reports', payload: { name: 'Too sure', source: { campaign_ids: ['autumn'] }, confidence } });
    expect(response.statusCode).toBe(400);
    expect(response.json()).toMatchObject({ type: '/problems/invalid-request', errors: [{ field: 'body/confidence', reason: expect.stringContaining('from 0.5 to 0.9999') }] });
  });

  test.each([0.5, 0.9999])('a report at the confidence edge %j refreshes', async (confidence) => {
    const report = await createReport(context.app, { name: `Edge ${confidence}`, source: { campaign_ids: ['autumn'] }, confidence, min_n: 2 });
    const snapshot = await refresh(context.app, report.report_id);
    expect(snapshot.definition.confidence).toBe(confidence);
    expect(snapshot.segments.length).toBeGreaterThan(0);
    const tested = snapshot.segments.filter((row) => row.tested);
    expect(tested.length).toBeGreaterThan(0);
    for (const segment of tested) {
      expect([segment.rate_diff_ci_low, segment.rate_diff_ci_high].every(Number.isFinite), segment.segment).toBe(true);
    }
  });

  test('a definition with 30,000 bad crosses gets a short answer: the first 100 problems and their count', async () => {
    const crosses = Array.from({ length: 30_000 }, (_, index) => [`no_such_dimension_${index}`]);
    const payload = JSON.stringify({ name: 'Crossed', source: { campaign_ids: ['autumn'] }, crosses });
    expect(payload.length).toBeGreaterThan(800_000);
    const response = await context.app.inject({ method: 'POST', url: '/v1/reports', headers: { 'content-type': 'application/json' }, payload });
    expect(response.statusCode).toBe(400);
    const problem = response.json();
    expect(problem.errors).toHaveLength(100);
    // One problem per malformed pair, and one for the list's length.
    expect(problem.error_count).toBe(30_001);
    expect(problem.detail).toBe('the report definition has 30001 problems; see errors (the first 100)');
    expect(response.body.length).toBeLessThan(20_000);
  });

  test('well-formed pairs past the limit of 15 are one problem', async () => {
    const crosses = Array.from({ length: 30_000 }, () => ['alpha', 'beta']);
    const response = await context.app.inject({ method: 'POST', url: '/v1/reports', payload: { name: 'Crossed', source: { campaign_ids: ['autumn'] }, crosses } });
    expect(response.statusCode).toBe(400);
    expect(response.json()).toMatchObject({ error_count: 1, errors: [{ field: 'body/crosses', reason: 'may list at most 15 pairs (every pair of 6 dimensions)' }] });
  });
});
