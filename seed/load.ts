/**
 * Loads the demo data through the service's own HTTP routes, so the demo exercises exactly the
 * path real uploads take (parsing, checks, transaction, receipt).
 */
import type { FastifyInstance } from 'fastify';
import type { DemoData } from './generate.js';

export interface LoadedReceipt {
  what: string;
  ingest_id: string;
  rows: number;
  inserted: number;
  updated: number;
  unchanged: number;
  rejected: number;
}

export async function loadDemoData(app: FastifyInstance, data: DemoData, headers: Record<string, string> = {}): Promise<LoadedReceipt[]> {
  const uploads = [
    { what: 'customers', url: '/v1/customers', body: data.customersCsv },
    { what: 'sales', url: '/v1/sales', body: data.salesCsv },
    ...data.contacts.map((campaign) => ({ what: `contacts of ${campaign.campaignId}`, url: `/v1/campaigns/${encodeURIComponent(campaign.campaignId)}/contacts`, body: campaign.csv })),
  ];
  const receipts: LoadedReceipt[] = [];
  for (const upload of uploads) {
    const response = await app.inject({ method: 'POST', url: upload.url, headers: { 'content-type': 'text/csv', ...headers }, payload: upload.body });
    if (response.statusCode >= 300) throw new Error(`loading ${upload.what} failed with ${response.statusCode}: ${response.body}`);
    const receipt = response.json() as Omit<LoadedReceipt, 'what'>;
    receipts.push({ what: upload.what, ingest_id: receipt.ingest_id, rows: receipt.rows, inserted: receipt.inserted, updated: receipt.updated, unchanged: receipt.unchanged, rejected: receipt.rejected });
  }
  return receipts;
}
