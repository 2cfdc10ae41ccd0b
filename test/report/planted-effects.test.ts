/**
 * End to end on invented data with planted effects: customers and campaign outcomes are
 * generated from seeded generators and uploaded through the HTTP API; one region converts at
 * 16% against 10% for everyone else, channels and age bands have no effect at all.
 */
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import type { Snapshot } from '../../src/report/shapes/index.js';
import { TEST_DIALECTS } from '../support/database.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { createReport, generateContacts, generateCustomers, refresh, uploadRows, type GeneratedCustomer, REPORT_TEST_SETTINGS } from '../support/report-data.js';

const SEEDS = [11, 12, 13, 14, 15, 16, 17, 18];
const CUSTOMERS = 6000;

describe.each(TEST_DIALECTS)('planted effects (%s)', (dialect) => {
  let context: TestApp;
  const snapshots = new Map<number, Snapshot>();

  beforeAll(async () => {
    context = await createTestApp(dialect, REPORT_TEST_SETTINGS);
    const customers: GeneratedCustomer[] = generateCustomers(7, CUSTOMERS, 0.02);
    await uploadRows(context.app, '/v1/customers', customers as unknown as Array<Record<string, unknown>>);
    for (const seed of SEEDS) {
      const contacts = generateContacts(customers, { seed, baseRate: 0.1, plantedRegion: 'Northfield', plantedRate: 0.16 });
      await uploadRows(context.app, `/v1/campaigns/trial-${seed}/contacts`, contacts as unknown as Array<Record<string, unknown>>);
      const report = await createReport(context.app, {
        name: `Trial ${seed}`,
        source: { campaign_ids: [`trial-${seed}`] },
        dimensions: ['age_band', 'region', 'channel'],
        crosses: [['age_band', 'channel']],
      });
      snapshots.set(seed, await refresh(context.app, report.report_id));
    }
  }, 240_000);
  afterAll(async () => {
    await context.close();
  });

  test('the planted region is found better than the rest and ranked first in every seed', () => {
    for (const seed of SEEDS) {
      const snapshot = snapshots.get(seed) as Snapshot;
      const first = snapshot.segments[0];
      expect(first?.segment, `seed ${seed}`).toBe('region=Northfield');
      expect(first?.verdict, `seed ${seed}`).toBe('better');
      expect(first?.rank).toBe(1);
    }
  });

  test('the channel dimension, which has no effect, has no significant segment in at least 7 of 8 seeds', () => {
    const seedsWithFalseFinding = SEEDS.filter((seed) =>
      (snapshots.get(seed) as Snapshot).segments.some((segment) => segment.dimensions === 'channel' && (segment.verdict === 'better' || segment.verdict === 'worse')),
    );
    expect(seedsWithFalseFinding.length).toBeLessThanOrEqual(1);
  });

  test('across all seeds, false findings stay a small share of all findings, as the false discovery rate promises', () => {
    let findings = 0;
    let falseFindings = 0;
    for (const seed of SEEDS) {
      for (const segment of (snapshots.get(seed) as Snapshot).segments) {
        if (segment.verdict !== 'better' && segment.verdict !== 'worse') continue;
        findings += 1;
        // Only segments defined by region carry a real difference from their rest.
        if (!segment.dimensions.split(' & ').includes('region')) falseFindings += 1;
      }
    }
    expect(findings).toBeGreaterThanOrEqual(SEEDS.length);
    // BH at 5% bounds the expected share at 5%; 15% leaves room for the randomness of eight seeds.
    expect(falseFindings / findings).toBeLessThanOrEqual(0.15);
  });
});
