/**
 * The benchmark suite (`npm run bench`). For each size it generates invented data
 * deterministically, runs every step several times against the real service (a child
 * process), prints medians, rows/s and peak memory, and writes bench/RESULTS.md.
 *
 * Steps: 1. upload of the customers CSV and the contacts CSVs over HTTP; 2. a report refresh
 * over the stored rows (all one-way and two-way segments of age band, region and channel);
 * 3. the BI pull of the segments CSV under load (autocannon, loopback, bounded); 4. the floors:
 * a bare better-sqlite3 prepared INSERT loop over the same contacts files, one transaction per
 * file, into the service's own tables, and one bare GROUP BY of the finest cells over the same
 * stored rows, with each step's ratio to its floor.
 *
 *   npm run bench                       both sizes on SQLite
 *   npm run bench -- --sizes 100000     one size
 *   DATABASE_URL=postgres://… npm run bench   the same steps on PostgreSQL (no floors there)
 *
 * Options: --sizes a,b (contact rows; customers are a quarter), --runs N (default 3),
 * --pull-seconds N (default 10), --no-results (do not write RESULTS.md), --steps a,b (any of
 * upload, refresh, pull, floors; default all; the upload always runs, as the others need its
 * rows). Each upload run also prints the CPU seconds the service spent, which a shared machine
 * disturbs less than wall time.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { parseArgs } from 'node:util';
import autocannon from 'autocannon';
import SqliteDatabase from 'better-sqlite3';
import { writeBenchFiles, type BenchFiles } from './data.js';
import { cpuSeconds, median, residentMiB } from './process-readings.js';
import { openDatabase } from '../src/db/connect.js';
import { migrateToLatest } from '../src/db/migrate.js';
import { postFile, startServiceProcess, type RunningService } from '../test/support/service-process.js';

const { values: options } = parseArgs({
  options: {
    sizes: { type: 'string', default: '100000,1000000' },
    runs: { type: 'string', default: '3' },
    'pull-seconds': { type: 'string', default: '10' },
    'no-results': { type: 'boolean', default: false },
    steps: { type: 'string', default: 'upload,refresh,pull,floors' },
  },
});
const STEPS = ['upload', 'refresh', 'pull', 'floors'] as const;
const steps = new Set(options.steps.split(',').map((step) => step.trim()));
for (const step of steps) {
  if (!(STEPS as readonly string[]).includes(step)) throw new Error(`--steps: unknown step "${step}"; expected some of ${STEPS.join(', ')}`);
}
const sizes = options.sizes.split(',').map(Number);
const runs = Math.max(1, Number(options.runs));
const pullSeconds = Math.max(1, Number(options['pull-seconds']));
const postgresUrl = /^postgres(ql)?:\/\//.test(process.env['DATABASE_URL'] ?? '') ? (process.env['DATABASE_URL'] as string) : null;
const dialect = postgresUrl ? 'postgres' : 'sqlite';
const CAMPAIGNS = 4;


const seconds = (value: number) => `${value.toFixed(3)} s`;
const perSecond = (rows: number, time: number) => `${Math.round(rows / time).toLocaleString('en-US')} rows/s`;

interface Workspace {
  env: Record<string, string>;
  sqliteFile: string | null;
  cleanup(): Promise<void>;
}

function newWorkspace(tag: string): Workspace {
  if (postgresUrl) {
    const schema = `bench_${tag}_${process.pid}_${Date.now() % 100000}`;
    return {
      env: { DATABASE_URL: postgresUrl, DATABASE_SCHEMA: schema },
      sqliteFile: null,
      cleanup: () => dropSchema(schema),
    };
  }
  const directory = fs.mkdtempSync(path.join(os.tmpdir(), 'segrank-bench-'));
  return { env: { DATABASE_URL: path.join(directory, 'bench.sqlite') }, sqliteFile: path.join(directory, 'bench.sqlite'), cleanup: async () => fs.rmSync(directory, { recursive: true, force: true }) };
}

async function dropSchema(schema: string): Promise<void> {
  const pg = (await import('pg')).default;
  const client = new pg.Client({ connectionString: postgresUrl as string });
  await client.connect();
  await client.query(`drop schema if exists "${schema}" cascade`);
  await client.end();
}

/** Resets the child's peak-RSS counter (Linux: writing 5 to clear_refs), so a step's own peak can be read. */
function resetPeak(service: RunningService): void {
  try {
    fs.writeFileSync(`/proc/${service.child.pid}/clear_refs`, '5');
  } catch {
    // not permitted: the peak then covers the whole process life, an upper bound
  }
}

