import { gunzipSync } from 'node:zlib';
import { parse } from 'csv-parse/sync';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { segmentTableColumns, tableCsv } from '../../src/present/index.js';
import { withoutHoldout } from '../../src/report/analysis/index.js';
import { SEGMENT_ROW_FIELDS, type SegmentRow, type Snapshot } from '../../src/report/shapes/index.js';
import { TEST_DIALECTS } from '../support/database.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { createReport, generateDataset, refresh, uploadRows, uploadDataset, REPORT_TEST_SETTINGS } from '../support/report-data.js';

// Region names a spreadsheet would run as formulas if a cell started with them.
const HOSTILE_REGIONS = ['=HYPERLINK("http://example.invalid")', '+1+1', '-2+3', '@SUM(A1)'];

describe.each(TEST_DIALECTS)('the ranked segment table for BI tools (%s)', (dialect) => {
  let context: TestApp;
  let reportId: string;
  let first: Snapshot;
  let second: Snapshot;
  // The report is over region and channel: those two columns sit between rank and segment.
  // A report without holdout customers keeps the columns it had before holdouts existed.
  const HOLDOUT_FIELDS: readonly string[] = Object.keys(withoutHoldout());
  const COLUMNS = ['snapshot_id', 'as_of', 'rank', 'region', 'channel', ...SEGMENT_ROW_FIELDS.filter((field) => field !== 'rank' && !HOLDOUT_FIELDS.includes(field))];

  beforeAll(async () => {
    context = await createTestApp(dialect, REPORT_TEST_SETTINGS);
    const dataset = generateDataset({ seed: 31, customers: 1200, baseRate: 0.12, plantedRegion: 'Northfield', plantedRate: 0.25 });
    await uploadDataset(context.app, dataset, 'winter');
    await uploadRows(
      context.app,
      '/v1/customers',
      HOSTILE_REGIONS.map((region, index) => ({ customer_id: `h${index}`, birth_date: '1980-05-05', region, channel: 'web', customer_type: 'individual', loyalty_tier: 'gold' })),
    );
    await uploadRows(
      context.app,
      '/v1/campaigns/winter/contacts',
      HOSTILE_REGIONS.map((_region, index) => ({ customer_id: `h${index}`, contacted_at: '2026-03-01', converted: 0, revenue: '0' })),
    );
    const report = await createReport(context.app, { name: 'Winter', source: { campaign_ids: ['winter'] }, dimensions: ['region', 'channel'] });
    reportId = report.report_id;
    first = await refresh(context.app, reportId);
    second = await refresh(context.app, reportId);
  });
  afterAll(async () => {
    await context.close();
  });

  test('JSON rows have exactly the documented fields, in the documented order', async () => {
    const response = await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments` });
    expect(response.statusCode).toBe(200);
    expect(response.headers['content-type']).toBe('application/json; charset=utf-8');
    const body = response.json();
    expect(body).toMatchObject({ report_id: reportId, snapshot_id: second.snapshot_id, snapshot_created_at: second.created_at });
    expect(body.columns).toEqual(COLUMNS);
    expect(segmentTableColumns(second.definition.dimensions)).toEqual(COLUMNS);
    expect(body.segments).toHaveLength(second.segments.length);
    for (const row of body.segments) expect(Object.keys(row)).toEqual(COLUMNS);
    expect(body.segments.map((row: SegmentRow) => row.rank).slice(0, 3)).toEqual([1, 2, 3]);
  });

  test('every row names its snapshot and as-of time, and each dimension column holds the label the segment fixes there', async () => {
    const body = (await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments?snapshot=${first.snapshot_id}` })).json();
    const rows = body.segments as Array<Record<string, unknown>>;
    for (const row of rows) expect(row).toMatchObject({ snapshot_id: first.snapshot_id, as_of: first.created_at });
    const northfield = rows.find((row) => row['segment'] === 'region=Northfield');
    expect(northfield).toMatchObject({ region: 'Northfield', channel: null, dimensions: 'region' });
    const crossed = rows.find((row) => row['dimensions'] === 'region & channel') as Record<string, unknown>;
    expect(crossed['segment']).toBe(`region=${String(crossed['region'])} & channel=${String(crossed['channel'])}`);
    const csv = (await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments?format=csv&snapshot=${first.snapshot_id}` })).body;
    const record = (parse(csv, { columns: true }) as Array<Record<string, string>>).find((entry) => entry['segment'] === 'region=Northfield');
    expect(record).toMatchObject({ snapshot_id: first.snapshot_id, as_of: first.created_at, region: 'Northfield', channel: '' });
  });

  test('?bom=1 starts the CSV with a UTF-8 byte order mark under its own entity tag, and is refused for JSON', async () => {
    const plain = await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments?format=csv` });
    const marked = await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments?format=csv&bom=1` });
    expect(marked.statusCode).toBe(200);
    expect([...marked.rawPayload.subarray(0, 3)]).toEqual([0xef, 0xbb, 0xbf]);
    expect(plain.rawPayload[0]).not.toBe(0xef);
    expect(marked.rawPayload.subarray(3).equals(plain.rawPayload)).toBe(true);
    expect(marked.headers.etag).not.toBe(plain.headers.etag);
    const json = await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments?bom=1` });
    expect(json.statusCode).toBe(400);
    expect(json.json().detail).toMatch(/CSV only/);
  });

  test('a missing figure is null in JSON, never 0 or NaN', async () => {
    const body = (await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments` })).json();
    const small = body.segments.find((row: SegmentRow) => row.verdict === 'too_small');
    expect(small).toBeDefined();
    expect(small.rank).toBeNull();
    expect(small.rate_diff).toBeNull();
    expect(small.rate_p_value).toBeNull();
    expect(small.value_diff).toBeNull();
    expect(JSON.stringify(body)).not.toMatch(/NaN|Infinity/);
  });

  test('CSV is chosen by the Accept header or by ?format=csv, with the same columns in the same order', async () => {
    const byAccept = await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments`, headers: { accept: 'text/csv' } });
    const byQuery = await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments?format=csv` });
    expect(byAccept.statusCode).toBe(200);
    expect(byAccept.headers['content-type']).toBe('text/csv; charset=utf-8; header=present');
    expect(byQuery.body).toBe(byAccept.body);
    expect(byAccept.body.split('\r\n')[0]).toBe(COLUMNS.join(','));
    expect(byAccept.body.endsWith('\r\n')).toBe(true);
  });

  test('a report without holdout customers leaves out the holdout columns unless ?holdout_columns=1 asks for them (empty)', async () => {
    const plain = (await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments?format=csv` })).body;
    expect(plain.split('\r\n')[0]).not.toContain('holdout_n');
    const asked = await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments?format=csv&holdout_columns=1` });
    expect(asked.statusCode).toBe(200);
    const records = parse(asked.body, { columns: true, skip_empty_lines: true }) as Array<Record<string, string>>;
    expect(Object.keys(records[0] ?? {})).toEqual([...COLUMNS, 'holdout_n', 'holdout_conversions', 'holdout_rate', 'uplift', 'uplift_ci_low', 'uplift_ci_high', 'uplift_p_value', 'uplift_p_adjusted', 'uplift_vs_rest', 'uplift_vs_rest_ci_low', 'uplift_vs_rest_ci_high', 'uplift_vs_rest_p_value', 'incremental_value_per_contact', 'incremental_value_ci_low', 'incremental_value_ci_high', 'incremental_profit_per_contact', 'incremental_profit_ci_low', 'incremental_profit_ci_high', 'advice']);
    for (const record of records) expect(record['holdout_n']).toBe('');
    expect(asked.headers.etag).not.toBe((await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments?format=csv` })).headers.etag);
  });

  test('the CSV parses back to the JSON rows: numbers equal, null as an empty cell', async () => {
    const json = (await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments` })).json().segments as Array<Record<string, unknown>>;
    const csv = (await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments?format=csv` })).body;
    const records = parse(csv, { columns: true, skip_empty_lines: true }) as Array<Record<string, string>>;
    expect(records).toHaveLength(json.length);
    records.forEach((record, index) => {
      const row = json[index] as Record<string, unknown>;
      expect(Object.keys(record)).toEqual(COLUMNS);
      for (const field of COLUMNS) {
        const value = row[field];
        const cell = record[field] as string;
        if (value === null) expect(cell, field).toBe('');
        else if (typeof value === 'number') {
          expect(cell, field).not.toMatch(/[eE,]/);
          expect(Number(cell), field).toBe(value);
        } else {
          // a label that would start a formula (the hostile regions) is written with a leading quote
          const text = String(value);
          expect(cell, field).toBe(/^[=+\-@\t\r]/.test(text) ? `'${text}` : text);
        }
      }
    });
  });

  test('negative numbers stay numbers and no text cell can start a formula', async () => {
    const csv = (await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments?format=csv` })).body;
    const records = parse(csv, { skip_empty_lines: true }) as string[][];
    const cells = records.slice(1).flat();
    expect(cells.some((cell) => /^-\d/.test(cell))).toBe(true);
    for (const cell of cells) {
      if (/^-?\d+(\.\d+)?$/.test(cell)) continue;
      expect(cell, cell).not.toMatch(/^[=+\-@\t\r]/);
    }
    expect(cells.some((cell) => cell.includes('=HYPERLINK('))).toBe(true);
  });

  test('text that would start a formula is written with a leading quote', () => {
    const row = { ...(first.segments[0] as SegmentRow), segment: '=1+2', dimensions: '@x', summary: '-5 is not a number here' };
    const records = parse(tableCsv(SEGMENT_ROW_FIELDS, [row]), { columns: true }) as Array<Record<string, string>>;
    expect(records[0]).toMatchObject({ segment: "'=1+2", dimensions: "'@x", summary: "'-5 is not a number here" });
  });

  test('If-None-Match with the ETag answers 304 for JSON and for CSV, each with its own tag', async () => {
    const url = `/v1/reports/${reportId}/segments`;
    const json = await context.app.inject({ method: 'GET', url });
    const csv = await context.app.inject({ method: 'GET', url: `${url}?format=csv` });
    const jsonTag = json.headers.etag as string;
    const csvTag = csv.headers.etag as string;
    expect(jsonTag).toMatch(/^"[^"]+"$/);
    expect(csvTag).not.toBe(jsonTag);
    const notModified = await context.app.inject({ method: 'GET', url, headers: { 'if-none-match': jsonTag } });
    expect(notModified.statusCode).toBe(304);
    expect(notModified.body).toBe('');
    expect(notModified.headers.etag).toBe(jsonTag);
    const weak = await context.app.inject({ method: 'GET', url: `${url}?format=csv`, headers: { 'if-none-match': `"other", W/${csvTag}` } });
    expect(weak.statusCode).toBe(304);
    const stale = await context.app.inject({ method: 'GET', url, headers: { 'if-none-match': csvTag } });
    expect(stale.statusCode).toBe(200);
  });

  test('a client accepting gzip gets the same table gzip-compressed, under its own ETag', async () => {
    const url = `/v1/reports/${reportId}/segments?format=csv`;
    const plain = await context.app.inject({ method: 'GET', url });
    const compressed = await context.app.inject({ method: 'GET', url, headers: { 'accept-encoding': 'gzip, deflate, br' } });
    expect(plain.headers['content-encoding']).toBeUndefined();
    expect(compressed.statusCode).toBe(200);
    expect(compressed.headers['content-encoding']).toBe('gzip');
    expect(compressed.headers.vary).toBe('Accept, Accept-Encoding');
    expect(compressed.headers['content-type']).toBe(plain.headers['content-type']);
    expect(gunzipSync(compressed.rawPayload).equals(plain.rawPayload)).toBe(true);
    expect(compressed.rawPayload.length).toBeLessThan(plain.rawPayload.length);
    const gzipTag = compressed.headers.etag as string;
    expect(gzipTag).toMatch(/^"[^"]+"$/);
    expect(gzipTag).not.toBe(plain.headers.etag);
    const notModified = await context.app.inject({ method: 'GET', url, headers: { 'accept-encoding': 'gzip', 'if-none-match': gzipTag } });
    expect(notModified.statusCode).toBe(304);
    // gzip refused by q=0 leaves the body as it is.
    expect((await context.app.inject({ method: 'GET', url, headers: { 'accept-encoding': 'gzip;q=0' } })).headers['content-encoding']).toBeUndefined();
  });

  test('the ETag changes when a new snapshot becomes the latest', async () => {
    const before = await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments?snapshot=${first.snapshot_id}` });
    const latest = await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments` });
    expect(before.json().snapshot_id).toBe(first.snapshot_id);
    expect(latest.json().snapshot_id).toBe(second.snapshot_id);
    expect(before.headers.etag).not.toBe(latest.headers.etag);
  });

  test('an unknown snapshot is 404 and an unacceptable type is 406', async () => {
    const missing = await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments?snapshot=nope` });
    expect(missing.statusCode).toBe(404);
    const unacceptable = await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments`, headers: { accept: 'application/xml' } });
    expect(unacceptable.statusCode).toBe(406);
    expect(unacceptable.json().type).toBe('/problems/not-acceptable');
  });

  test('JSON is preferred when the Accept header allows both by quality', async () => {
    const response = await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments`, headers: { accept: 'text/csv;q=0.5, application/json' } });
    expect(response.headers['content-type']).toMatch(/^application\/json/);
    const csv = await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments`, headers: { accept: 'application/json;q=0.2, text/csv' } });
    expect(csv.headers['content-type']).toMatch(/^text\/csv/);
  });

  test('a type refused with q=0 is not served even when a wildcard allows everything else', async () => {
    const response = await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments`, headers: { accept: 'application/json;q=0, */*' } });
    expect(response.statusCode).toBe(200);
    expect(response.headers['content-type']).toBe('text/csv; charset=utf-8; header=present');
    expect(response.body.split('\r\n')[0]).toBe(COLUMNS.join(','));
    const neither = await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments`, headers: { accept: 'application/json;q=0, text/csv;q=0, */*' } });
    expect(neither.statusCode).toBe(406);
    expect(neither.json().type).toBe('/problems/not-acceptable');
  });

  test('an Accept header naming the served charset or CSV header parameter still gets that type', async () => {
    const csv = await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments`, headers: { accept: 'text/csv; charset=utf-8' } });
    expect(csv.headers['content-type']).toBe('text/csv; charset=utf-8; header=present');
    const json = await context.app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments`, headers: { accept: 'application/json; charset=utf-8' } });
    expect(json.headers['content-type']).toBe('application/json; charset=utf-8');
  });
});
