/**
 * Upload benchmark: customers CSV then contacts CSV over HTTP to a running service (SQLite by
 * default, or DATABASE_URL), end to end. Prints seconds, rows/s and the service's peak memory.
 *
 *   npx tsx bench/ingest.ts [customers] [contacts]    (defaults: 1000000 1000000)
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { writeBenchFiles } from './data.js';
import { postFile, startServiceProcess } from '../test/support/service-process.js';

const customers = Number(process.argv[2] ?? 1_000_000);
const contacts = Number(process.argv[3] ?? 1_000_000);
const files = writeBenchFiles(path.resolve('bench/out'), { customers, campaigns: 1, contactsPerCampaign: contacts, seed: 7 });
const directory = fs.mkdtempSync(path.join(os.tmpdir(), 'segrank-bench-'));
const databaseUrl = process.env['DATABASE_URL'] || path.join(directory, 'bench.sqlite');
const service = await startServiceProcess({ DATABASE_URL: databaseUrl, DATABASE_SCHEMA: `bench_${process.pid}` });
try {
  const customersUpload = await postFile(`${service.url}/v1/customers`, files.customersCsv);
  if (customersUpload.status !== 201) throw new Error(customersUpload.body);
  const campaign = files.contactsCsvs[0]!;
  const contactsUpload = await postFile(`${service.url}/v1/campaigns/${campaign.campaignId}/contacts`, campaign.file);
  if (contactsUpload.status !== 201) throw new Error(contactsUpload.body);
  console.log(`customers: ${customers} rows in ${customersUpload.seconds.toFixed(2)} s (${Math.round(customers / customersUpload.seconds)} rows/s)`);
  console.log(`contacts:  ${campaign.rows} rows in ${contactsUpload.seconds.toFixed(2)} s (${Math.round(campaign.rows / contactsUpload.seconds)} rows/s)`);
  console.log(`service peak RSS: ${service.peakRssMiB().toFixed(0)} MiB`);
} finally {
  await service.stop();
  fs.rmSync(directory, { recursive: true, force: true });
}