async function uploadAll(service: RunningService, files: BenchFiles): Promise<{ customers: number; contacts: number; customersCpu: number; contactsCpu: number }> {
  const cpuAtStart = cpuSeconds(service);
  const customers = await postFile(`${service.url}/v1/customers`, files.customersCsv);
  if (customers.status !== 201) throw new Error(`customers upload: ${customers.status} ${customers.body}`);
  const cpuAfterCustomers = cpuSeconds(service);
  let contacts = 0;
  for (const campaign of files.contactsCsvs) {
    const upload = await postFile(`${service.url}/v1/campaigns/${campaign.campaignId}/contacts`, campaign.file);
    if (upload.status !== 201) throw new Error(`contacts upload: ${upload.status} ${upload.body}`);
    contacts += upload.seconds;
  }
  return { customers: customers.seconds, contacts, customersCpu: cpuAfterCustomers - cpuAtStart, contactsCpu: cpuSeconds(service) - cpuAfterCustomers };
}

async function json(response: Response): Promise<Record<string, unknown>> {
  const body = (await response.json()) as Record<string, unknown>;
  if (!response.ok) throw new Error(`${response.status}: ${JSON.stringify(body)}`);
  return body;
}

/** Whole years from `birthDate` to `onDate` (ISO dates), the birthday arithmetic of the service. */
function yearsBetween(birthDate: string, onDate: string): number {
  return Number(onDate.slice(0, 4)) - Number(birthDate.slice(0, 4)) - (onDate.slice(5) < birthDate.slice(5) ? 1 : 0);
}

/**
 * The floor for step 1: the same contact rows, read from the same files, inserted by one
 * prepared statement in one transaction into the service's own tables (its migrations: the
 * same columns, indexes and foreign keys, so the storage work is the same), with the values a
 * contact copies from its customer looked up in a Map loaded beforehand. No parsing beyond a
 * split, no checks, no lookups in the database: what is left is what any upload must pay.
 */
async function bareInsertSeconds(files: BenchFiles): Promise<number> {
  const directory = fs.mkdtempSync(path.join(os.tmpdir(), 'segrank-floor-'));
  const file = path.join(directory, 'floor.sqlite');
  const handle = await openDatabase({ dialect: 'sqlite', file });
  await migrateToLatest(handle.db, { dialect: 'sqlite', file });
  await handle.close();
  const database = new SqliteDatabase(file);
  database.pragma('journal_mode = WAL');
  database.pragma('synchronous = NORMAL');
  database.pragma('foreign_keys = ON');
  database.pragma(`cache_size = -${32 * 1024}`);
  const customers = new Map<string, string[]>();
  const insertCustomer = database.prepare('insert into customers (customer_id, birth_date, region, channel, customer_type, created_at, updated_at) values (?, ?, ?, ?, ?, ?, ?)');
  database.transaction(() => {
    const lines = fs.readFileSync(files.customersCsv, 'utf8').split('\n');
    for (let index = 1; index < lines.length; index++) {
      if (lines[index] === '') continue;
      const fields = (lines[index] as string).split(',');
      customers.set(fields[0] as string, fields);
      insertCustomer.run(fields[0], fields[1] || null, fields[2], fields[3], fields[4], '2026-01-01T00:00:00.000Z', '2026-01-01T00:00:00.000Z');
    }
    for (const campaign of files.contactsCsvs) database.prepare('insert into campaigns (campaign_id, created_at) values (?, ?)').run(campaign.campaignId, '2026-01-01T00:00:00.000Z');
  })();
  const insert = database.prepare(`insert into campaign_contacts (campaign_id, customer_id, contacted_at, converted, revenue_cents, age_at_contact, region, channel, customer_type, last_ingest_id)
    values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`);
  const started = performance.now();
  for (const campaign of files.contactsCsvs) {
    // One transaction per file, as each upload is one.
    database.transaction(() => {
      const lines = fs.readFileSync(campaign.file, 'utf8').split('\n');
      for (let index = 1; index < lines.length; index++) {
        const line = lines[index] as string;
        if (line === '') continue;
        const [customerId, contactedAt, converted, revenue] = line.split(',') as [string, string, string, string];
        const customer = customers.get(customerId) as string[];
        const birthDate = customer[1] as string;
        const age = birthDate === '' ? null : yearsBetween(birthDate, contactedAt);
        insert.run(campaign.campaignId, customerId, contactedAt, Number(converted), Math.round(Number(revenue) * 100), age, customer[2], customer[3], customer[4], 'floor');
      }
    })();
  }
  const elapsed = (performance.now() - started) / 1000;
  database.close();
  fs.rmSync(directory, { recursive: true, force: true });
  return elapsed;
}

