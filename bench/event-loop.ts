/**
 * How long a report refresh holds the service's event loop, with snapshots built on the main
 * thread (REFRESH_WORKERS=0) and on a worker thread (REFRESH_WORKERS=1).
 *
 * The service runs in this process (startService, a file SQLite database), so
 * perf_hooks.monitorEventLoopDelay (1 ms resolution, enabled throughout and reset before each
 * refresh: its first sample after enabling is not recorded) samples its own loop. The invented
 * data of bench/data.ts are uploaded once over HTTP; then, for each setting, the service is
 * started on that database, refreshed once to warm up (the worker starts, the segment table is
 * cached), and refreshed `--runs` times while the BI pull (GET of the segment table as CSV) is
 * sent every 5 ms. Each run prints the event-loop delay's max and p99 during the refresh, the
 * slowest BI pull, and the refresh's query and build times from its log line; the medians of
 * the runs follow.
 *
 * /healthz is not the probe: on SQLite it runs through kysely on the read connection, which the
 * refresh's read transaction holds, so it waits for the queries whatever the event loop does.
 * The BI pull finds the latest snapshot with a prepared statement on that connection directly.
 *
 *   npx tsx bench/event-loop.ts                         100,000 contacts, 3 runs
 *   npx tsx bench/event-loop.ts --contacts 1000000
 *   npx tsx bench/event-loop.ts --workers 1 --runs 5    one setting only
 *   npx tsx bench/event-loop.ts --database /tmp/el.sqlite   keeps the database; a later run
 *                                                        on the same file skips the upload
 */
import os from 'node:os';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import path from 'node:path';
import { monitorEventLoopDelay } from 'node:perf_hooks';
import { parseArgs } from 'node:util';
import { loadConfig } from '../src/config.js';
import { startService } from '../src/server.js';
import { postFile } from '../test/support/service-process.js';
import { writeBenchFiles } from './data.js';
import { median } from './process-readings.js';

const { values: options } = parseArgs({
  options: {
    contacts: { type: 'string', default: '100000' },
    runs: { type: 'string', default: '3' },
    workers: { type: 'string', default: '0,1' },
    database: { type: 'string' },
  },
});
const contacts = Number(options.contacts);
const runs = Math.max(1, Number(options.runs));
const settings = options.workers.split(',').map(Number);
const CAMPAIGNS = 4;
const PROBE_EVERY_MS = 5;

interface LogLine {
  msg?: string;
  queryMs?: number;
  computeMs?: number;
  durationMs?: number;
  sql?: string;
}

/** The service's log lines about queries (trace level) and stored snapshots, for the refresh timings. */
function logSink(): { lines: LogLine[]; write(line: string): void } {
  const lines: LogLine[] = [];
  const kept = (line: string) => line.includes('"msg":"query"') || line.includes('"msg":"snapshot stored"');
  return { lines, write: (line: string) => void (kept(line) && lines.push(JSON.parse(line) as LogLine)) };
}

/**
 * The gaps between the ticks of a 1 ms timer: each gap past 1 ms is time the loop was held.
 * A second reading beside monitorEventLoopDelay, which records one sample per timer tick too.
 */
function timerGaps(): { stop(): number[] } {
  const gaps: number[] = [];
  let last = performance.now();
  let timer: NodeJS.Timeout;
  const tick = () => {
    const now = performance.now();
    gaps.push(now - last);
    last = now;
    timer = setTimeout(tick, 1);
  };
  timer = setTimeout(tick, 1);
  return {
    stop() {
      clearTimeout(timer);
      gaps.push(performance.now() - last);
      return gaps;
    },
  };
}

function percentile(values: number[], fraction: number): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.min(sorted.length - 1, Math.ceil(fraction * sorted.length) - 1)] ?? Number.NaN;
}

async function startOn(file: string, workers: number, sink: ReturnType<typeof logSink>) {
  const config = loadConfig({
    DATABASE_URL: file,
    PORT: '0',
    AUTH_MODE: 'open',
    SCHEDULE_ENABLED: 'false',
    // trace: each query's duration is logged (src/db/connect.ts), so the longest one can be named.
    LOG_LEVEL: 'trace',
    RATE_LIMIT_PER_KEY: '0',
    RATE_LIMIT_PER_ADDRESS: '0',
    MAX_EVENT_LOOP_DELAY_MS: '0',
    REFRESH_WORKERS: String(workers),
  });
  const service = await startService(config, { log: sink });
  const url = `http://127.0.0.1:${(service.app.server.address() as { port: number }).port}`;
  return { url, close: () => service.app.close() };
}

