/**
 * Through the service and the database: the change since the previous snapshot of a campaign
 * report compares only the contacts added since; when an upload after that snapshot also edited
 * contacts it held (an earlier contact converting, while new ones arrive), current minus
 * previous would count the edit as new, so no change is computed and the note says why.
 */
import { afterEach, describe, expect, test } from 'vitest';
import type { SnapshotSegment } from '../../src/report/shapes/index.js';
import { TEST_DIALECTS } from '../support/database.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { createReport, refresh, uploadRows, REPORT_TEST_SETTINGS } from '../support/report-data.js';

const REGIONS = ['Ashgrove', 'Brindle'];

function contacts(from: number, to: number, convertedEvery: number): Array<Record<string, unknown>> {
  return REGIONS.flatMap((region) =>
    Array.from({ length: to - from }, (_unused, offset) => {
      const index = from + offset;
      const converted = index % convertedEvery === 0 ? 1 : 0;
      return { customer_id: `${region}-${index}`, contacted_at: '2026-03-01', converted, revenue: converted === 1 ? '20.00' : '0' };
    }),
  );
}

describe.each(TEST_DIALECTS)('the change since the previous snapshot after edits (%s)', (dialect) => {
  let context: TestApp | undefined;
  afterEach(async () => {
    await context?.close();
  });

  async function reportAfter(secondUpload: Array<Record<string, unknown>>, eraseFirst?: string): Promise<SnapshotSegment> {
    // The clock moves a day per call, so each upload and refresh is later than the one before.
    let day = 0;
    context = await createTestApp(dialect, REPORT_TEST_SETTINGS, () => new Date(Date.UTC(2026, 5, 15 + day++, 12)));
    const customers = REGIONS.flatMap((region) =>
      Array.from({ length: 400 }, (_unused, index) => ({ customer_id: `${region}-${index}`, birth_date: '1980-05-05', region, channel: 'web', customer_type: 'individual' })),
    );
    await uploadRows(context.app, '/v1/customers', customers);
    await uploadRows(context.app, '/v1/campaigns/spring/contacts', contacts(0, 200, 10));
    const report = await createReport(context.app, { name: 'Spring', source: { campaign_ids: ['spring'] }, dimensions: ['region'] });
    await refresh(context.app, report.report_id);
    if (eraseFirst !== undefined) expect((await context.app.inject({ method: 'DELETE', url: `/v1/customers/${eraseFirst}` })).statusCode).toBe(204);
    await uploadRows(context.app, '/v1/campaigns/spring/contacts', secondUpload);
    const second = await refresh(context.app, report.report_id);
    return second.segments.find((segment) => segment.segment === 'region=Ashgrove') as SnapshotSegment;
  }

  test('new contacts only: the change compares them with the earlier ones', async () => {
    const ashgrove = await reportAfter(contacts(200, 400, 4));
    expect(ashgrove.change).toMatchObject({ compared_with: 'previous_snapshot', previous_n: 200, previous_conversions: 20, new_n: 200, new_conversions: 50 });
  });

  test('new contacts and an earlier contact now converted, in one upload: no change, and the note says why', async () => {
    // Customer 1 of each region was contacted before the first snapshot and did not convert; now it has.
    const edit = REGIONS.map((region) => ({ customer_id: `${region}-1`, contacted_at: '2026-03-01', converted: 1, revenue: '20.00' }));
    const ashgrove = await reportAfter([...edit, ...contacts(200, 400, 4)]);
    // Every sum still grew, so the subtraction alone would have taken the edit for a new conversion.
    expect(ashgrove.n).toBe(400);
    expect(ashgrove.change).toBeNull();
    expect(ashgrove.notes.join(' ')).toMatch(/since then an upload changed contacts or customers stored before it/);
  });

  test('an erased customer among the earlier contacts: no change, and the note says why', async () => {
    const ashgrove = await reportAfter(contacts(200, 400, 4), 'Ashgrove-3');
    expect(ashgrove.n).toBe(399);
    expect(ashgrove.change).toBeNull();
    expect(ashgrove.notes.join(' ')).toMatch(/or a customer was erased/);
  });
});