/**
 * The floor for step 2: one bare GROUP BY of the finest cells (age × region × channel) over
 * the stored contacts as they are stored (each carries its customer's region and channel), with
 * count, conversions and revenue, nothing else.
 */
function bareGroupBySeconds(sqliteFile: string): number {
  const database = new SqliteDatabase(sqliteFile, { readonly: true });
  const statement = database.prepare(`select age_at_contact, region, channel, count(*) as n, sum(converted) as conversions, sum(revenue_cents) as revenue
    from campaign_contacts group by age_at_contact, region, channel`);
  const started = performance.now();
  statement.all();
  const elapsed = (performance.now() - started) / 1000;
  database.close();
  return elapsed;
}

async function pullUnderLoad(url: string): Promise<{ requestsPerSecond: number; p50: number; p99: number; errors: number; non2xx: number }> {
  const result = await autocannon({ url, connections: 50, duration: pullSeconds, headers: { accept: 'text/csv' } });
  return {
    requestsPerSecond: result.requests.average,
    p50: result.latency.p50,
    p99: result.latency.p99,
    errors: result.errors + result.timeouts,
    non2xx: result.non2xx,
  };
}

interface SizeResult {
  contacts: number;
  customers: number;
  upload: { seconds: number; customersSeconds: number; contactsSeconds: number; peakMiB: number };
  refresh: { seconds: number; serverMs: number; peakGrowthMiB: number } | null;
  pull: Awaited<ReturnType<typeof pullUnderLoad>> | null;
  floors: { insertSeconds: number; groupBySeconds: number } | null;
}

