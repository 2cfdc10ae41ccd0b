/**
 * Invented test data for report tests: a made-up business with made-up regions and channels,
 * generated from the demo's seeded pseudo-random generator so every run sees the same data, and
 * uploaded through the HTTP API like a client would.
 */
import type { FastifyInstance } from 'fastify';
import { expect } from 'vitest';
import { seededRandom } from '../../seed/generate.js';
import type { Snapshot } from '../../src/report/shapes/index.js';
import { CSV, toCsv, upload } from './upload-client.js';

const REGIONS = ['Northfield', 'Southmere', 'Eastvale', 'Westbrook', 'Lakeshore'] as const;
const CHANNELS = ['web', 'store', 'phone', 'partner'] as const;

export interface GeneratedCustomer {
  customer_id: string;
  birth_date: string;
  region: string;
  channel: string;
  customer_type: 'individual' | 'company';
  loyalty_tier: string;
}

export interface GeneratedContact {
  customer_id: string;
  contacted_at: string;
  converted: 0 | 1;
  revenue: string;
}

export interface DatasetOptions {
  seed: number;
  customers: number;
  /** conversion rate of everyone without a planted effect */
  baseRate: number;
  /** a region whose customers convert at `plantedRate` instead */
  plantedRegion?: string;
  plantedRate?: number;
  /** further regions with their own conversion rates */
  regionRates?: Record<string, number>;
  /** share of customers without a birth date */
  missingBirthDateShare?: number;
  contactedAt?: string;
}

function pick<T>(random: () => number, items: readonly T[]): T {
  return items[Math.floor(random() * items.length)] as T;
}

function pad(value: number): string {
  return String(value).padStart(2, '0');
}

/** Customers aged about 19–79 on 2026-03-01, spread evenly over regions and channels. */
export function generateCustomers(seed: number, count: number, missingBirthDateShare = 0): GeneratedCustomer[] {
  const random = seededRandom(seed);
  const customers: GeneratedCustomer[] = [];
  for (let index = 0; index < count; index += 1) {
    const birthYear = 1947 + Math.floor(random() * 60);
    const birthDate = random() < missingBirthDateShare ? '' : `${birthYear}-${pad(1 + Math.floor(random() * 12))}-${pad(1 + Math.floor(random() * 28))}`;
    customers.push({
      customer_id: `c${String(index).padStart(6, '0')}`,
      birth_date: birthDate,
      region: pick(random, REGIONS),
      channel: pick(random, CHANNELS),
      customer_type: random() < 0.2 ? 'company' : 'individual',
      loyalty_tier: pick(random, ['bronze', 'silver', 'gold']),
    });
  }
  return customers;
}

/** One campaign's outcomes for `customers`: conversions at `baseRate`, or `plantedRate` in the planted region. */
export function generateContacts(customers: readonly GeneratedCustomer[], options: Omit<DatasetOptions, 'customers' | 'missingBirthDateShare'>): GeneratedContact[] {
  const random = seededRandom(options.seed);
  return customers.map((customer) => {
    const rate = options.plantedRegion === customer.region ? (options.plantedRate ?? options.baseRate) : (options.regionRates?.[customer.region] ?? options.baseRate);
    const converted = random() < rate ? 1 : 0;
    const revenue = converted ? (20 + Math.floor(random() * 8000) / 100).toFixed(2) : '0';
    return { customer_id: customer.customer_id, contacted_at: options.contactedAt ?? '2026-03-01', converted, revenue };
  });
}

export function generateDataset(options: DatasetOptions): { customers: GeneratedCustomer[]; contacts: GeneratedContact[] } {
  const customers = generateCustomers(options.seed, options.customers, options.missingBirthDateShare ?? 0);
  return { customers, contacts: generateContacts(customers, { ...options, seed: options.seed + 1_000_003 }) };
}

/** Uploads rows as CSV and expects them stored. */
export async function uploadRows(app: FastifyInstance, url: string, rows: ReadonlyArray<object>, headers: Record<string, string> = {}): Promise<void> {
  const response = await upload(app, url, CSV, toCsv(rows as ReadonlyArray<Record<string, unknown>>), { headers });
  expect(response.statusCode, response.body).toBe(201);
}

export async function createReport(app: FastifyInstance, definition: Record<string, unknown>): Promise<{ report_id: string } & Record<string, unknown>> {
  const response = await app.inject({ method: 'POST', url: '/v1/reports', payload: definition });
  expect(response.statusCode, response.body).toBe(201);
  return response.json();
}

export async function refresh(app: FastifyInstance, reportId: string): Promise<Snapshot> {
  const response = await app.inject({ method: 'POST', url: `/v1/reports/${reportId}/refresh` });
  expect(response.statusCode, response.body).toBe(201);
  return response.json() as Snapshot;
}

/** Uploads a generated dataset (customers, then one campaign's contacts). */
export async function uploadDataset(app: FastifyInstance, dataset: ReturnType<typeof generateDataset>, campaignId: string): Promise<void> {
  await uploadRows(app, '/v1/customers', dataset.customers);
  await uploadRows(app, `/v1/campaigns/${campaignId}/contacts`, dataset.contacts);
}

/**
 * Settings for test apps that upload and refresh thousands of rows: on SQLite these run
 * synchronously and hold the event loop, and on a busy test machine the load shedding (503 when
 * the event loop lags) would refuse the next request. The tests here are about reports, not
 * load shedding, so it is switched off.
 */
export const REPORT_TEST_SETTINGS = { maxEventLoopDelayMs: 0 } as const;
/**
 * For suites that check the arithmetic of every figure on a dozen or a few hundred invented
 * units: the publication threshold at 1 publishes every figure. Withholding itself is checked
 * at the default threshold in test/report/withholding.test.ts and test/http/disclosure.test.ts.
 */
export const ARITHMETIC_TEST_SETTINGS = { ...REPORT_TEST_SETTINGS, publicationThreshold: 1 } as const;