async function post(url: string, body: unknown): Promise<Record<string, unknown>> {
  const response = await fetch(url, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(body) });
  const text = await response.text();
  if (!response.ok) throw new Error(`${url}: ${response.status} ${text.slice(0, 500)}`);
  return JSON.parse(text) as Record<string, unknown>;
}

interface RunFigures {
  maxMs: number;
  p99Ms: number;
  gapMaxMs: number;
  gapP99Ms: number;
  longestQueryMs: number;
  longestQuery: string;
  slowestPullMs: number;
  pulls: number;
  queryMs: number;
  buildMs: number;
  refreshMs: number;
  bodyBytes: number;
  /** The loop delay's max over the second before the refresh, with the pulls alone */
  withoutRefreshMaxMs: number;
}

const histogram = monitorEventLoopDelay({ resolution: 1 });
histogram.enable();

async function measuredRefresh(url: string, reportId: string, sink: ReturnType<typeof logSink>): Promise<RunFigures> {
  let probing = true;
  let slowestPullMs = 0;
  let pulls = 0;
  const prober = (async () => {
    while (probing) {
      const sent = performance.now();
      const response = await fetch(`${url}/v1/reports/${reportId}/segments`, { headers: { accept: 'text/csv' } });
      await response.arrayBuffer();
      if (response.status !== 200) throw new Error(`BI pull: ${response.status}`);
      slowestPullMs = Math.max(slowestPullMs, performance.now() - sent);
      pulls += 1;
      await new Promise((resolve) => setTimeout(resolve, PROBE_EVERY_MS));
    }
  })();
  // The latest snapshot's table is rendered before the refresh starts: a pull that must read a
  // snapshot body goes through kysely on the read connection and waits for the refresh's reads.
  await (await fetch(`${url}/v1/reports/${reportId}/segments`, { headers: { accept: 'text/csv' } })).arrayBuffer();
  // A second of the pulls alone first: on a loaded machine the loop is also held while the
  // thread waits for a core, and this is that floor.
  histogram.reset();
  await new Promise((resolve) => setTimeout(resolve, 1000));
  const withoutRefreshMaxMs = histogram.max / 1e6;
  const linesBefore = sink.lines.length;
  const gaps = timerGaps();
  histogram.reset();
  const started = performance.now();
  const response = await fetch(`${url}/v1/reports/${reportId}/refresh`, { method: 'POST' });
  const body = await response.text();
  const refreshMs = performance.now() - started;
  const maxMs = histogram.max / 1e6;
  const p99Ms = histogram.percentile(99) / 1e6;
  const held = gaps.stop().map((gap) => Math.max(0, gap - 1));
  probing = false;
  await prober;
  if (response.status !== 201) throw new Error(`refresh: ${response.status} ${body.slice(0, 500)}`);
  const lines = sink.lines.slice(linesBefore);
  const stored = lines.find((line) => line.msg === 'snapshot stored') ?? {};
  const longest = lines.filter((line) => line.msg === 'query').reduce<LogLine>((slowest, line) => ((line.durationMs ?? 0) > (slowest.durationMs ?? 0) ? line : slowest), {});
  return {
    gapMaxMs: Math.max(...held),
    gapP99Ms: percentile(held, 0.99),
    longestQueryMs: longest.durationMs ?? Number.NaN,
    longestQuery: (longest.sql ?? '').replace(/\s+/g, ' ').slice(0, 90),
    maxMs,
    p99Ms,
    slowestPullMs,
    pulls,
    queryMs: stored.queryMs ?? Number.NaN,
    buildMs: stored.computeMs ?? Number.NaN,
    refreshMs,
    bodyBytes: Buffer.byteLength(body),
    withoutRefreshMaxMs,
  };
}

const ms = (value: number) => `${value.toFixed(1)} ms`;

function describeRun(figures: RunFigures): string {
  return (
    `loop delay max ${ms(figures.maxMs)} (pulls alone, the second before: ${ms(figures.withoutRefreshMaxMs)}), p99 ${ms(figures.p99Ms)}; timer gaps max ${ms(figures.gapMaxMs)}, p99 ${ms(figures.gapP99Ms)}; ` +
    `longest query ${ms(figures.longestQueryMs)} (${figures.longestQuery}…); slowest BI pull ${ms(figures.slowestPullMs)} (${figures.pulls} pulls); ` +
    `refresh ${ms(figures.refreshMs)} (queries ${ms(figures.queryMs)}, build ${ms(figures.buildMs)}), body ${(figures.bodyBytes / 1024).toFixed(0)} KiB`
  );
}

