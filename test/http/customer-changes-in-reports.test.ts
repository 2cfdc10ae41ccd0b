/**
 * Campaign reports read the customer's region, channel, type and age at contact from copies kept
 * on each contact (so they need no join); a later customer upload that changes any of them must
 * reach every stored contact of that customer, and so the next snapshot.
 */
import { afterEach, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '../support/app.js';
import { TEST_DIALECTS } from '../support/database.js';
import { CSV, upload } from '../support/upload-client.js';

interface SnapshotBody {
  row_counts: { population: number };
  segments: Array<{ segment: string; n: number; conversions: number }>;
}

describe.each(TEST_DIALECTS)('customer changes and campaign reports on %s', (dialect) => {
  let testApp: TestApp | undefined;
  afterEach(async () => {
    await testApp?.close();
    testApp = undefined;
  });

  async function setUp(): Promise<{ post: (url: string, body: string) => Promise<number>; refresh: () => Promise<SnapshotBody>; copiesOf: (customerId: string) => Promise<unknown[]> }> {
    // One moved customer is followed into segments of one: every figure published (threshold 1).
    testApp = await createTestApp(dialect, { maxEventLoopDelayMs: 0, publicationThreshold: 1 });
    const { app, database } = testApp;
    const post = async (url: string, body: string) => (await upload(app, url, CSV, body + '\n')).statusCode;
    const customers = ['customer_id,birth_date,region,channel,customer_type'];
    const contacts = ['customer_id,contacted_at,converted,revenue'];
    for (let index = 1; index <= 60; index++) {
      customers.push(`M${index},1980-05-0${(index % 9) + 1},${index % 2 === 0 ? 'Saltmere' : 'Fennwick'},web shop,individual`);
      contacts.push(`M${index},2026-03-02,${index % 3 === 0 ? 1 : 0},${index % 3 === 0 ? '12.50' : '0'}`);
    }
    expect(await post('/v1/customers', customers.join('\n'))).toBe(201);
    expect(await post('/v1/campaigns/spring-mailer/contacts', contacts.join('\n'))).toBe(201);
    expect(await post('/v1/campaigns/autumn-mailer/contacts', ['customer_id,contacted_at,converted,revenue', 'M6,2026-05-14,0,0'].join('\n'))).toBe(201);
    const created = await app.inject({
      method: 'POST',
      url: '/v1/reports',
      payload: { name: 'changes', source: { campaign_ids: ['spring-mailer'] }, dimensions: ['age_band', 'region', 'channel', 'customer_type'], min_n: 5 },
    });
    const reportId = created.json<{ report_id: string }>().report_id;
    const refresh = async () => (await app.inject({ method: 'POST', url: `/v1/reports/${reportId}/refresh` })).json<SnapshotBody>();
    const copiesOf = (customerId: string) =>
      database.handle.db
        .selectFrom('campaign_contacts')
        .select(['campaign_id', 'region', 'channel', 'customer_type', 'age_at_contact'])
        .where('customer_id', '=', customerId)
        .orderBy('campaign_id')
        .execute();
    return { post, refresh, copiesOf };
  }

  const segment = (snapshot: SnapshotBody, name: string) => snapshot.segments.find((candidate) => candidate.segment === name);

  it('copies the customer onto each contact when the contact is stored', async () => {
    const { copiesOf } = await setUp();
    // M6 was born 1980-05-07: 45 on 2026-03-02 and 46 on 2026-05-14 (test today is 2026-06-15).
    expect(await copiesOf('M6')).toEqual([
      { campaign_id: 'autumn-mailer', region: 'Saltmere', channel: 'web shop', customer_type: 'individual', age_at_contact: 46 },
      { campaign_id: 'spring-mailer', region: 'Saltmere', channel: 'web shop', customer_type: 'individual', age_at_contact: 45 },
    ]);
  });

  it('moves every stored contact, and the next snapshot, when region, channel, type and birth date change', async () => {
    const { post, refresh, copiesOf } = await setUp();
    const before = await refresh();
    // M6 converted (6 is a multiple of 3) and lives in Saltmere.
    expect(await post('/v1/customers', ['customer_id,birth_date,region,channel,customer_type', 'M6,1990-12-31,Fennwick,catalogue,company'].join('\n'))).toBe(201);
    expect(await copiesOf('M6')).toEqual([
      { campaign_id: 'autumn-mailer', region: 'Fennwick', channel: 'catalogue', customer_type: 'company', age_at_contact: 35 },
      { campaign_id: 'spring-mailer', region: 'Fennwick', channel: 'catalogue', customer_type: 'company', age_at_contact: 35 },
    ]);
    // Other customers keep their values.
    expect(await copiesOf('M8')).toEqual([{ campaign_id: 'spring-mailer', region: 'Saltmere', channel: 'web shop', customer_type: 'individual', age_at_contact: 45 }]);

    const after = await refresh();
    expect(after.row_counts.population).toBe(before.row_counts.population);
    expect(segment(after, 'region=Saltmere')?.n).toBe((segment(before, 'region=Saltmere')?.n ?? 0) - 1);
    expect(segment(after, 'region=Saltmere')?.conversions).toBe((segment(before, 'region=Saltmere')?.conversions ?? 0) - 1);
    expect(segment(after, 'region=Fennwick')?.n).toBe((segment(before, 'region=Fennwick')?.n ?? 0) + 1);
    expect(segment(after, 'channel=catalogue')?.n).toBe(1);
    expect(segment(after, 'customer_type=company')?.n).toBe(1);
    expect(segment(after, 'age_band=35-44')?.n).toBe((segment(before, 'age_band=35-44')?.n ?? 0) + 1);
  });
});
