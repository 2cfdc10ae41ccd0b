/**
 * The reads of a campaign report's refresh from either population table, on the same SQLite
 * database, one after the other in one process: every contact (`campaign_contacts`) or the kept
 * counts (`contact_value_counts`), which a report on built-in dimensions reads
 * (`campaignPopulationTable`). The data are the bench's (bench/data.ts), uploaded through the
 * app so the uploads keep the counts; the report is the bench's (age band, region, channel
 * over four campaigns). Alternating the two sources run by run lets a shared machine's load
 * fall on both alike. Prints the medians of each read and of their sum.
 *
 *   npx tsx bench/population-read.ts [--contacts 100000] [--runs 7]
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { parseArgs } from 'node:util';
import pino from 'pino';
import { buildApp } from '../src/app.js';
import { loadConfig } from '../src/config.js';
import { openDatabase } from '../src/db/connect.js';
import { migrateToLatest } from '../src/db/migrate.js';
import { ageGridAxis } from '../src/report/snapshot/profiles.js';
import {
  holdoutContacts,
  labelCountBounds,
  shiftsAndCellAggregates,
  sourceQuality,
  valueCountsByAgeBin,
  valueDistribution,
  type AggregationRequest,
  type CampaignPopulationTable,
} from '../src/segments/index.js';
import { writeBenchFiles } from './data.js';
import { median } from './process-readings.js';

const { values: options } = parseArgs({ options: { contacts: { type: 'string', default: '100000' }, runs: { type: 'string', default: '7' } } });
const contacts = Number(options.contacts);
const runs = Math.max(1, Number(options.runs));
const CAMPAIGNS = 4;

const directory = fs.mkdtempSync(path.join(os.tmpdir(), 'segrank-population-read-'));
const settings = { dialect: 'sqlite' as const, file: path.join(directory, 'bench.sqlite') };
const database = await openDatabase(settings);
try {
  await migrateToLatest(database.db, settings);
  const config = { ...loadConfig({}), database: settings, scheduleEnabled: false, authMode: 'open' as const, maxEventLoopDelayMs: 0, maxUploadBytes: 1024 * 1024 * 1024, maxUploadRows: 10_000_000 };
  const app = await buildApp({ config, database, logger: pino({ level: 'silent' }) });
  await app.ready();
  const files = writeBenchFiles(path.resolve('bench/out'), { customers: contacts / 4, campaigns: CAMPAIGNS, contactsPerCampaign: Math.round(contacts / CAMPAIGNS), seed: 11 });
  const post = async (url: string, file: string) => {
    const response = await app.inject({ method: 'POST', url, headers: { 'content-type': 'text/csv' }, payload: fs.readFileSync(file) });
    if (response.statusCode !== 201) throw new Error(`${url}: ${response.statusCode} ${response.body}`);
  };
  await post('/v1/customers', files.customersCsv);
  for (const campaign of files.contactsCsvs) await post(`/v1/campaigns/${campaign.campaignId}/contacts`, campaign.file);
  const keptRows = await database.db.selectFrom('contact_value_counts').select((eb) => eb.fn.countAll<number>().as('rows')).executeTakeFirstOrThrow();
  console.log(`${files.contacts.toLocaleString('en-US')} contacts, ${Number(keptRows.rows).toLocaleString('en-US')} rows of contact_value_counts`);

  const campaignIds = files.contactsCsvs.map((campaign) => campaign.campaignId);
  const readsOf = async (table: CampaignPopulationTable): Promise<Record<string, number>> => {
    const db = database.readDb;
    const request: AggregationRequest = { source: { kind: 'campaigns', campaignIds, table }, dimensions: ['age_band', 'region', 'channel'], ageEdges: [25, 35, 45, 55, 65], valueBasis: 'per_unit' };
    const times: Record<string, number> = {};
    const timed = async <T>(name: string, read: () => Promise<T>): Promise<T> => {
      const started = performance.now();
      const result = await read();
      times[name] = performance.now() - started;
      return result;
    };
    return db.transaction().execute(async (trx) => {
      await timed('holdout contacts', () => holdoutContacts(trx, { kind: 'campaigns', campaignIds, table }));
      await timed('label bounds', () => labelCountBounds(trx, request, 1000));
      const { cells, ageCounts, unconvertedByAge } = await timed('cells', () => shiftsAndCellAggregates(trx, request));
      await timed('value distribution', () => valueDistribution(trx, request, 'all', cells));
      await timed('values by age bin', () => valueCountsByAgeBin(trx, request, ageGridAxis(ageCounts), unconvertedByAge));
      await timed('source quality', () => sourceQuality(trx, request.source));
      return times;
    });
  };
  const tables: CampaignPopulationTable[] = ['campaign_contacts', 'contact_value_counts'];
  const readings = new Map<CampaignPopulationTable, Array<Record<string, number>>>(tables.map((table) => [table, []]));
  for (let run = 0; run < runs + 1; run++) {
    for (const table of run % 2 === 0 ? tables : [...tables].reverse()) {
      const times = await readsOf(table);
      // The first run of each warms the page cache.
      if (run > 0) readings.get(table)?.push(times);
    }
  }
  const steps = Object.keys(readings.get('campaign_contacts')?.[0] ?? {});
  console.log(`medians of ${runs} runs, ms:`);
  console.log(`| read | ${tables.join(' | ')} |`);
  console.log(`| --- | ${tables.map(() => '---:').join(' | ')} |`);
  for (const step of [...steps, 'all reads']) {
    const cell = (table: CampaignPopulationTable) => {
      const values = (readings.get(table) ?? []).map((times) => (step === 'all reads' ? Object.values(times).reduce((sum, value) => sum + value, 0) : (times[step] ?? 0)));
      return median(values).toFixed(1);
    };
    console.log(`| ${step} | ${tables.map(cell).join(' | ')} |`);
  }
  await app.close();
} finally {
  await database.close();
  fs.rmSync(directory, { recursive: true, force: true });
}