const REPORT_NAME = 'event loop bench';
const directory = options.database === undefined ? mkdtempSync(path.join(os.tmpdir(), 'segrank-event-loop-')) : null;
const file = options.database === undefined ? path.join(directory as string, 'bench.sqlite') : path.resolve(options.database);

/** The bench report of a kept database, if an earlier run made it. */
async function existingReport(): Promise<string | undefined> {
  if (!existsSync(file)) return undefined;
  const service = await startOn(file, 0, logSink());
  try {
    const reports = (await (await fetch(`${service.url}/v1/reports`)).json()) as { reports?: Array<{ report_id: string; name: string }> } | Array<{ report_id: string; name: string }>;
    const list = Array.isArray(reports) ? reports : (reports.reports ?? []);
    return list.find((report) => report.name === REPORT_NAME)?.report_id;
  } finally {
    await service.close();
  }
}

/** Uploads the invented data to a fresh database, saves the bench report and takes its first snapshot; returns the report's id. */
async function uploadAndCreateReport(files: ReturnType<typeof writeBenchFiles>): Promise<string> {
  const loader = await startOn(file, 0, logSink());
  try {
    const upload = await postFile(`${loader.url}/v1/customers`, files.customersCsv);
    if (upload.status !== 201) throw new Error(`customers upload: ${upload.status} ${upload.body.slice(0, 500)}`);
    for (const campaign of files.contactsCsvs) {
      const contactsUpload = await postFile(`${loader.url}/v1/campaigns/${campaign.campaignId}/contacts`, campaign.file);
      if (contactsUpload.status !== 201) throw new Error(`contacts upload: ${contactsUpload.status} ${contactsUpload.body.slice(0, 500)}`);
    }
    const report = await post(`${loader.url}/v1/reports`, {
      name: REPORT_NAME,
      source: { campaign_ids: files.contactsCsvs.map((campaign) => campaign.campaignId) },
      dimensions: ['age_band', 'region', 'channel'],
    });
    const reportId = report['report_id'] as string;
    // The first snapshot, so the BI pull has a table to serve from the start of each run.
    await post(`${loader.url}/v1/reports/${reportId}/refresh`, {});
    return reportId;
  } finally {
    await loader.close();
  }
}

try {
  const customers = Math.round(contacts / 4);
  const files = writeBenchFiles(path.resolve('bench/out'), { customers, campaigns: CAMPAIGNS, contactsPerCampaign: Math.round(contacts / CAMPAIGNS), seed: 11 });
  console.log(`# event loop during a refresh: ${files.contacts.toLocaleString('en-US')} contacts, ${customers.toLocaleString('en-US')} customers, SQLite file, ${runs} runs per setting`);

  let reportId = await existingReport();
  if (reportId === undefined) reportId = await uploadAndCreateReport(files);
  const summary: string[] = [];
  for (const workers of settings) {
    const sink = logSink();
    const service = await startOn(file, workers, sink);
    try {
      console.log(`\n## REFRESH_WORKERS=${workers}`);
      await measuredRefresh(service.url, reportId, sink); // warm-up: the worker starts, code is compiled
      const results: RunFigures[] = [];
      for (let run = 1; run <= runs; run++) {
        const figures = await measuredRefresh(service.url, reportId, sink);
        results.push(figures);
        console.log(`run ${run}: ${describeRun(figures)}`);
      }
      const med = (pick: (figures: RunFigures) => number) => median(results.map(pick));
      const line =
        `REFRESH_WORKERS=${workers}: median loop delay max ${ms(med((f) => f.maxMs))} (pulls alone ${ms(med((f) => f.withoutRefreshMaxMs))}), p99 ${ms(med((f) => f.p99Ms))}; ` +
        `timer gaps max ${ms(med((f) => f.gapMaxMs))}, p99 ${ms(med((f) => f.gapP99Ms))}; longest query ${ms(med((f) => f.longestQueryMs))}; ` +
        `slowest BI pull ${ms(med((f) => f.slowestPullMs))}; refresh ${ms(med((f) => f.refreshMs))} (queries ${ms(med((f) => f.queryMs))}, build ${ms(med((f) => f.buildMs))})`;
      summary.push(line);
    } finally {
      await service.close();
    }
  }
  console.log(`\n## medians of ${runs} runs\n${summary.join('\n')}`);
} finally {
  histogram.disable();
  if (directory !== null) rmSync(directory, { recursive: true, force: true });
}
