/**
 * Upload benchmark: customers CSV then the contacts CSV of each campaign over HTTP to a running
 * service (SQLite by default, or DATABASE_URL), end to end, each run on a fresh database.
 * Prints per run and as medians: seconds and rows/s of each upload, the CPU seconds the service
 * spent on it (steadier than wall time on a shared machine), its memory right after start-up
 * and its peak (VmHWM), so that what an upload adds can be told from what start-up costs.
 *
 *   npx tsx bench/ingest.ts [customers] [contacts per campaign] [--campaigns N] [--runs N]
 *   (defaults: 1000000 1000000, one campaign, one run)
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { parseArgs } from 'node:util';
import { writeBenchFiles } from './data.js';
import { cpuSeconds, median, residentMiB } from './process-readings.js';
import { postFile, startServiceProcess, type RunningService } from '../test/support/service-process.js';

const { values: options, positionals } = parseArgs({
  allowPositionals: true,
  options: {
    campaigns: { type: 'string', default: '1' },
    runs: { type: 'string', default: '1' },
  },
});
const customers = Number(positionals[0] ?? 1_000_000);
const contactsPerCampaign = Number(positionals[1] ?? 1_000_000);
const campaigns = Math.max(1, Number(options.campaigns));
const runs = Math.max(1, Number(options.runs));
const files = writeBenchFiles(path.resolve('bench/out'), { customers, campaigns, contactsPerCampaign, seed: 7 });


interface Timed {
  seconds: number;
  cpuSeconds: number;
}

async function timedUpload(service: RunningService, url: string, file: string): Promise<Timed> {
  const cpuBefore = cpuSeconds(service);
  const upload = await postFile(url, file);
  if (upload.status !== 201) throw new Error(`${url}: ${upload.status} ${upload.body}`);
  return { seconds: upload.seconds, cpuSeconds: cpuSeconds(service) - cpuBefore };
}

interface Run {
  customers: Timed;
  contacts: Timed;
  startedMiB: number;
  peakMiB: number;
}

const postgresUrl = /^postgres(ql)?:\/\//.test(process.env['DATABASE_URL'] ?? '') ? (process.env['DATABASE_URL'] as string) : null;

async function dropSchema(schema: string): Promise<void> {
  const pg = (await import('pg')).default;
  const client = new pg.Client({ connectionString: postgresUrl as string });
  await client.connect();
  await client.query(`drop schema if exists "${schema}" cascade`);
  await client.end();
}

async function benchRun(): Promise<Run> {
  const directory = fs.mkdtempSync(path.join(os.tmpdir(), 'segrank-bench-'));
  const schema = `bench_${process.pid}_${Date.now() % 100_000}`;
  const service = await startServiceProcess({ DATABASE_URL: postgresUrl ?? path.join(directory, 'bench.sqlite'), DATABASE_SCHEMA: schema });
  try {
    const startedMiB = residentMiB(service);
    const customerUpload = await timedUpload(service, `${service.url}/v1/customers`, files.customersCsv);
    const contacts: Timed = { seconds: 0, cpuSeconds: 0 };
    for (const campaign of files.contactsCsvs) {
      const upload = await timedUpload(service, `${service.url}/v1/campaigns/${campaign.campaignId}/contacts`, campaign.file);
      contacts.seconds += upload.seconds;
      contacts.cpuSeconds += upload.cpuSeconds;
    }
    return { customers: customerUpload, contacts, startedMiB, peakMiB: service.peakRssMiB() };
  } finally {
    await service.stop();
    fs.rmSync(directory, { recursive: true, force: true });
    if (postgresUrl !== null) await dropSchema(schema);
  }
}

const describe = (label: string, rows: number, timed: Timed) =>
  `${label} ${rows} rows in ${timed.seconds.toFixed(2)} s (${Math.round(rows / timed.seconds)} rows/s), service CPU ${timed.cpuSeconds.toFixed(2)} s`;

const results: Run[] = [];
for (let run = 1; run <= runs; run++) {
  const result = await benchRun();
  results.push(result);
  console.log(`run ${run}: ${describe('customers', files.customers, result.customers)}; ${describe('contacts', files.contacts, result.contacts)}; RSS after start ${result.startedMiB.toFixed(0)} MiB, peak ${result.peakMiB.toFixed(0)} MiB`);
}
const medianOf = (pick: (run: Run) => Timed): Timed => ({ seconds: median(results.map((run) => pick(run).seconds)), cpuSeconds: median(results.map((run) => pick(run).cpuSeconds)) });
console.log(`median of ${runs} run${runs === 1 ? '' : 's'}:`);
console.log(`  ${describe('customers:', files.customers, medianOf((run) => run.customers))}`);
console.log(`  ${describe(`contacts (${files.contactsCsvs.length} campaign${files.contactsCsvs.length === 1 ? '' : 's'}):`, files.contacts, medianOf((run) => run.contacts))}`);
console.log(`  service RSS after start-up ${median(results.map((run) => run.startedMiB)).toFixed(0)} MiB, peak (VmHWM) ${median(results.map((run) => run.peakMiB)).toFixed(0)} MiB`);