async function benchSize(contacts: number): Promise<SizeResult> {
  const customers = Math.round(contacts / 4);
  const files = writeBenchFiles(path.resolve('bench/out'), { customers, campaigns: CAMPAIGNS, contactsPerCampaign: Math.round(contacts / CAMPAIGNS), seed: 11 });
  console.log(`\n## ${contacts.toLocaleString('en-US')} contacts, ${customers.toLocaleString('en-US')} customers (${dialect})`);

  const uploadTimes: number[] = [];
  const customerTimes: number[] = [];
  const contactTimes: number[] = [];
  const uploadPeaks: number[] = [];
  let kept: { workspace: Workspace; service: RunningService } | null = null;
  for (let run = 1; run <= runs; run++) {
    const workspace = newWorkspace(String(contacts));
    // The pull measures what the service can serve, so the per-key rate limit (6000 a minute by
    // default, which 50 connections pass within seconds) is off.
    const service = await startServiceProcess({ ...workspace.env, LOG_LEVEL: 'warn', RATE_LIMIT_PER_KEY: '0', RATE_LIMIT_PER_ADDRESS: '0' });
    const started = performance.now();
    const times = await uploadAll(service, files);
    const total = (performance.now() - started) / 1000;
    uploadTimes.push(total);
    customerTimes.push(times.customers);
    contactTimes.push(times.contacts);
    uploadPeaks.push(service.peakRssMiB());
    console.log(
      `upload run ${run}: ${seconds(total)} (customers ${seconds(times.customers)}, contacts ${seconds(times.contacts)}), ` +
        `service CPU ${seconds(times.customersCpu)} + ${seconds(times.contactsCpu)}, peak RSS ${service.peakRssMiB().toFixed(0)} MiB`,
    );
    if (run === runs) kept = { workspace, service };
    else {
      await service.stop();
      await workspace.cleanup();
    }
  }
  const { workspace, service } = kept as { workspace: Workspace; service: RunningService };
  try {
    let refresh: SizeResult['refresh'] = null;
    let pull: SizeResult['pull'] = null;
    if (steps.has('refresh') || steps.has('pull')) {
      const report = await json(
        await fetch(`${service.url}/v1/reports`, {
          method: 'POST',
          headers: { 'content-type': 'application/json' },
          body: JSON.stringify({ name: 'bench', source: { campaign_ids: files.contactsCsvs.map((campaign) => campaign.campaignId) }, dimensions: ['age_band', 'region', 'channel'] }),
        }),
      );
      const reportId = report['report_id'] as string;
      const refreshTimes: number[] = [];
      const serverTimes: number[] = [];
      const growth: number[] = [];
      // The pull needs one snapshot; the refresh step times several.
      const refreshRuns = steps.has('refresh') ? Math.max(runs, 5) : 1;
      for (let run = 1; run <= refreshRuns; run++) {
        const before = residentMiB(service);
        resetPeak(service);
        const started = performance.now();
        const snapshot = await json(await fetch(`${service.url}/v1/reports/${reportId}/refresh`, { method: 'POST' }));
        refreshTimes.push((performance.now() - started) / 1000);
        serverTimes.push(Number(snapshot['duration_ms']));
        growth.push(service.peakRssMiB() - before);
      }
      if (steps.has('refresh')) {
        refresh = { seconds: median(refreshTimes), serverMs: median(serverTimes), peakGrowthMiB: median(growth) };
        console.log(`refresh: median ${seconds(refresh.seconds)} end to end, ${refresh.serverMs.toFixed(0)} ms in the service, peak memory growth ${refresh.peakGrowthMiB.toFixed(0)} MiB`);
      }
      if (steps.has('pull')) {
        pull = await pullUnderLoad(`${service.url}/v1/reports/${reportId}/segments?format=csv`);
        console.log(`BI pull (50 connections, ${pullSeconds} s): ${Math.round(pull.requestsPerSecond)} requests/s, p50 ${pull.p50} ms, p99 ${pull.p99} ms, errors ${pull.errors}, non-2xx ${pull.non2xx}`);
      }
    }

    let floors: SizeResult['floors'] = null;
    if (workspace.sqliteFile && steps.has('floors')) {
      await service.stop();
      const insertTimes: number[] = [];
      const groupTimes: number[] = [];
      for (let run = 1; run <= runs; run++) {
        insertTimes.push(await bareInsertSeconds(files));
        groupTimes.push(bareGroupBySeconds(workspace.sqliteFile));
      }
      floors = { insertSeconds: median(insertTimes), groupBySeconds: median(groupTimes) };
      console.log(`floor, bare INSERT of the contacts: ${seconds(floors.insertSeconds)}; contacts upload is ${(median(contactTimes) / floors.insertSeconds).toFixed(2)}× that`);
      if (refresh) console.log(`floor, bare GROUP BY: ${seconds(floors.groupBySeconds)}; refresh is ${(refresh.seconds / floors.groupBySeconds).toFixed(2)}× that`);
      else console.log(`floor, bare GROUP BY: ${seconds(floors.groupBySeconds)}`);
    }
    return {
      contacts: files.contacts,
      customers,
      upload: { seconds: median(uploadTimes), customersSeconds: median(customerTimes), contactsSeconds: median(contactTimes), peakMiB: median(uploadPeaks) },
      refresh,
      pull,
      floors,
    };
  } finally {
    await service.stop();
    await workspace.cleanup();
  }
}

