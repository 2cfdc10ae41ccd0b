/**
 * `contact_value_counts` stays exact through any sequence of writes: random customer uploads
 * (new customers; changed birth date, region, channel or type; unknown birth dates and
 * implausible ages), contact uploads to two campaigns (new contacts; changed outcome, revenue,
 * holdout or contact date; unchanged rows; bad rows skipped, or refusing the whole upload) and
 * erasures, all through the HTTP app. After every step the stored counts must equal the counts
 * recomputed from the contacts (`checkCells` finds no difference).
 *
 * Each run writes its own customers and campaigns (a prefix per run) into one database per
 * dialect, so runs need no fresh database; each step's check looks at the run's own campaigns
 * (so a shrunk rerun is judged on its own writes) and the end of the test at the whole table.
 */
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { checkCells } from '../../src/aggregates/check.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { TEST_DIALECTS } from '../support/database.js';
import { CSV, toCsv, upload } from '../support/upload-client.js';

const RUNS = 30;
const SEED = 20_261_203;

const CUSTOMERS = 6;
const customerIndex = fc.integer({ min: 0, max: CUSTOMERS - 1 });

// Test today is 2026-06-15. 1900 and 2024 births give implausible ages (about 125 and 1).
const birthDate = fc.constantFrom<string | null>(null, '1960-03-01', '1985-07-20', '1999-12-31', '1900-01-01', '2024-02-29');
const customerRow = fc.record({
  index: customerIndex,
  birthDate,
  region: fc.constantFrom('Fennwick', 'Saltmere'),
  channel: fc.constantFrom('web', 'store'),
  type: fc.constantFrom('individual', 'company'),
});
// Some dates precede the 2024 birth date: those rows are refused against the stored customer.
const contactRow = fc.record({
  index: customerIndex,
  contactedAt: fc.constantFrom('2023-05-01', '2025-02-28', '2026-03-01'),
  converted: fc.boolean(),
  revenue: fc.constantFrom('0', '12.50', '40'),
  holdout: fc.constantFrom(0, 1),
});

type CustomerRow = typeof customerRow extends fc.Arbitrary<infer Row> ? Row : never;
type ContactRow = typeof contactRow extends fc.Arbitrary<infer Row> ? Row : never;
type Step =
  | { kind: 'customers'; rows: CustomerRow[]; badRow: boolean }
  | { kind: 'contacts'; campaign: 'A' | 'B'; rows: ContactRow[]; badRow: boolean; onError: 'skip' | 'reject' }
  | { kind: 'erase'; index: number };

const step: fc.Arbitrary<Step> = fc.oneof(
  { weight: 3, arbitrary: fc.record({ kind: fc.constant('customers' as const), rows: fc.uniqueArray(customerRow, { selector: (row) => row.index, minLength: 1, maxLength: CUSTOMERS }), badRow: fc.boolean() }) },
  {
    weight: 4,
    arbitrary: fc.record({
      kind: fc.constant('contacts' as const),
      campaign: fc.constantFrom('A' as const, 'B' as const),
      rows: fc.uniqueArray(contactRow, { selector: (row) => row.index, minLength: 1, maxLength: CUSTOMERS }),
      badRow: fc.boolean(),
      onError: fc.constantFrom('skip' as const, 'skip' as const, 'reject' as const),
    }),
  },
  { weight: 1, arbitrary: fc.record({ kind: fc.constant('erase' as const), index: customerIndex }) },
);
/** Every run starts with its customers stored, so most contact rows name a known customer. */
const firstStep: fc.Arbitrary<Step> = fc.record({
  kind: fc.constant('customers' as const),
  rows: fc.tuple(...Array.from({ length: CUSTOMERS }, (_, index) => customerRow.map((row) => ({ ...row, index })))),
  badRow: fc.constant(false),
});

describe.each(TEST_DIALECTS)('contact value counts under random writes (%s)', (dialect) => {
  let testApp: TestApp;
  beforeAll(async () => {
    testApp = await createTestApp(dialect, { maxEventLoopDelayMs: 0 });
  });
  afterAll(async () => {
    await testApp.close();
  });

  async function run(prefix: string, current: Step): Promise<void> {
    const { app } = testApp;
    const id = (index: number) => `${prefix}-C${index}`;
    if (current.kind === 'customers') {
      const rows: Array<Record<string, string>> = current.rows.map((row) => ({ customer_id: id(row.index), birth_date: row.birthDate ?? '', region: row.region, channel: row.channel, customer_type: row.type }));
      if (current.badRow) rows.push({ customer_id: `${prefix}-bad`, birth_date: '', region: 'Fennwick', channel: 'web', customer_type: 'nobody' });
      const response = await upload(app, '/v1/customers', CSV, toCsv(rows), { query: 'on_error=skip' });
      expect(response.statusCode, response.body).toBeLessThan(500);
    } else if (current.kind === 'contacts') {
      const rows = current.rows.map((row) => ({
        customer_id: id(row.index),
        contacted_at: row.contactedAt,
        converted: row.converted ? 1 : 0,
        revenue: row.converted ? row.revenue : '0',
        holdout: row.holdout,
      }));
      // A customer never uploaded: refused against stored data.
      if (current.badRow) rows.push({ customer_id: `${prefix}-nobody`, contacted_at: '2026-03-01', converted: 0, revenue: '0', holdout: 0 });
      const response = await upload(app, `/v1/campaigns/${prefix}-${current.campaign}/contacts`, CSV, toCsv(rows), { query: `on_error=${current.onError}` });
      expect(response.statusCode, response.body).toBeLessThan(500);
    } else {
      const response = await app.inject({ method: 'DELETE', url: `/v1/customers/${id(current.index)}` });
      expect([204, 404]).toContain(response.statusCode);
    }
  }

  it('finds no difference between the stored counts and the contacts after every step', { timeout: 180_000 }, async () => {
    let runNumber = 0;
    await fc.assert(
      fc.asyncProperty(firstStep, fc.array(step, { minLength: 1, maxLength: 8 }), async (first, rest) => {
        const steps = [first, ...rest];
        runNumber += 1;
        const prefix = `r${runNumber}`;
        for (const [position, current] of steps.entries()) {
          await run(prefix, current);
          // Only this run's campaigns: a shrunk rerun must not fail on what a failed run left.
          const check = await checkCells(testApp.database.handle.db, Number.MAX_SAFE_INTEGER);
          const ours = check.differences.filter((difference) => difference.key.campaign_id.startsWith(`${prefix}-`));
          expect(ours, `after step ${position + 1} (${current.kind})`).toEqual([]);
        }
      }),
      { numRuns: RUNS, seed: SEED },
    );
    // The whole table is exact, and the runs wrote counts at all (the property did not hold on an empty table).
    const check = await checkCells(testApp.database.handle.db);
    expect(check.differenceCount).toBe(0);
    expect(check.storedRows).toBeGreaterThan(0);
  });
});
