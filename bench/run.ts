/**
 * The benchmark suite (`npm run bench`). For each size it generates invented data
 * deterministically, runs every step several times against the real service (a child
 * process), on SQLite and, when DATABASE_URL names a PostgreSQL server, on PostgreSQL too;
 * prints medians, rows/s and peak memory, PostgreSQL's ratio to SQLite per step, and writes
 * bench/RESULTS.md.
 *
 * Steps: 1. upload of the customers CSV and the contacts CSVs over HTTP; 2. a report refresh
 * over the stored rows (all one-way and two-way segments of age band, region and channel);
 * 3. the BI pull of the segments CSV under load (autocannon, 50 connections, loopback, with a
 * read key; the plain body unless --pull-encoding gzip); 4. the
 * floors (bench/floors.ts): a bare write of the same contacts into the service's own tables
 * (SQLite: a prepared INSERT per row; PostgreSQL: one COPY per file), still called bare INSERT,
 * and one bare GROUP BY of the finest cells over the same stored rows, on each engine, with
 * each step's ratio to its floor; 5. the analyst's script (bench/analyst/segment_table.py,
 * pandas + SciPy + statsmodels) computing the same segment table from the same CSV files,
 * timed whole, against the refresh. Peak memory is the service's resident high-water mark over
 * its whole run (uploads, refreshes and pulls).
 *
 *   npm run bench                                both sizes on SQLite
 *   DATABASE_URL=postgres://… npm run bench      both sizes on SQLite and on PostgreSQL
 *   npm run bench -- --sizes 100000 --engines postgres
 *
 * Options: --sizes a,b (contact rows; customers are a quarter), --runs N (default 3),
 * --pull-seconds N (default 10), --pull-encoding gzip|identity (what the pull's Accept-Encoding
 * asks for; default identity, as the figures before gzip was offered), --engines sqlite,postgres (default: sqlite, and postgres when
 * DATABASE_URL is a postgres:// URL), --python PATH (the interpreter for the analyst's script;
 * default python3, then /usr/bin/python3), --no-results (do not write RESULTS.md), --steps a,b
 * (any of upload, refresh, pull, floors, analyst; default all; the upload always runs, as the
 * others need its rows). Each upload run also prints the CPU seconds the service spent, which a
 * shared machine disturbs less than wall time.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { parseArgs } from 'node:util';
import autocannon from 'autocannon';
import { analystScriptSeconds, findAnalystPython } from './analyst.js';
import { writeBenchFiles, type BenchFiles } from './data.js';
import { postgresBareGroupBySeconds, postgresBareInsertSeconds, sqliteBareGroupBySeconds, sqliteBareInsertSeconds } from './floors.js';
import { cpuSeconds, median, residentMiB } from './process-readings.js';
import { postFile, startServiceProcess, type RunningService } from '../test/support/service-process.js';
import { createKey } from '../src/auth/keys.js';
import { loadConfig } from '../src/config.js';
import { openDatabase } from '../src/db/connect.js';
import { migrateToLatest } from '../src/db/migrate.js';

const { values: options } = parseArgs({
  options: {
    sizes: { type: 'string', default: '100000,1000000' },
    runs: { type: 'string', default: '3' },
    'pull-seconds': { type: 'string', default: '10' },
    'pull-encoding': { type: 'string', default: 'identity' },
    engines: { type: 'string' },
    python: { type: 'string' },
    'no-results': { type: 'boolean', default: false },
    steps: { type: 'string', default: 'upload,refresh,pull,floors,analyst' },
  },
});
const STEPS = ['upload', 'refresh', 'pull', 'floors', 'analyst'] as const;
const steps = new Set(options.steps.split(',').map((step) => step.trim()));
for (const step of steps) {
  if (!(STEPS as readonly string[]).includes(step)) throw new Error(`--steps: unknown step "${step}"; expected some of ${STEPS.join(', ')}`);
}
type Engine = 'sqlite' | 'postgres';
const postgresUrl = /^postgres(ql)?:\/\//.test(process.env['DATABASE_URL'] ?? '') ? (process.env['DATABASE_URL'] as string) : null;
const engines: Engine[] = (options.engines ?? (postgresUrl ? 'sqlite,postgres' : 'sqlite')).split(',').map((engine) => {
  const name = engine.trim();
  if (name !== 'sqlite' && name !== 'postgres') throw new Error(`--engines: unknown engine "${name}"; expected sqlite, postgres`);
  if (name === 'postgres' && postgresUrl === null) throw new Error('--engines postgres needs DATABASE_URL=postgres://…');
  return name;
});
const sizes = options.sizes.split(',').map(Number);
const runs = Math.max(1, Number(options.runs));
const pullSeconds = Math.max(1, Number(options['pull-seconds']));
const pullEncoding = options['pull-encoding'];
if (pullEncoding !== 'gzip' && pullEncoding !== 'identity') throw new Error(`--pull-encoding: expected gzip or identity, got "${pullEncoding}"`);
const CAMPAIGNS = 4;
const ENGINE_NAMES: Record<Engine, string> = { sqlite: 'SQLite', postgres: 'PostgreSQL' };

const seconds = (value: number) => `${value.toFixed(3)} s`;
const perSecond = (rows: number, time: number) => `${Math.round(rows / time).toLocaleString('en-US')} rows/s`;

interface Workspace {
  env: Record<string, string>;
  sqliteFile: string | null;
  postgresSchema: string | null;
  cleanup(): Promise<void>;
}

function newWorkspace(engine: Engine, tag: string): Workspace {
  if (engine === 'postgres') {
    const schema = `bench_${tag}_${process.pid}_${Date.now() % 100000}`;
    return {
      env: { DATABASE_URL: postgresUrl as string, DATABASE_SCHEMA: schema },
      sqliteFile: null,
      postgresSchema: schema,
      cleanup: () => dropSchema(schema),
    };
  }
  const directory = fs.mkdtempSync(path.join(os.tmpdir(), 'segrank-bench-'));
  const file = path.join(directory, 'bench.sqlite');
  return { env: { DATABASE_URL: file }, sqliteFile: file, postgresSchema: null, cleanup: async () => fs.rmSync(directory, { recursive: true, force: true }) };
}

async function dropSchema(schema: string): Promise<void> {
  const pg = (await import('pg')).default;
  const client = new pg.Client({ connectionString: postgresUrl as string });
  await client.connect();
  await client.query(`drop schema if exists "${schema}" cascade`);
  await client.end();
}

/**
 * The service's peak resident memory over its whole run. The refresh step resets the kernel's
 * high-water mark (Linux: writing 5 to clear_refs) to read each refresh's own peak, so the
 * peak before every reset is kept here.
 */
