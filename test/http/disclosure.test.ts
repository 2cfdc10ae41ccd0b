/**
 * Privacy of published aggregates through the API: a customer alone in a segment (a unique
 * extra attribute, a region of one) is never described by a snapshot served as JSON, CSV or
 * page; a snapshot stored before withholding existed is withheld when read; erasing the
 * customer redacts the stored snapshots too; the erasure's log lines carry no customer id.
 */
import { Writable } from 'node:stream';
import pino from 'pino';
import { afterEach, describe, expect, it } from 'vitest';
import { buildApp } from '../../src/app.js';
import { REDACTED_PATHS, logPseudonym, requestForLog } from '../../src/logger.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { TEST_DIALECTS } from '../support/database.js';
import { CSV, upload } from '../support/upload-client.js';

// Invented: 60 customers in two regions, and one (Q-LONE) alone in Orrin Coast with a unique
// loyalty code, born 1949 and the only one who spent 87.30.
const LONE_ID = 'Q-LONE';
const LONE_CODE = 'LC-7731';
const LONE_REVENUE = '87.3';

function customersCsv(): string {
  const lines = ['customer_id,birth_date,region,channel,customer_type,loyalty_code'];
  for (let index = 1; index <= 60; index++) lines.push(`Q${index},1980-05-0${(index % 9) + 1},${index % 2 === 0 ? 'Saltmere' : 'Fennwick'},web shop,individual,standard`);
  lines.push(`${LONE_ID},1949-02-11,Orrin Coast,web shop,individual,${LONE_CODE}`);
  return `${lines.join('\n')}\n`;
}

function contactsCsv(): string {
  const lines = ['customer_id,contacted_at,converted,revenue'];
  for (let index = 1; index <= 60; index++) lines.push(`Q${index},2026-03-02,${index % 4 === 0 ? 1 : 0},${index % 4 === 0 ? '20.00' : '0'}`);
  lines.push(`${LONE_ID},2026-03-02,1,87.30`);
  return `${lines.join('\n')}\n`;
}

describe.each(TEST_DIALECTS)('publication threshold and erasure on %s', (dialect) => {
  let testApp: TestApp | undefined;
  afterEach(async () => {
    await testApp?.close();
    testApp = undefined;
  });

  it('serves no figure of a segment of one, in JSON, CSV or page, and names the threshold instead', async () => {
    testApp = await createTestApp(dialect, { maxEventLoopDelayMs: 0 });
    const { app } = testApp;
    expect((await upload(app, '/v1/customers', CSV, customersCsv())).statusCode).toBe(201);
    expect((await upload(app, '/v1/campaigns/lone/contacts', CSV, contactsCsv())).statusCode).toBe(201);
    const created = await app.inject({ method: 'POST', url: '/v1/reports', payload: { name: 'lone', source: { campaign_ids: ['lone'] }, dimensions: ['region', 'loyalty_code'], crosses: [] } });
    const reportId = created.json<{ report_id: string }>().report_id;
    const refreshed = await app.inject({ method: 'POST', url: `/v1/reports/${reportId}/refresh` });
    expect(refreshed.statusCode).toBe(201);
    const snapshot = refreshed.json<{ segments: Array<{ segment: string; n: number | null; withheld_below: number | null; summary: string }> }>();
    const lone = snapshot.segments.find((segment) => segment.segment === `loyalty_code=${LONE_CODE}`);
    expect(lone).toMatchObject({ n: null, withheld_below: 10 });
    expect(lone?.summary).toContain('fewer than 10');
    const csv = (await app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments?format=csv` })).body;
    expect(csv.split('\r\n')[0]?.endsWith(',summary,withheld_below')).toBe(true);
    const page = (await app.inject({ method: 'GET', url: `/reports/${reportId}` })).body;
    for (const text of [refreshed.body, csv, page]) expect(text).not.toContain(LONE_REVENUE);
    expect(page).toContain('fewer than 10');
  });

  it('withholds a snapshot stored before withholding existed, and erasure redacts it in storage, with no customer id in the logs', async () => {
    // A snapshot stored with every figure published stands for one stored before this version.
    testApp = await createTestApp(dialect, { maxEventLoopDelayMs: 0, publicationThreshold: 1 });
    const { app: openApp, database } = testApp;
    expect((await upload(openApp, '/v1/customers', CSV, customersCsv())).statusCode).toBe(201);
    expect((await upload(openApp, '/v1/campaigns/lone/contacts', CSV, contactsCsv())).statusCode).toBe(201);
    const created = await openApp.inject({ method: 'POST', url: '/v1/reports', payload: { name: 'lone', source: { campaign_ids: ['lone'] }, dimensions: ['region', 'loyalty_code', 'age_band'] } });
    const reportId = created.json<{ report_id: string }>().report_id;
    const old = await openApp.inject({ method: 'POST', url: `/v1/reports/${reportId}/refresh` });
    const oldId = old.json<{ snapshot_id: string }>().snapshot_id;
    expect(old.body).toContain(LONE_CODE);
    expect(old.body).toContain(LONE_REVENUE);

    const lines: string[] = [];
    const sink = new Writable({
      write(chunk, _encoding, done) {
        lines.push(String(chunk));
        done();
      },
    });
    const logger = pino({ level: 'info', redact: { paths: REDACTED_PATHS, censor: '[redacted]' }, serializers: { req: requestForLog } }, sink);
    const app = await buildApp({ config: { ...testApp.config, publicationThreshold: 10 }, database: database.handle, logger, now: () => new Date('2026-06-15T12:00:00Z') });
    try {
      const reads = async () => ({
        json: (await app.inject({ method: 'GET', url: `/v1/reports/${reportId}/snapshots/${oldId}` })).body,
        csv: (await app.inject({ method: 'GET', url: `/v1/reports/${reportId}/segments?snapshot=${oldId}&format=csv` })).body,
        page: (await app.inject({ method: 'GET', url: `/reports/${reportId}?snapshot=${oldId}` })).body,
      });
      const before = await reads();
      for (const text of Object.values(before)) expect(text).not.toContain(LONE_REVENUE);
      // Withheld on reading, but the label of the withheld segment is still shown.
      expect(before.json).toContain(LONE_CODE);

      expect((await app.inject({ method: 'DELETE', url: `/v1/customers/${LONE_ID}` })).statusCode).toBe(204);
      const after = await reads();
      for (const text of Object.values(after)) {
        expect(text).not.toContain(LONE_CODE);
        expect(text).not.toContain(LONE_REVENUE);
        expect(text).not.toContain('Orrin Coast');
      }
      const stored = await database.handle.db.selectFrom('report_snapshots').select(['body', 'redacted_at', 'segment_count']).where('snapshot_id', '=', oldId).executeTakeFirstOrThrow();
      expect(Number(stored.segment_count)).toBe((JSON.parse(stored.body) as { segments: unknown[] }).segments.length);
      expect(stored.body).not.toContain(LONE_CODE);
      expect(stored.body).not.toContain(LONE_REVENUE);
      expect(stored.redacted_at).toBe('2026-06-15T12:00:00.000Z');
      expect(JSON.parse(after.json).disclosure.redacted_at).toBe('2026-06-15T12:00:00.000Z');

      const log = lines.join('');
      expect(log).toContain('customer erased');
      expect(log).not.toContain(LONE_ID);
      expect(log).toContain(logPseudonym(LONE_ID));
    } finally {
      await app.close();
    }
  });
});