function machineDescription(): string {
  const cpus = os.cpus();
  return `${cpus.length} × ${cpus[0]?.model ?? 'unknown CPU'}, ${(os.totalmem() / 1024 ** 3).toFixed(0)} GiB, ${os.type()} ${os.release()}, Node ${process.version}`;
}

function resultsMarkdown(results: SizeResult[]): string {
  const lines = [
    `### ${dialect === 'sqlite' ? 'SQLite' : 'PostgreSQL'} — ${new Date().toISOString().slice(0, 10)}`,
    '',
    `Machine: ${machineDescription()}. Medians of ${runs} runs (refresh: ${Math.max(runs, 5)} runs). Command: \`${dialect === 'postgres' ? 'DATABASE_URL=postgres://… ' : ''}npm run bench -- --sizes ${sizes.join(',')} --runs ${runs}${steps.size < STEPS.length ? ` --steps ${[...steps].join(',')}` : ''}\`.`,
    '',
    '| contacts | customers | upload total | contacts upload | rows/s (contacts) | upload peak RSS | refresh | refresh in service | refresh peak growth | pull req/s | pull p50 | pull p99 | pull errors | bare INSERT | upload ÷ floor | bare GROUP BY | refresh ÷ floor |',
    '| ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: |',
  ];
  for (const result of results) {
    const { floors, refresh, pull } = result;
    lines.push(
      [
        result.contacts.toLocaleString('en-US'),
        result.customers.toLocaleString('en-US'),
        seconds(result.upload.seconds),
        seconds(result.upload.contactsSeconds),
        perSecond(result.contacts, result.upload.contactsSeconds),
        `${result.upload.peakMiB.toFixed(0)} MiB`,
        refresh ? seconds(refresh.seconds) : '—',
        refresh ? `${refresh.serverMs.toFixed(0)} ms` : '—',
        refresh ? `${refresh.peakGrowthMiB.toFixed(0)} MiB` : '—',
        pull ? Math.round(pull.requestsPerSecond).toString() : '—',
        pull ? `${pull.p50} ms` : '—',
        pull ? `${pull.p99} ms` : '—',
        pull ? String(pull.errors + pull.non2xx) : '—',
        floors ? seconds(floors.insertSeconds) : '—',
        floors ? `${(result.upload.contactsSeconds / floors.insertSeconds).toFixed(2)}×` : '—',
        floors ? seconds(floors.groupBySeconds) : '—',
        floors && refresh ? `${(refresh.seconds / floors.groupBySeconds).toFixed(2)}×` : '—',
      ].join(' | ').replace(/^/, '| ').replace(/$/, ' |'),
    );
  }
  return lines.join('\n') + '\n';
}

const results: SizeResult[] = [];
for (const size of sizes) results.push(await benchSize(size));
const section = resultsMarkdown(results);
console.log(`\n${section}`);
if (!options['no-results']) {
  const file = path.resolve('bench/RESULTS.md');
  const marker = `<!-- ${dialect} -->`;
  const existing = fs.existsSync(file) ? fs.readFileSync(file, 'utf8') : '# Benchmark results\n\nWritten by `npm run bench`; each section is replaced by the next run on that database.\n\n<!-- sqlite -->\n<!-- /sqlite -->\n\n<!-- postgres -->\n<!-- /postgres -->\n';
  const pattern = new RegExp(`${marker}[\\s\\S]*?<!-- /${dialect} -->`);
  fs.writeFileSync(file, existing.replace(pattern, `${marker}\n${section}<!-- /${dialect} -->`));
  console.log(`figures written to ${path.relative(process.cwd(), file)}`);
}
