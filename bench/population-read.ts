/**
 * The reads of a campaign report's refresh from either population table, on the same SQLite
 * database, one after the other in one process: every contact (`campaign_contacts`), the kept
 * counts (`contact_value_counts`) grouped by the report's queries, and the kept counts read once
 * and folded in code (`keptCountAggregates`, what a report on built-in dimensions does,
 * `campaignPopulationTable`); the fold's figures are checked against the queries' once. The data are the bench's (bench/data.ts), uploaded through the
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
import { openDatabase } from '../src/db/connect.js';
import { migrateToLatest } from '../src/db/migrate.js';
import { isDeepStrictEqual } from 'node:util';
import { sqliteConnectionOf } from '../src/db/connect.js';
import { ageGridAxis } from '../src/report/snapshot/profiles.js';
import {
  holdoutContacts,
  keptCountAggregates,
  labelCountBounds,
  shiftsAndCellAggregates,
  sourceQuality,
  valueCountsByAgeBin,
  valueDistribution,
  type AggregationRequest,
  type CampaignPopulationTable,
} from '../src/segments/index.js';
import { writeBenchFiles } from './data.js';
import { inProcessApp } from './in-process-app.js';
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
  const app = await inProcessApp(database, settings);
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
  type Reading = 'campaign_contacts' | 'contact_value_counts' | 'contact_value_counts, folded';
  const tableOf = (reading: Reading): CampaignPopulationTable => (reading === 'campaign_contacts' ? 'campaign_contacts' : 'contact_value_counts');
  const requestOf = (reading: Reading): AggregationRequest => ({
    source: { kind: 'campaigns', campaignIds, table: tableOf(reading) },
    dimensions: ['age_band', 'region', 'channel'],
    ageEdges: [25, 35, 45, 55, 65],
    valueBasis: 'per_unit',
  });
  /** What the reads return that the fold must give too: cells, shifts, ages, strata and the value counts in one order. */
  const sortedFigures = (figures: { cells: unknown; shifts: unknown; ageCounts: Array<{ labels: string[]; age: number | null }>; strata: unknown; valueCounts: Array<{ labels: string[]; valueCents: number; count: number }>; byAgeBin: Array<{ ageBin: number | null; valueCents: number; count: number }> }) => {
    const byAgeBin = new Map<string, number>();
    for (const entry of figures.byAgeBin) byAgeBin.set(`${entry.ageBin}|${entry.valueCents}`, (byAgeBin.get(`${entry.ageBin}|${entry.valueCents}`) ?? 0) + entry.count);
    return {
      cells: figures.cells,
      shifts: figures.shifts,
      strata: figures.strata,
      ageCounts: figures.ageCounts.map((entry) => JSON.stringify(entry)).sort(),
      valueCounts: figures.valueCounts.map((entry) => JSON.stringify(entry)).sort(),
      byAgeBin: [...byAgeBin].sort(),
    };
  };
  const readsOf = async (reading: Reading, check: boolean): Promise<Record<string, number>> => {
    const db = database.readDb;
    const table = tableOf(reading);
    const request = requestOf(reading);
    const times: Record<string, number> = {};
    const timed = async <T>(name: string, read: () => Promise<T> | T): Promise<T> => {
      const started = performance.now();
      const result = await read();
      times[name] = performance.now() - started;
      return result;
    };
    return db.transaction().execute(async (trx) => {
      await timed('holdout contacts', () => holdoutContacts(trx, { kind: 'campaigns', campaignIds, table }));
      await timed('label bounds', () => labelCountBounds(trx, request, 1000));
      if (reading === 'contact_value_counts, folded') {
        const kept = await timed('kept rows read and folded', () => keptCountAggregates(trx, sqliteConnectionOf(db), request, false));
        const valueCounts = await timed('value distribution', () => kept.valueCounts('all'));
        const byAgeBin = await timed('values by age bin', () => kept.valueCountsByAgeBin(ageGridAxis(kept.population.ageCounts)));
        if (check) {
          const queried = await shiftsAndCellAggregates(trx, request);
          const queriedValues = await valueDistribution(trx, request, 'all', queried.cells);
          const queriedByAgeBin = await valueCountsByAgeBin(trx, request, ageGridAxis(queried.ageCounts), queried.unconvertedByAge);
          const same = isDeepStrictEqual(
            sortedFigures({ ...kept.population, valueCounts, byAgeBin }),
            sortedFigures({ ...queried, valueCounts: queriedValues, byAgeBin: queriedByAgeBin }),
          );
          console.log(`the fold's figures ${same ? 'equal' : 'DIFFER FROM'} the queries' over contact_value_counts`);
          if (!same) process.exitCode = 1;
        }
      } else {
        const { cells, ageCounts, unconvertedByAge } = await timed('cells', () => shiftsAndCellAggregates(trx, request));
        await timed('value distribution', () => valueDistribution(trx, request, 'all', cells));
        await timed('values by age bin', () => valueCountsByAgeBin(trx, request, ageGridAxis(ageCounts), unconvertedByAge));
      }
      await timed('source quality', () => sourceQuality(trx, request.source, 'sqlite'));
      return times;
    });
  };
  const tables: Reading[] = ['campaign_contacts', 'contact_value_counts', 'contact_value_counts, folded'];
  const readings = new Map<Reading, Array<Record<string, number>>>(tables.map((table) => [table, []]));
  for (let run = 0; run < runs + 1; run++) {
    for (const table of run % 2 === 0 ? tables : [...tables].reverse()) {
      const times = await readsOf(table, run === 0);
      // The first run of each warms the page cache.
      if (run > 0) readings.get(table)?.push(times);
    }
  }
  const steps = [...new Set(tables.flatMap((table) => Object.keys(readings.get(table)?.[0] ?? {})))];
  console.log(`medians of ${runs} runs, ms:`);
  console.log(`| read | ${tables.join(' | ')} |`);
  console.log(`| --- | ${tables.map(() => '---:').join(' | ')} |`);
  for (const step of [...steps, 'all reads']) {
    const cell = (table: Reading) => {
      const runsOfTable = readings.get(table) ?? [];
      if (step !== 'all reads' && runsOfTable.every((times) => times[step] === undefined)) return '–';
      const values = runsOfTable.map((times) => (step === 'all reads' ? Object.values(times).reduce((sum, value) => sum + value, 0) : (times[step] ?? 0)));
      return median(values).toFixed(1);
    };
    console.log(`| ${step} | ${tables.map(cell).join(' | ')} |`);
  }
  await app.close();
} finally {
  await database.close();
  fs.rmSync(directory, { recursive: true, force: true });
}
