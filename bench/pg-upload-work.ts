/**
 * The work of the bench's uploads on PostgreSQL, counted in CPU seconds rather than wall time,
 * which a shared machine disturbs far less: the service's own (this process, which runs the app
 * in-process) and the PostgreSQL server processes serving its connections (read from /proc, so
 * the server must run on this machine). The data are the bench's (bench/data.ts), uploaded into
 * a new schema that is dropped at the end. Run it in two checkouts one after the other (for an
 * earlier commit, unpacked with `git archive`) to compare their work on the same rows.
 *
 *   DATABASE_URL=postgres://… npx tsx bench/pg-upload-work.ts [--contacts 250000]
 */
import fs from 'node:fs';
import path from 'node:path';
import { parseArgs } from 'node:util';
import pg from 'pg';
import { openDatabase } from '../src/db/connect.js';
import { migrateToLatest } from '../src/db/migrate.js';
import { writeBenchFiles } from './data.js';
import { inProcessApp } from './in-process-app.js';

const { values: options } = parseArgs({ options: { contacts: { type: 'string', default: '250000' } } });
const url = process.env['DATABASE_URL'];
if (url === undefined || !/^postgres(ql)?:\/\//.test(url)) throw new Error('DATABASE_URL must name a PostgreSQL server');
const contacts = Number(options.contacts);
const application = `segrank_upload_work_${process.pid}`;
const schema = `bench_upload_work_${process.pid}`;
const connectionString = `${url}${url.includes('?') ? '&' : '?'}application_name=${application}`;
const settings = { dialect: 'postgres' as const, connectionString, schema, poolSize: 4 };
const observer = new pg.Client({ connectionString: url });
await observer.connect();
const ticksPerSecond = 100;

/** CPU ticks so far of each server process serving a connection named `application`, by process id. */
async function serverCpuTicks(): Promise<Map<number, number>> {
  const { rows } = await observer.query<{ pid: number }>('select pid from pg_stat_activity where application_name = $1', [application]);
  const ticks = new Map<number, number>();
  for (const { pid } of rows) {
    const fields = fs.readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1]?.split(' ') ?? [];
    ticks.set(pid, Number(fields[11]) + Number(fields[12]));
  }
  return ticks;
}

/** CPU seconds the server processes alive at the end spent since `before` (a process closed meanwhile is not counted). */
function serverCpuSince(before: Map<number, number>, after: Map<number, number>): number {
  let ticks = 0;
  for (const [pid, now] of after) ticks += now - (before.get(pid) ?? 0);
  return ticks / ticksPerSecond;
}

const database = await openDatabase(settings);
try {
  await migrateToLatest(database.db, settings);
  const app = await inProcessApp(database, settings);
  const files = writeBenchFiles(path.resolve('bench/out'), { customers: contacts / 4, campaigns: 4, contactsPerCampaign: Math.round(contacts / 4), seed: 11 });
  const uploads = [{ route: '/v1/customers', file: files.customersCsv }, ...files.contactsCsvs.map((campaign) => ({ route: `/v1/campaigns/${campaign.campaignId}/contacts`, file: campaign.file }))];
  const totals = { wall: 0, service: 0, server: 0 };
  for (const { route, file } of uploads) {
    const payload = fs.readFileSync(file);
    const serverBefore = await serverCpuTicks();
    const cpuBefore = process.cpuUsage();
    const started = performance.now();
    const response = await app.inject({ method: 'POST', url: route, headers: { 'content-type': 'text/csv' }, payload });
    if (response.statusCode !== 201) throw new Error(`${route}: ${response.statusCode} ${response.body}`);
    const wall = (performance.now() - started) / 1000;
    const cpu = process.cpuUsage(cpuBefore);
    const service = (cpu.user + cpu.system) / 1e6;
    const server = serverCpuSince(serverBefore, await serverCpuTicks());
    totals.wall += wall;
    totals.service += service;
    totals.server += server;
    console.log(`${route}: wall ${wall.toFixed(2)} s, service CPU ${service.toFixed(2)} s, PostgreSQL CPU ${server.toFixed(2)} s`);
  }
  console.log(`all uploads: wall ${totals.wall.toFixed(2)} s, service CPU ${totals.service.toFixed(2)} s, PostgreSQL CPU ${totals.server.toFixed(2)} s`);
  await app.close();
} finally {
  await database.close();
  await observer.query(`drop schema if exists "${schema}" cascade`);
  await observer.end();
}
