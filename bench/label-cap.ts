/**
 * A dimension of 10,000 distinct labels (an identifier uploaded as an attribute), refreshed
 * without the label cap (MAX_LABELS_PER_DIMENSION at its maximum, every segment built) and with
 * it (the default 100: the refresh is refused with 422). Prints, as medians over the runs, the
 * refresh's time and answer, and the latency of /healthz polled every 50 ms during it.
 *
 *   npx tsx bench/label-cap.ts [runs=3] [customers=10000] [capped]      (DATABASE_URL=postgres://… for PostgreSQL)
 *
 * `capped` measures only the refused refresh (the uncapped one needs about 1.6 GB of memory).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { startServiceProcess, type RunningService } from '../test/support/service-process.js';

const runs = Math.min(20, Math.max(1, Number(process.argv[2] ?? 3)));
const customers = Math.min(100_000, Math.max(200, Number(process.argv[3] ?? 10_000)));
const cappedOnly = process.argv[4] === 'capped';
const postgresUrl = /^postgres(ql)?:\/\//.test(process.env['DATABASE_URL'] ?? '') ? (process.env['DATABASE_URL'] as string) : null;
const directory = fs.mkdtempSync(path.join(os.tmpdir(), 'segrank-label-cap-'));
const databaseEnv = postgresUrl ? { DATABASE_URL: postgresUrl, DATABASE_SCHEMA: `label_cap_${process.pid}` } : { DATABASE_URL: path.join(directory, 'label-cap.sqlite') };
const common = { ...databaseEnv, RATE_LIMIT_PER_MINUTE: '0', MAX_EVENT_LOOP_DELAY_MS: '0' };

function median(values: readonly number[]): number {
  const sorted = [...values].sort((left, right) => left - right);
  const middle = Math.floor(sorted.length / 2);
  return sorted.length % 2 === 1 ? (sorted[middle] as number) : ((sorted[middle - 1] as number) + (sorted[middle] as number)) / 2;
}

async function post(service: RunningService, url: string, contentType: string, body: string): Promise<Response> {
  return fetch(`${service.url}${url}`, { method: 'POST', headers: { 'content-type': contentType }, body });
}

// Invented customers: two regions, two channels, and a member code of their own each.
function uploads(): { customersCsv: string; contactsCsv: string } {
  const customerLines = ['customer_id,birth_date,region,channel,customer_type,member_code'];
  const contactLines = ['customer_id,contacted_at,converted,revenue'];
  for (let index = 1; index <= customers; index++) {
    customerLines.push(`B${index},19${50 + (index % 45)}-0${(index % 9) + 1}-1${index % 10},${index % 2 === 0 ? 'Saltmere' : 'Fennwick'},${index % 3 === 0 ? 'web shop' : 'catalogue mail'},individual,MC-${index}`);
    const converted = index % 7 === 0;
    contactLines.push(`B${index},2026-03-02,${converted ? 1 : 0},${converted ? `${10 + (index % 50)}.00` : '0'}`);
  }
  return { customersCsv: `${customerLines.join('\n')}\n`, contactsCsv: `${contactLines.join('\n')}\n` };
}

/** One refresh with /healthz polled beside it: the refresh's time and status, and every health latency. */
async function refreshWithHealth(service: RunningService, reportId: string): Promise<{ refreshMs: number; status: number; bytes: number; health: number[] }> {
  const health: number[] = [];
  let running = true;
  const poller = (async () => {
    while (running) {
      const started = performance.now();
      const response = await fetch(`${service.url}/healthz`);
      await response.arrayBuffer();
      health.push(performance.now() - started);
      await new Promise((resolve) => setTimeout(resolve, 50));
    }
  })();
  const started = performance.now();
  const response = await post(service, `/v1/reports/${reportId}/refresh`, 'application/json', '{}');
  const bytes = (await response.arrayBuffer()).byteLength;
  const refreshMs = performance.now() - started;
  running = false;
  await poller;
  return { refreshMs, status: response.status, bytes, health };
}

async function measure(label: string, maxLabels: string, reportId: string): Promise<void> {
  const service = await startServiceProcess({ ...common, MAX_LABELS_PER_DIMENSION: maxLabels });
  try {
    const results = [];
    for (let run = 0; run < runs; run++) results.push(await refreshWithHealth(service, reportId));
    const health = results.flatMap((result) => result.health);
    console.log(
      `${label}: refresh ${Math.round(median(results.map((result) => result.refreshMs)))} ms (median of ${runs}), answer ${results.map((result) => result.status).join('/')}, ` +
        `${Math.round(median(results.map((result) => result.bytes)) / 1024)} KiB; /healthz during it: median ${median(health).toFixed(1)} ms, ` +
        `slowest ${Math.max(...health).toFixed(0)} ms over ${health.length} polls; peak resident memory of the service ${Math.round(service.peakRssMiB())} MiB`,
    );
  } finally {
    await service.stop();
  }
}

try {
  const data = uploads();
  let reportId: string;
  // The report is defined while the cap is off, as one defined before the cap existed would be.
  const setup = await startServiceProcess({ ...common, MAX_LABELS_PER_DIMENSION: '100000' });
  try {
    if ((await post(setup, '/v1/customers', 'text/csv', data.customersCsv)).status !== 201) throw new Error('customer upload failed');
    if ((await post(setup, '/v1/campaigns/codes/contacts', 'text/csv', data.contactsCsv)).status !== 201) throw new Error('contact upload failed');
    const created = await post(setup, '/v1/reports', 'application/json', JSON.stringify({ name: 'codes', source: { campaign_ids: ['codes'] }, dimensions: ['region', 'channel', 'member_code'] }));
    if (created.status !== 201) throw new Error(`definition failed: ${created.status}`);
    reportId = ((await created.json()) as { report_id: string }).report_id;
  } finally {
    await setup.stop();
  }
  console.log(`${customers} contacted customers, dimensions region, channel and member_code (${customers} labels), every cross (${postgresUrl ? 'PostgreSQL' : 'SQLite'}):`);
  if (!cappedOnly) await measure('  without the cap (MAX_LABELS_PER_DIMENSION=100000)', '100000', reportId);
  await measure('  with the cap (MAX_LABELS_PER_DIMENSION=100, default)', '100', reportId);
} finally {
  fs.rmSync(directory, { recursive: true, force: true });
}