class WholeRunPeak {
  private highest = 0;
  constructor(private readonly service: RunningService) {}
  read(): number {
    this.highest = Math.max(this.highest, this.service.peakRssMiB());
    return this.highest;
  }
  resetForStep(): void {
    this.read();
    try {
      fs.writeFileSync(`/proc/${this.service.child.pid}/clear_refs`, '5');
    } catch {
      // not permitted: the step's peak then covers the whole process life, an upper bound
    }
  }
}

/** The service runs with API keys on, as in production: one admin key for the uploads and refreshes, one read key for the BI pull. */
interface BenchKeys {
  admin: string;
  read: string;
}

/** Issues the bench's keys on the workspace's database before the service starts, as `segrank keys create` would. */
async function issueBenchKeys(workspace: Workspace): Promise<BenchKeys> {
  const config = loadConfig({ ...process.env, ...workspace.env });
  const database = await openDatabase(config.database);
  try {
    await migrateToLatest(database.db, config.database);
    return { admin: (await createKey(database.db, 'admin', 'bench uploads')).key, read: (await createKey(database.db, 'read', 'bench pull')).key };
  } finally {
    await database.close();
  }
}

const bearer = (key: string) => ({ authorization: `Bearer ${key}` });

async function uploadAll(service: RunningService, files: BenchFiles, keys: BenchKeys): Promise<{ customers: number; contacts: number; customersCpu: number; contactsCpu: number }> {
  const cpuAtStart = cpuSeconds(service);
  const customers = await postFile(`${service.url}/v1/customers`, files.customersCsv, 'text/csv', bearer(keys.admin));
  if (customers.status !== 201) throw new Error(`customers upload: ${customers.status} ${customers.body}`);
  const cpuAfterCustomers = cpuSeconds(service);
  let contacts = 0;
  for (const campaign of files.contactsCsvs) {
    const upload = await postFile(`${service.url}/v1/campaigns/${campaign.campaignId}/contacts`, campaign.file, 'text/csv', bearer(keys.admin));
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

/**
 * The pull under load. Besides latency it reports the service's CPU time per request, which
 * other work on a shared machine disturbs far less than latency: the service and autocannon
 * share the machine's cores, so a loaded machine stretches every latency figure.
 */
async function pullUnderLoad(
  service: RunningService,
  url: string,
  readKey: string,
): Promise<{ requestsPerSecond: number; p50: number; p99: number; errors: number; non2xx: number; serviceCpuMsPerRequest: number }> {
  const cpuAtStart = cpuSeconds(service);
  const result = await autocannon({ url, connections: 50, duration: pullSeconds, headers: { accept: 'text/csv', 'accept-encoding': pullEncoding, ...bearer(readKey) } });
  return {
    requestsPerSecond: result.requests.average,
    p50: result.latency.p50,
    p99: result.latency.p99,
    errors: result.errors + result.timeouts,
    non2xx: result.non2xx,
    serviceCpuMsPerRequest: ((cpuSeconds(service) - cpuAtStart) * 1000) / Math.max(1, result.requests.total),
  };
}

interface SizeResult {
  contacts: number;
  customers: number;
  upload: { seconds: number; customersSeconds: number; contactsSeconds: number; peakMiB: number };
  /** The service's peak resident memory over the kept run: its uploads, refreshes and pulls. */
  wholeRunPeakMiB: number;
  refresh: { seconds: number; serverMs: number; peakGrowthMiB: number } | null;
  pull: Awaited<ReturnType<typeof pullUnderLoad>> | null;
  floors: { insertSeconds: number; groupBySeconds: number } | null;
}

type AnalystResult = { seconds: number; segments: number } | { skipped: string };

async function benchSize(engine: Engine, files: BenchFiles): Promise<SizeResult> {
  const contacts = files.contacts;
  const customers = files.customers;
  console.log(`\n## ${contacts.toLocaleString('en-US')} contacts, ${customers.toLocaleString('en-US')} customers (${ENGINE_NAMES[engine]})`);

  const uploadTimes: number[] = [];
  const customerTimes: number[] = [];
  const contactTimes: number[] = [];
  const uploadPeaks: number[] = [];
  let kept: { workspace: Workspace; service: RunningService; keys: BenchKeys } | null = null;
  for (let run = 1; run <= runs; run++) {
    const workspace = newWorkspace(engine, String(contacts));
    const keys = await issueBenchKeys(workspace);
    // The pull measures what the service can serve, so the per-key rate limit (6000 a minute by
    // default, which 50 connections pass within seconds) is off; so is the event-loop check,
    // which on a loaded machine answered a refresh 503 because the refresh before it held the
    // loop past 2 s (SQLite, 1,000,000 contacts, load average 10 on 2 cores).
    const service = await startServiceProcess({ ...workspace.env, AUTH_MODE: 'keys', LOG_LEVEL: 'warn', RATE_LIMIT_PER_KEY: '0', RATE_LIMIT_PER_ADDRESS: '0', MAX_EVENT_LOOP_DELAY_MS: '0' });
    const started = performance.now();
    const times = await uploadAll(service, files, keys);
    const total = (performance.now() - started) / 1000;
    uploadTimes.push(total);
    customerTimes.push(times.customers);
    contactTimes.push(times.contacts);
    uploadPeaks.push(service.peakRssMiB());
    console.log(
      `upload run ${run}: ${seconds(total)} (customers ${seconds(times.customers)}, contacts ${seconds(times.contacts)}), ` +
        `service CPU ${seconds(times.customersCpu)} + ${seconds(times.contactsCpu)}, peak RSS ${service.peakRssMiB().toFixed(0)} MiB`,
    );
    if (run === runs) kept = { workspace, service, keys };
    else {
      await service.stop();
      await workspace.cleanup();
    }
  }
  const { workspace, service, keys } = kept as { workspace: Workspace; service: RunningService; keys: BenchKeys };
  const peak = new WholeRunPeak(service);
  try {
    let refresh: SizeResult['refresh'] = null;
    let pull: SizeResult['pull'] = null;
    if (steps.has('refresh') || steps.has('pull')) {
      const report = await json(
        await fetch(`${service.url}/v1/reports`, {
          method: 'POST',
          headers: { 'content-type': 'application/json', ...bearer(keys.admin) },
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
        peak.resetForStep();
        const started = performance.now();
        const snapshot = await json(await fetch(`${service.url}/v1/reports/${reportId}/refresh`, { method: 'POST', headers: bearer(keys.admin) }));
        refreshTimes.push((performance.now() - started) / 1000);
        serverTimes.push(Number(snapshot['duration_ms']));
        growth.push(service.peakRssMiB() - before);
      }
      if (steps.has('refresh')) {
        refresh = { seconds: median(refreshTimes), serverMs: median(serverTimes), peakGrowthMiB: median(growth) };
        console.log(`refresh: median ${seconds(refresh.seconds)} end to end, ${refresh.serverMs.toFixed(0)} ms in the service, peak memory growth ${refresh.peakGrowthMiB.toFixed(0)} MiB`);
      }
      if (steps.has('pull')) {
        pull = await pullUnderLoad(service, `${service.url}/v1/reports/${reportId}/segments?format=csv`, keys.read);
        console.log(`BI pull (50 connections, ${pullSeconds} s, read key, Accept-Encoding: ${pullEncoding}): ${Math.round(pull.requestsPerSecond)} requests/s, p50 ${pull.p50} ms, p99 ${pull.p99} ms, errors ${pull.errors}, non-2xx ${pull.non2xx}, service CPU ${pull.serviceCpuMsPerRequest.toFixed(3)} ms a request`);
      }
    }
    const wholeRunPeakMiB = Math.max(peak.read(), ...uploadPeaks);
    console.log(`peak resident memory over the whole run: ${wholeRunPeakMiB.toFixed(0)} MiB`);

    let floors: SizeResult['floors'] = null;
    if (steps.has('floors')) {
      await service.stop();
      const insertTimes: number[] = [];
      const groupTimes: number[] = [];
      for (let run = 1; run <= runs; run++) {
        if (engine === 'sqlite') {
          insertTimes.push(await sqliteBareInsertSeconds(files));
          groupTimes.push(sqliteBareGroupBySeconds(workspace.sqliteFile as string));
        } else {
          insertTimes.push(await postgresBareInsertSeconds(files, postgresUrl as string));
          groupTimes.push(await postgresBareGroupBySeconds(postgresUrl as string, workspace.postgresSchema as string));
        }
      }
      floors = { insertSeconds: median(insertTimes), groupBySeconds: median(groupTimes) };
      console.log(`floor, bare INSERT of the contacts (${engine === 'postgres' ? 'COPY per file' : 'prepared INSERT per row'}): ${seconds(floors.insertSeconds)}; contacts upload is ${(median(contactTimes) / floors.insertSeconds).toFixed(2)}× that`);
      if (refresh) console.log(`floor, bare GROUP BY: ${seconds(floors.groupBySeconds)}; refresh is ${(refresh.seconds / floors.groupBySeconds).toFixed(2)}× that`);
      else console.log(`floor, bare GROUP BY: ${seconds(floors.groupBySeconds)}`);
    }
    return {
      contacts,
      customers,
      upload: { seconds: median(uploadTimes), customersSeconds: median(customerTimes), contactsSeconds: median(contactTimes), peakMiB: median(uploadPeaks) },
      wholeRunPeakMiB,
      refresh,
      pull,
      floors,
    };
  } finally {
    await service.stop();
    await workspace.cleanup();
  }
}

/** The analyst's script over the size's files: the median whole run, or why it was skipped. */
function analystRun(files: BenchFiles): AnalystResult {
  const python = findAnalystPython(options.python);
  if (!python.ok) {
    console.log(`\n!!!!! ANALYST COMPARISON SKIPPED: ${python.reason}`);
    return { skipped: python.reason };
  }
  try {
    const timed = Array.from({ length: runs }, () => analystScriptSeconds(python.python, files));
    const result = { seconds: median(timed.map((run) => run.seconds)), segments: timed[0]?.segments ?? 0 };
    console.log(`analyst script (${python.python} bench/analyst/segment_table.py, ${result.segments} segments): median ${seconds(result.seconds)} for the whole run`);
    return result;
  } catch (error) {
    const reason = `the script failed: ${(error as Error).message}`;
    console.log(`\n!!!!! ANALYST COMPARISON SKIPPED: ${reason}`);
    return { skipped: reason };
  }
}

function machineDescription(): string {
  const cpus = os.cpus();
  return `${cpus.length} × ${cpus[0]?.model ?? 'unknown CPU'}, ${(os.totalmem() / 1024 ** 3).toFixed(0)} GiB, ${os.type()} ${os.release()}, Node ${process.version}`;
}

function commandLine(): string {
  const stepsOption = steps.size < STEPS.length ? ` --steps ${[...steps].join(',')}` : '';
  const url = engines.includes('postgres') ? 'DATABASE_URL=postgres://… ' : '';
  return `${url}npm run bench -- --sizes ${sizes.join(',')} --runs ${runs} --engines ${engines.join(',')}${stepsOption}`;
}

function resultsMarkdown(engine: Engine, results: SizeResult[]): string {
  const lines = [
    `### ${ENGINE_NAMES[engine]} — ${new Date().toISOString().slice(0, 10)}`,
    '',
    `Machine: ${machineDescription()}; load average at the end ${os.loadavg().map((load) => load.toFixed(1)).join(', ')}. Medians of ${runs} runs (refresh: ${Math.max(runs, 5)} runs). Command: \`${commandLine()}\`.`,
    '',
    '| contacts | customers | upload total | contacts upload | rows/s (contacts) | upload peak RSS | peak RSS, whole run | refresh | refresh in service | refresh peak growth | pull req/s | pull p50 | pull p99 | pull errors | bare INSERT | upload ÷ floor | bare GROUP BY | refresh ÷ floor |',
    '| ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: |',
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
        `${result.wholeRunPeakMiB.toFixed(0)} MiB`,
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

const ratio = (postgres: number | undefined, sqlite: number | undefined) =>
  postgres === undefined || sqlite === undefined || sqlite === 0 ? '—' : `${(postgres / sqlite).toFixed(2)}×`;

/** PostgreSQL ÷ SQLite per step and size, and the refresh against the analyst's script. */
function comparisonMarkdown(results: Map<Engine, SizeResult[]>, analyst: Map<number, AnalystResult>): string {
  const lines = [`### Comparison — ${new Date().toISOString().slice(0, 10)}`, '', `Command: \`${commandLine()}\`.`, ''];
  const sqlite = results.get('sqlite');
  const postgres = results.get('postgres');
  if (sqlite && postgres) {
    lines.push(
      'PostgreSQL ÷ SQLite (lower is better for PostgreSQL; the pull\'s requests/s as SQLite ÷ PostgreSQL, so above 1 means PostgreSQL serves fewer):',
      '',
      '| contacts | upload total | contacts upload | peak RSS, whole run | refresh | pull p99 | pull req/s | bare INSERT | bare GROUP BY |',
      '| ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: |',
    );
    for (const [index, lite] of sqlite.entries()) {
      const server = postgres[index];
      if (server === undefined) continue;
      lines.push(
        `| ${lite.contacts.toLocaleString('en-US')} | ${ratio(server.upload.seconds, lite.upload.seconds)} | ${ratio(server.upload.contactsSeconds, lite.upload.contactsSeconds)} | ` +
          `${ratio(server.wholeRunPeakMiB, lite.wholeRunPeakMiB)} | ${ratio(server.refresh?.seconds, lite.refresh?.seconds)} | ${ratio(server.pull?.p99, lite.pull?.p99)} | ` +
          `${ratio(lite.pull?.requestsPerSecond, server.pull?.requestsPerSecond)} | ${ratio(server.floors?.insertSeconds, lite.floors?.insertSeconds)} | ${ratio(server.floors?.groupBySeconds, lite.floors?.groupBySeconds)} |`,
      );
    }
    lines.push('');
  }
  if (analyst.size > 0) {
    lines.push(
      'The analyst\'s script (`bench/analyst/segment_table.py`: pandas, SciPy, statsmodels; the same segment table from the same CSV files; timed whole, interpreter start included) against the refresh:',
      '',
      `| contacts | analyst script | ${engines.map((engine) => `refresh, ${ENGINE_NAMES[engine]} | refresh vs analyst script, ${ENGINE_NAMES[engine]}`).join(' | ')} |`,
      `| ---: | ---: | ${engines.map(() => '---: | ---:').join(' | ')} |`,
    );
    for (const [contacts, run] of analyst) {
      const cells = engines.map((engine) => {
        const refresh = results.get(engine)?.find((result) => result.contacts === contacts)?.refresh;
        if (!refresh || 'skipped' in run) return `${refresh ? seconds(refresh.seconds) : '—'} | —`;
        return `${seconds(refresh.seconds)} | ${(run.seconds / refresh.seconds).toFixed(1)}× faster`;
      });
      lines.push(`| ${contacts.toLocaleString('en-US')} | ${'skipped' in run ? `skipped: ${run.skipped}` : seconds(run.seconds)} | ${cells.join(' | ')} |`);
    }
  }
  return lines.join('\n') + '\n';
}

function writeSection(file: string, name: string, section: string): void {
  const marker = `<!-- ${name} -->`;
  let existing = fs.existsSync(file) ? fs.readFileSync(file, 'utf8') : '# Benchmark results\n\nWritten by `npm run bench`; each section is replaced by the next run on that database.\n';
  if (!existing.includes(marker)) existing = existing.replace(/\n*$/, `\n\n${marker}\n<!-- /${name} -->\n`);
  const pattern = new RegExp(`${marker}[\\s\\S]*?<!-- /${name} -->`);
  fs.writeFileSync(file, existing.replace(pattern, () => `${marker}\n${section}<!-- /${name} -->`));
}

const results = new Map<Engine, SizeResult[]>();
const analyst = new Map<number, AnalystResult>();
for (const size of sizes) {
  const customers = Math.round(size / 4);
  const files = writeBenchFiles(path.resolve('bench/out'), { customers, campaigns: CAMPAIGNS, contactsPerCampaign: Math.round(size / CAMPAIGNS), seed: 11 });
  for (const engine of engines) {
    const engineResults = results.get(engine) ?? [];
    engineResults.push(await benchSize(engine, files));
    results.set(engine, engineResults);
  }
  if (steps.has('analyst')) {
    const run = analystRun(files);
    analyst.set(files.contacts, run);
    if (!('skipped' in run)) {
      for (const engine of engines) {
        const refresh = results.get(engine)?.at(-1)?.refresh;
        if (refresh) console.log(`refresh vs analyst script (${ENGINE_NAMES[engine]}): ${(run.seconds / refresh.seconds).toFixed(1)}× faster (${seconds(refresh.seconds)} against ${seconds(run.seconds)})`);
      }
    }
  }
}
const sections = [...results].map(([engine, engineResults]) => [engine, resultsMarkdown(engine, engineResults)] as const);
const comparison = comparisonMarkdown(results, analyst);
for (const [, section] of sections) console.log(`\n${section}`);
console.log(`\n${comparison}`);
if (!options['no-results']) {
  const file = path.resolve('bench/RESULTS.md');
  for (const [engine, section] of sections) writeSection(file, engine, section);
  writeSection(file, 'comparison', comparison);
  console.log(`figures written to ${path.relative(process.cwd(), file)}`);
}
