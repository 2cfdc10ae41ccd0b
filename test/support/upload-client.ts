/**
 * Uploads as a client sends them: an app per test, request bodies in each format (the one CSV
 * builder of the tests), uploads through `inject`, receipts and problems read back, row counts
 * of every table, and a small made-up population (regions and channels are invented).
 */
import type { FastifyInstance, LightMyRequestResponse } from 'fastify';
import type { Readable } from 'node:stream';
import { expect, onTestFinished } from 'vitest';
import type { Config } from '../../src/config.js';
import type { Dialect } from '../../src/db/connect.js';
import type { Database } from '../../src/db/tables.js';
import type { Receipt } from '../../src/ingest/receipt.js';
import type { Logger } from '../../src/logger.js';
import { createTestApp, type TestApp } from './app.js';
import { countTableRows } from './database-state.js';

export const CSV = 'text/csv';
export const JSON_TYPE = 'application/json';
export const NDJSON = 'application/x-ndjson';

/** A fresh app on a fresh database, closed when the current test finishes. */
export async function startApp(dialect: Dialect, overrides: Partial<Config> = {}, now?: () => Date, logger?: Logger): Promise<TestApp> {
  const testApp = await createTestApp(dialect, overrides, now, logger);
  onTestFinished(() => testApp.close());
  return testApp;
}

export interface UploadOptions {
  query?: string;
  headers?: Record<string, string>;
}

/** POSTs `body` to `url` with the given content type through `inject` (no socket). */
export function upload(app: FastifyInstance, url: string, contentType: string, body: string | Buffer | Readable, options: UploadOptions = {}): Promise<LightMyRequestResponse> {
  return app.inject({
    method: 'POST',
    url: options.query === undefined ? url : `${url}?${options.query}`,
    headers: { 'content-type': contentType, ...options.headers },
    payload: body,
  });
}

/** Lines joined with LF and ended with one. */
export function csvText(...lines: string[]): string {
  return `${lines.join('\n')}\n`;
}

/** Rows as CSV: the header from the first row's keys, missing and null values empty, quoted where needed. */
export function toCsv(rows: ReadonlyArray<Record<string, unknown>>): string {
  if (rows.length === 0) return '';
  const columns = Object.keys(rows[0] as object);
  const quote = (text: string) => (/[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text);
  return csvText(columns.join(','), ...rows.map((row) => columns.map((column) => quote(String(row[column] ?? ''))).join(',')));
}

/** One JSON object per line, each line ended with LF. */
export function ndjsonText(rows: object[]): string {
  return rows.map((row) => JSON.stringify(row)).join('\n') + '\n';
}

export const CUSTOMER_HEADER = 'customer_id,birth_date,region,channel,customer_type';

/** Three customers of an invented shop (the same as CUSTOMER_ROWS), born well before any test's event dates. */
export const THREE_CUSTOMERS = csvText(
  CUSTOMER_HEADER,
  'C1,1985-04-12,Northvale,web,individual',
  'C2,1972-11-30,Eastmoor,store,company',
  'C3,2000-02-29,Northvale,referral,individual',
);

/** Uploads customers (by default THREE_CUSTOMERS) and checks they were accepted. */
export async function seedCustomers(app: FastifyInstance, body: string = THREE_CUSTOMERS): Promise<void> {
  const response = await upload(app, '/v1/customers', CSV, body);
  expect(response.statusCode, response.body).toBe(201);
}

/** A receipt as the API sends it: the service's own declaration. */
export type ReceiptBody = Receipt;

/** The receipt of an accepted upload (201, or 200 for a replay). */
export function receiptOf(response: LightMyRequestResponse): ReceiptBody {
  expect([200, 201], response.body).toContain(response.statusCode);
  return response.json<ReceiptBody>();
}

export interface RowErrorBody {
  row: number | null;
  line: number | null;
  column: string | null;
  value: string | null;
  reason: string;
}

export interface ProblemResponseBody {
  type: string;
  title: string;
  status: number;
  detail: string;
  instance?: string;
  errors?: RowErrorBody[];
  [extension: string]: unknown;
}

/** The problem details of an error response, after checking its status and media type. */
export function problemOf(response: LightMyRequestResponse, status: number): ProblemResponseBody {
  expect(response.statusCode, response.body).toBe(status);
  expect(response.headers['content-type']).toMatch(/^application\/problem\+json/);
  const body = response.json<ProblemResponseBody>();
  expect(body.status).toBe(status);
  expect(typeof body.type).toBe('string');
  expect(typeof body.title).toBe('string');
  expect(typeof body.detail).toBe('string');
  return body;
}

/** The one row error of a rejected upload, checked to be the only one. */
export function onlyRowError(response: LightMyRequestResponse): RowErrorBody {
  const problem = problemOf(response, 422);
  expect(problem.type).toBe('/problems/invalid-rows');
  expect(problem.errors, JSON.stringify(problem.errors)).toHaveLength(1);
  return problem.errors?.[0] as RowErrorBody;
}

export const ALL_TABLES = ['customers', 'customer_attributes', 'sales', 'campaigns', 'campaign_contacts', 'ingests', 'rejected_rows'] as const satisfies ReadonlyArray<keyof Database>;

/** The number of rows in every table, to show that an upload wrote nothing. */
export async function countRows(testApp: TestApp): Promise<Record<(typeof ALL_TABLES)[number], number>> {
  return (await countTableRows(testApp, ALL_TABLES)) as Record<(typeof ALL_TABLES)[number], number>;
}

export type UploadFormatName = 'csv' | 'json' | 'ndjson';
export const FORMATS: ReadonlyArray<{ format: UploadFormatName; contentType: string }> = [
  { format: 'csv', contentType: CSV },
  { format: 'json', contentType: JSON_TYPE },
  { format: 'ndjson', contentType: NDJSON },
];

export type RowObject = Record<string, string | number | boolean | null>;

/** The same rows as a CSV (header from the first row's keys), a JSON array or NDJSON body. */
export function encode(format: UploadFormatName, rows: RowObject[]): string {
  if (format === 'json') return JSON.stringify(rows, null, 1);
  if (format === 'ndjson') return ndjsonText(rows);
  return toCsv(rows);
}

export const CUSTOMER_ROWS: RowObject[] = [
  { customer_id: 'C1', birth_date: '1985-04-12', region: 'Northvale', channel: 'web', customer_type: 'individual' },
  { customer_id: 'C2', birth_date: '1972-11-30', region: 'Eastmoor', channel: 'store', customer_type: 'company' },
  { customer_id: 'C3', birth_date: '2000-02-29', region: 'Northvale', channel: 'referral', customer_type: 'individual' },
];
