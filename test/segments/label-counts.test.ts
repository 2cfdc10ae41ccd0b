/**
 * The cheap bounds a refresh reads before its cell query: never below a dimension's exact
 * count of labels in the population (else a dimension past the limit would slip through to
 * the cell query), and read no further than one past the limit.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { labelCountBounds, labelCounts, type AggregationRequest } from '../../src/segments/index.js';
import { TEST_DIALECTS, createTestDatabase, type TestDatabase } from '../support/database.js';

const NOW = '2026-06-01T00:00:00.000Z';
const CUSTOMERS = 12;

describe.each(TEST_DIALECTS)('label count bounds (%s)', (dialect) => {
  let database: TestDatabase;
  beforeAll(async () => {
    database = await createTestDatabase(dialect);
    const db = database.handle.db;
    // Twelve invented customers: three regions, two channels, a member code of their own each
    // (the last two have none, so `unknown` is a label too); the campaign reaches the first six.
    const ids = Array.from({ length: CUSTOMERS }, (_unused, index) => `K${index}`);
    await db
      .insertInto('customers')
      .values(ids.map((id, index) => ({ customer_id: id, birth_date: '1980-01-01', region: ['Fennwick', 'Saltmere', 'Brackby'][index % 3] as string, channel: index % 2 === 0 ? 'web shop' : 'catalogue mail', customer_type: 'individual' as const, created_at: NOW, updated_at: NOW, last_ingest_id: null })))
      .execute();
    await db.insertInto('customer_attributes').values(ids.slice(0, CUSTOMERS - 2).map((id) => ({ customer_id: id, name: 'member_code', value: `MC-${id}` }))).execute();
    await db.insertInto('campaigns').values({ campaign_id: 'spring', created_at: NOW }).execute();
    await db
      .insertInto('campaign_contacts')
      .values(ids.slice(0, 6).map((id, index) => ({ campaign_id: 'spring', customer_id: id, contacted_at: '2026-03-01', converted: 0, holdout: 0, revenue_cents: 0, age_at_contact: 46, region: ['Fennwick', 'Saltmere', 'Brackby'][index % 3] as string, channel: index % 2 === 0 ? 'web shop' : 'catalogue mail', customer_type: 'individual' as const, last_ingest_id: null })))
      .execute();
  });
  afterAll(async () => {
    await database.destroy();
  });

  const request: Pick<AggregationRequest, 'source' | 'dimensions' | 'ageEdges'> = {
    source: { kind: 'campaigns', campaignIds: ['spring'] },
    dimensions: ['age_band', 'region', 'channel', 'member_code'],
    ageEdges: [18, 35, 65],
  };

  it('bounds every dimension from above, each with one more for unknown', async () => {
    const db = database.handle.db;
    const bounds = await labelCountBounds(db, request, 100);
    // Age bands 18-34, 35-64, 65+ and unknown; 3 regions, 2 channels, 10 member codes, each + unknown.
    expect(bounds).toEqual([4, 4, 3, 11]);
    const exact = await labelCounts(db, request);
    expect(exact).toEqual([1, 3, 2, 6]);
    bounds.forEach((bound, index) => expect(bound).toBeGreaterThanOrEqual(exact[index] as number));
  });

  it('stops reading one label past the limit', async () => {
    const bounds = await labelCountBounds(database.handle.db, request, 4);
    expect(bounds).toEqual([4, 4, 3, 6]);
    expect(bounds.map((bound) => bound > 4)).toEqual([false, false, false, true]);
  });
});
