/**
 * What keeping `contact_value_counts` costs an upload, measured in this process (the service's
 * app on a fresh database per run, SQLite by default or DATABASE_URL): the CPU and wall seconds
 * of a contacts upload that inserts every row, of a second upload of the same contacts with
 * every tenth outcome changed (updates: each moves a contact between keys), and of a customers
 * upload moving every tenth customer to another region (their contacts move in SQL); then what
 * `segrank aggregates check` and `rebuild` take on the result. Medians of the runs.
 *
 *   npx tsx bench/contact-counts.ts [contacts] [--runs N]      (defaults: 100000, 3 runs)
 *
 * Run from a checkout without src/aggregates, it measures the same uploads without the counts
 * (the check and rebuild lines are then left out), for a before/after comparison.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { parseArgs } from 'node:util';
import pino from 'pino';
import { buildApp } from '../src/app.js';
import { loadConfig, parseDatabaseUrl, type DatabaseSettings } from '../src/config.js';
import { openDatabase } from '../src/db/connect.js';
import { migrateToLatest } from '../src/db/migrate.js';
import { writeBenchFiles } from './data.js';
import { median } from './process-readings.js';

const { values: options, positionals } = parseArgs({ allowPositionals: true, options: { runs: { type: 'string', default: '3' } } });
const contacts = Number(positionals[0] ?? 100_000);
const runs = Math.max(1, Number(options.runs));
const files = writeBenchFiles(path.resolve('bench/out'), { customers: contacts, campaigns: 1, contactsPerCampaign: contacts, seed: 7 });
const campaign = files.contactsCsvs[0] as { campaignId: string; file: string };
const postgresUrl = /^postgres(ql)?:\/\//.test(process.env['DATABASE_URL'] ?? '') ? (process.env['DATABASE_URL'] as string) : null;

// The same contacts with every tenth outcome flipped, and every tenth customer in another region.
const changedContacts = fs
  .readFileSync(campaign.file, 'utf8')
  .split('\n')
  .map((line, index) => {
    if (index === 0 || line === '' || index % 10 !== 0) return line;
    const [id, date, converted] = line.split(',');
    return converted === '1' ? `${id},${date},0,0` : `${id},${date},1,25.00`;
  })
  .join('\n');
const movedCustomers = fs
  .readFileSync(files.customersCsv, 'utf8')
  .split('\n')
  .filter((line, index) => index === 0 || (line !== '' && index % 10 === 0))
  .map((line, index) => (index === 0 ? line : line.replace(/^([^,]*,[^,]*,)[^,]*/, '$1Elsewhere')))
  .join('\n');

type Step = 'insert contacts' | 'update contacts' | 'move customers' | 'check' | 'rebuild';
const readings = new Map<Step, Array<{ seconds: number; cpuSeconds: number }>>();

async function timed<T>(step: Step, work: () => Promise<T>): Promise<T> {
  const cpu = process.cpuUsage();
  const started = performance.now();
  const result = await work();
  const used = process.cpuUsage(cpu);
  const list = readings.get(step) ?? [];
  list.push({ seconds: (performance.now() - started) / 1000, cpuSeconds: (used.user + used.system) / 1e6 });
  readings.set(step, list);
  return result;
}

async function benchRun(): Promise<void> {
  const directory = fs.mkdtempSync(path.join(os.tmpdir(), 'segrank-bench-'));
  const schema = `bench_counts_${process.pid}_${Date.now() % 100_000}`;
  const settings: DatabaseSettings = postgresUrl === null ? { dialect: 'sqlite', file: path.join(directory, 'bench.sqlite') } : parseDatabaseUrl(postgresUrl, schema);
  const database = await openDatabase(settings);
  await migrateToLatest(database.db, settings);
  const config = { ...loadConfig({}), database: settings, scheduleEnabled: false, authMode: 'open' as const, maxEventLoopDelayMs: 0 };
  const app = await buildApp({ config, database, logger: pino({ level: 'silent' }), now: () => new Date('2026-12-01T00:00:00Z') });
  await app.ready();
  const post = async (url: string, body: string) => {
    const response = await app.inject({ method: 'POST', url, headers: { 'content-type': 'text/csv' }, payload: body });
    if (response.statusCode !== 201) throw new Error(`${url}: ${response.statusCode} ${response.body.slice(0, 300)}`);
  };
  try {
    await post('/v1/customers', fs.readFileSync(files.customersCsv, 'utf8'));
    const contactsUrl = `/v1/campaigns/${campaign.campaignId}/contacts`;
    await timed('insert contacts', () => post(contactsUrl, fs.readFileSync(campaign.file, 'utf8')));
    await timed('update contacts', () => post(contactsUrl, changedContacts));
    await timed('move customers', () => post('/v1/customers', movedCustomers));
    const aggregates = await import('../src/aggregates/check.js').catch(() => null);
    if (aggregates !== null) {
      const check = await timed('check', () => aggregates.checkCells(database.db));
      if (check.differenceCount !== 0) throw new Error(`the counts differ from the contacts in ${check.differenceCount} cells`);
      await timed('rebuild', () => aggregates.rebuildCells(database.db));
    }
  } finally {
    await app.close();
    if (postgresUrl !== null) {
      const { sql } = await import('kysely');
      await sql`drop schema if exists ${sql.id(schema)} cascade`.execute(database.db);
    }
    await database.close();
    fs.rmSync(directory, { recursive: true, force: true });
  }
}

for (let run = 1; run <= runs; run++) await benchRun();
console.log(`${postgresUrl === null ? 'SQLite' : 'PostgreSQL'}, ${contacts} contacts, median of ${runs} run${runs === 1 ? '' : 's'}:`);
for (const [step, list] of readings) {
  console.log(`  ${step.padEnd(16)} ${median(list.map((reading) => reading.seconds)).toFixed(2)} s wall, ${median(list.map((reading) => reading.cpuSeconds)).toFixed(2)} s CPU`);
}
