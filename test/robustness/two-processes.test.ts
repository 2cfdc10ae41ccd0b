/**
 * Two service processes on one PostgreSQL database, as the scale-out path runs them: uploads to
 * the same campaign arriving at both at once keep the kept report aggregates exact, and the
 * weekly refresh that both find due at start-up runs once.
 */
import { afterEach, describe, expect, it } from 'vitest';
import { sql } from 'kysely';
import { openDatabase } from '../../src/db/connect.js';
import type { DatabaseSettings } from '../../src/config.js';
import { TEST_DIALECTS, dropTestDatabase, testDatabaseSettings } from '../support/database.js';
import { startServiceProcess, type RunningService } from '../support/service-process.js';

const REGIONS = ['Fennwick', 'Ashgrove', 'Marrowby'];
const CHANNELS = ['web shop', 'field sales'];
const CUSTOMERS = 4_000;

function customersCsv(): string {
  const lines = ['customer_id,birth_date,region,channel,customer_type'];
  for (let index = 0; index < CUSTOMERS; index++) {
    // Every seventh customer has no birth date, so the unknown age is a cell of its own.
    const birthDate = index % 7 === 0 ? '' : `${1950 + (index % 50)}-0${1 + (index % 9)}-1${index % 10}`;
    lines.push(`C${index},${birthDate},${REGIONS[index % 3]},${CHANNELS[index % 2]},${index % 11 === 0 ? 'company' : 'individual'}`);
  }
  return `${lines.join('\n')}\n`;
}

/** Contacts of customers `from`…`to − 1`; `variant` changes outcomes, so a second upload of the same customers updates them. */
function contactsCsv(from: number, to: number, variant: number): string {
  const lines = ['customer_id,contacted_at,converted,revenue,holdout'];
  for (let index = from; index < to; index++) {
    const converted = (index * 7 + variant) % 9 === 0 ? 1 : 0;
    const revenue = converted === 1 ? `${10 + ((index + variant) % 40)}.${String(index % 100).padStart(2, '0')}` : '0';
    lines.push(`C${index},2026-03-02,${converted},${revenue},${index % 13 === 0 ? 1 : 0}`);
  }
  return `${lines.join('\n')}\n`;
}

async function post(url: string, body: string, contentType = 'text/csv'): Promise<number> {
  const response = await fetch(url, { method: 'POST', headers: { 'content-type': contentType }, body });
  await response.arrayBuffer();
  return response.status;
}

type CellKey = string;

/** The kept aggregates and the same counts recomputed from the stored contacts, keyed alike. */
async function keptAndRecomputed(settings: DatabaseSettings): Promise<{ kept: Map<CellKey, number>; recomputed: Map<CellKey, number> }> {
  const handle = await openDatabase(settings);
  try {
    const keyOf = (row: Record<string, unknown>) =>
      JSON.stringify([row['campaign_id'], row['region'], row['channel'], row['customer_type'], Number(row['age']), Number(row['holdout']), Number(row['converted']), String(row['revenue_cents'])]);
    const kept = new Map<CellKey, number>();
    const keptRows = await sql<Record<string, unknown>>`
      select campaign_id, region, channel, customer_type, age, holdout, converted, revenue_cents, units from contact_value_counts`.execute(handle.db);
    for (const row of keptRows.rows) kept.set(keyOf(row), Number(row['units']));
    const recomputed = new Map<CellKey, number>();
    const rows = await sql<Record<string, unknown>>`
      select campaign_id, region, channel, customer_type, coalesce(age_at_contact, -1) as age, holdout, converted, revenue_cents, count(*) as units
      from campaign_contacts
      group by campaign_id, region, channel, customer_type, coalesce(age_at_contact, -1), holdout, converted, revenue_cents`.execute(handle.db);
    for (const row of rows.rows) recomputed.set(keyOf(row), Number(row['units']));
    return { kept, recomputed };
  } finally {
    await handle.close();
  }
}

async function scheduledSnapshots(settings: DatabaseSettings, reportId: string): Promise<number> {
  const handle = await openDatabase(settings);
  try {
    const row = await handle.db
      .selectFrom('report_snapshots')
      .select((eb) => eb.fn.countAll<number>().as('n'))
      .where('report_id', '=', reportId)
      .where('trigger', '=', 'schedule')
      .executeTakeFirstOrThrow();
    return Number(row.n);
  } finally {
    await handle.close();
  }
}

const postgresOnly = TEST_DIALECTS.includes('postgres');
if (!postgresOnly) console.warn('SKIPPED: two service processes on one database need PostgreSQL (set DATABASE_URL=postgres://…)');

