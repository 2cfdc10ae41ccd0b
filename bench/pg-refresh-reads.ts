/**
 * The database reads of a campaign report's refresh on PostgreSQL, each timed, in the refresh's
 * own kind of transaction (repeatable read): the holdout count, the label bounds, the kept rows
 * read and folded, the source quality. The data are the bench's (bench/data.ts), uploaded
 * through the app into the schema `--schema`, which is kept for the next run (and reused when it
 * already holds contacts: drop it to load again); the report is the bench's (age band, region,
 * channel over four campaigns). Prints the median of each read over `--runs` runs after one
 * warming run.
 *
 *   DATABASE_URL=postgres://… npx tsx bench/pg-refresh-reads.ts [--contacts 250000] [--runs 7] [--schema bench_refresh_reads]
 */
import fs from 'node:fs';
import path from 'node:path';
import { parseArgs } from 'node:util';
import { openDatabase } from '../src/db/connect.js';
import { migrateToLatest } from '../src/db/migrate.js';
import { holdoutContacts, keptCountAggregates, labelCountBounds, sourceQuality, type AggregationRequest } from '../src/segments/index.js';
import { writeBenchFiles } from './data.js';
import { inProcessApp } from './in-process-app.js';
import { median } from './process-readings.js';

const { values: options } = parseArgs({
  options: { contacts: { type: 'string', default: '250000' }, runs: { type: 'string', default: '7' }, schema: { type: 'string', default: 'bench_refresh_reads' } },
});
const url = process.env['DATABASE_URL'];
if (url === undefined || !/^postgres(ql)?:\/\//.test(url)) throw new Error('DATABASE_URL must name a PostgreSQL server');
const contacts = Number(options.contacts);
const runs = Math.max(1, Number(options.runs));
const CAMPAIGNS = 4;

const settings = { dialect: 'postgres' as const, connectionString: url, schema: options.schema, poolSize: 4 };
const database = await openDatabase(settings);
try {
  await migrateToLatest(database.db, settings);
  const files = writeBenchFiles(path.resolve('bench/out'), { customers: contacts / 4, campaigns: CAMPAIGNS, contactsPerCampaign: Math.round(contacts / CAMPAIGNS), seed: 11 });
  const stored = await database.db.selectFrom('campaign_contacts').select((eb) => eb.fn.countAll<number>().as('rows')).executeTakeFirstOrThrow();
  if (Number(stored.rows) === 0) {
    const app = await inProcessApp(database, settings);
    const post = async (route: string, file: string) => {
      const response = await app.inject({ method: 'POST', url: route, headers: { 'content-type': 'text/csv' }, payload: fs.readFileSync(file) });
      if (response.statusCode !== 201) throw new Error(`${route}: ${response.statusCode} ${response.body}`);
    };
    await post('/v1/customers', files.customersCsv);
    for (const campaign of files.contactsCsvs) await post(`/v1/campaigns/${campaign.campaignId}/contacts`, campaign.file);
    await app.close();
  }
  const keptRows = await database.db.selectFrom('contact_value_counts').select((eb) => eb.fn.countAll<number>().as('rows')).executeTakeFirstOrThrow();
  console.log(`schema ${options.schema}: ${files.contacts.toLocaleString('en-US')} contacts, ${Number(keptRows.rows).toLocaleString('en-US')} rows of contact_value_counts`);

  const campaignIds = files.contactsCsvs.map((campaign) => campaign.campaignId);
  const source = { kind: 'campaigns' as const, campaignIds, table: 'contact_value_counts' as const };
  const request: AggregationRequest = { source, dimensions: ['age_band', 'region', 'channel'], ageEdges: [25, 35, 45, 55, 65], valueBasis: 'per_unit' };
  const readings: Array<Record<string, number>> = [];
  for (let run = 0; run <= runs; run++) {
    const times: Record<string, number> = {};
    const timed = async <T>(name: string, read: () => Promise<T>): Promise<T> => {
      const started = performance.now();
      const result = await read();
      times[name] = performance.now() - started;
      return result;
    };
    await database.db
      .transaction()
      .setIsolationLevel('repeatable read')
      .execute(async (trx) => {
        await timed('holdout contacts', () => holdoutContacts(trx, source));
        await timed('label bounds', () => labelCountBounds(trx, request, 1000));
        await timed('kept rows read and folded', () => keptCountAggregates(trx, null, request, false));
        await timed('source quality', () => sourceQuality(trx, source, 'postgres'));
      });
    if (run > 0) readings.push(times);
  }
  console.log(`medians of ${runs} runs, ms:`);
  for (const step of Object.keys(readings[0] ?? {})) console.log(`${step}: ${median(readings.map((times) => times[step] ?? 0)).toFixed(1)}`);
  console.log(`all reads: ${median(readings.map((times) => Object.values(times).reduce((sum, value) => sum + value, 0))).toFixed(1)}`);
} finally {
  await database.close();
}
