/**
 * Load run (loopback only, bounded): concurrent BI pulls of the segments CSV while uploads
 * keep arriving. Prints requests/s, p50/p99 latency and errors for the pulls, and the uploads
 * completed meanwhile.
 *
 *   npx tsx bench/load.ts [seconds=15] [connections=50]      (DATABASE_URL=postgres://… for PostgreSQL)
 */
import os from 'node:os';
import fs from 'node:fs';
import path from 'node:path';
import autocannon from 'autocannon';
import { DEFAULT_DEMO_OPTIONS, generateDemoData } from '../seed/generate.js';
import { startServiceProcess } from '../test/support/service-process.js';

const seconds = Math.min(120, Math.max(1, Number(process.argv[2] ?? 15)));
const connections = Math.min(200, Math.max(1, Number(process.argv[3] ?? 50)));
const postgresUrl = /^postgres(ql)?:\/\//.test(process.env['DATABASE_URL'] ?? '') ? (process.env['DATABASE_URL'] as string) : null;
const directory = fs.mkdtempSync(path.join(os.tmpdir(), 'segrank-load-'));
const env = postgresUrl ? { DATABASE_URL: postgresUrl, DATABASE_SCHEMA: `load_${process.pid}` } : { DATABASE_URL: path.join(directory, 'load.sqlite') };
const service = await startServiceProcess({ ...env, RATE_LIMIT_PER_KEY: '0', RATE_LIMIT_PER_ADDRESS: '0' });

async function post(url: string, contentType: string, body: string): Promise<Response> {
  return fetch(`${service.url}${url}`, { method: 'POST', headers: { 'content-type': contentType }, body });
}

try {
  const data = generateDemoData({ ...DEFAULT_DEMO_OPTIONS, customers: 20_000 });
  await post('/v1/customers', 'text/csv', data.customersCsv);
  for (const campaign of data.contacts) await post(`/v1/campaigns/${campaign.campaignId}/contacts`, 'text/csv', campaign.csv);
  const report = (await (await post('/v1/reports', 'application/json', JSON.stringify({ name: 'load', source: { campaign_ids: data.contacts.map((c) => c.campaignId) } }))).json()) as { report_id: string };
  const refreshed = await post(`/v1/reports/${report.report_id}/refresh`, 'application/json', '{}');
  if (refreshed.status !== 201) throw new Error(`refresh failed: ${refreshed.status}`);

  // Uploads during the pull: the same campaign file again and again (idempotent, so each
  // upload reads and compares every row, as a re-sent file does).
  let uploads = 0;
  let uploadErrors = 0;
  let pulling = true;
  const uploader = (async () => {
    const campaign = data.contacts[0]!;
    while (pulling) {
      const response = await post(`/v1/campaigns/${campaign.campaignId}/contacts`, 'text/csv', campaign.csv).catch(() => null);
      if (response?.status === 201) uploads += 1;
      else uploadErrors += 1;
      await response?.arrayBuffer();
    }
  })();
  const result = await autocannon({ url: `${service.url}/v1/reports/${report.report_id}/segments?format=csv`, connections, duration: seconds });
  pulling = false;
  await uploader;
  const rows = data.contacts[0]!.csv.split('\n').length - 2;
  console.log(`BI pull of the segments CSV, ${connections} connections for ${seconds} s (${postgresUrl ? 'PostgreSQL' : 'SQLite'}):`);
  console.log(`  ${Math.round(result.requests.average)} requests/s, p50 ${result.latency.p50} ms, p99 ${result.latency.p99} ms, errors ${result.errors + result.timeouts}, non-2xx ${result.non2xx}`);
  console.log(`concurrent uploads of ${rows} contact rows each: ${uploads} completed, ${uploadErrors} failed`);
} finally {
  await service.stop();
  fs.rmSync(directory, { recursive: true, force: true });
}