describe.skipIf(!postgresOnly)('two service processes on one PostgreSQL database', () => {
  const services: RunningService[] = [];
  let settings: DatabaseSettings | undefined;
  afterEach(async () => {
    await Promise.all(services.splice(0).map((service) => service.kill()));
    if (settings) await dropTestDatabase(settings);
  });

  it('keep the aggregates exact under concurrent uploads to one campaign and run a due weekly refresh once', { timeout: 240_000 }, async () => {
    settings = testDatabaseSettings('postgres');
    if (settings.dialect !== 'postgres') throw new Error('expected PostgreSQL settings');
    const databaseEnv = { DATABASE_URL: settings.connectionString, DATABASE_SCHEMA: settings.schema, MAX_EVENT_LOOP_DELAY_MS: '0' };

    // Both start together, so they also migrate the new schema at the same time.
    const [first, second] = await Promise.all([
      startServiceProcess({ ...databaseEnv, SCHEDULE_ENABLED: 'false' }),
      startServiceProcess({ ...databaseEnv, SCHEDULE_ENABLED: 'false' }),
    ]);
    services.push(first, second);
    expect(await post(`${first.url}/v1/customers`, customersCsv())).toBe(201);

    // Two halves of one campaign through the two processes at once (new contacts), then
    // overlapping ranges again with other outcomes, so the same stored contacts are updated by
    // both at the same time. (Two uploads inserting the same new contact at once cannot both
    // succeed: the second is refused by the contact's key and stores nothing.)
    const campaign = '/v1/campaigns/spring-mailing/contacts';
    const half = CUSTOMERS / 2;
    const rounds: Array<[number, number, number, number]> = [
      [0, half, half, CUSTOMERS],
      [0, half + 500, half - 500, CUSTOMERS],
      [0, CUSTOMERS, 1_000, CUSTOMERS],
    ];
    for (const [variant, [firstFrom, firstTo, secondFrom, secondTo]] of rounds.entries()) {
      const statuses = await Promise.all([
        post(`${first.url}${campaign}`, contactsCsv(firstFrom, firstTo, variant)),
        post(`${second.url}${campaign}`, contactsCsv(secondFrom, secondTo, variant + 3)),
        post(`${second.url}/v1/campaigns/autumn-mailing/contacts`, contactsCsv(0, half, variant)),
      ]);
      expect(statuses).toEqual([201, 201, 201]);
    }
    // A customer change moves contacts between cells while the other process uploads.
    const moved = customersCsv().replace(/^(C1\d,[^,]*),Fennwick,/gm, '$1,Ashgrove,');
    const [changed, uploaded] = await Promise.all([post(`${first.url}/v1/customers`, moved), post(`${second.url}${campaign}`, contactsCsv(0, CUSTOMERS, 9))]);
    expect([changed, uploaded]).toEqual([201, 201]);

    const { kept, recomputed } = await keptAndRecomputed(settings);
    expect(recomputed.size).toBeGreaterThan(100);
    const differing = [...new Set([...kept.keys(), ...recomputed.keys()])].filter((key) => kept.get(key) !== recomputed.get(key));
    expect(differing.slice(0, 5).map((key) => `${key}: kept ${kept.get(key)}, contacts ${recomputed.get(key)}`)).toEqual([]);
    expect(kept).toEqual(recomputed);

    const created = await fetch(`${first.url}/v1/reports`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ name: 'spring', source: { campaign_ids: ['spring-mailing'] }, refresh: 'weekly' }),
    });
    expect(created.status).toBe(201);
    const reportId = ((await created.json()) as { report_id: string }).report_id;
    await Promise.all(services.splice(0).map((service) => service.stop()));

    // The weekly run is due (it never ran); both processes find it so at start-up.
    const scheduled = { ...databaseEnv, SCHEDULE_ENABLED: 'true', REFRESH_CRON: '0 6 * * 1', LOG_LEVEL: 'info' };
    services.push(...(await Promise.all([startServiceProcess(scheduled), startServiceProcess(scheduled)])));
    const deadline = Date.now() + 60_000;
    while ((await scheduledSnapshots(settings, reportId)) === 0 && Date.now() < deadline) await new Promise((resolve) => setTimeout(resolve, 200));
    // Give the other process time to take its turn too (its catch-up finds the lock or the run done).
    await new Promise((resolve) => setTimeout(resolve, 3_000));
    expect(services.filter((service) => /"msg":"refresh run started"/.test(service.output()))).toHaveLength(1);
    expect(await scheduledSnapshots(settings, reportId)).toBe(1);
  });
});
