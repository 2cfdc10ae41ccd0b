/**
 * The benchmark's floors: what the storage itself costs, with none of the service's work.
 *
 * Bare INSERT: the same contact rows, read from the same files, written into the service's own
 * migrated tables (the same columns, indexes and foreign keys, so the storage work is the
 * same), one transaction per file, with the values a contact copies from its customer looked
 * up in a Map loaded beforehand. No parsing beyond a split, no checks, no look-ups in the
 * database. On SQLite one prepared statement per row; on PostgreSQL one `COPY … FROM STDIN` per
 * file in text format, the way the service writes its rows there (src/db/pg-copy.ts), so the
 * floor is the fastest write either engine offers. (It was one `INSERT … SELECT FROM unnest(…)`
 * per file before the service wrote by COPY.)
 *
 * Bare GROUP BY: the finest cells (age × region × channel) over the stored contacts as they are
 * stored, with count, conversions and revenue, nothing else.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import SqliteDatabase from 'better-sqlite3';
import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import pg from 'pg';
import { from as copyFrom } from 'pg-copy-streams';
import type { BenchFiles } from './data.js';
import { openDatabase } from '../src/db/connect.js';
import { migrateToLatest } from '../src/db/migrate.js';

const CREATED_AT = '2026-01-01T00:00:00.000Z';

const GROUP_BY = `select age_at_contact, region, channel, count(*) as n, sum(converted) as conversions, sum(revenue_cents) as revenue
  from campaign_contacts group by age_at_contact, region, channel`;

/** Whole years from `birthDate` to `onDate` (ISO dates), the birthday arithmetic of the service. */
function yearsBetween(birthDate: string, onDate: string): number {
  return Number(onDate.slice(0, 4)) - Number(birthDate.slice(0, 4)) - (onDate.slice(5) < birthDate.slice(5) ? 1 : 0);
}

/** The data lines of a bench CSV file, split on commas (the bench files hold no quoted fields). */
function dataLines(file: string): string[][] {
  return fs
    .readFileSync(file, 'utf8')
    .split('\n')
    .slice(1)
    .filter((line) => line !== '')
    .map((line) => line.split(','));
}

/** One contact row in the column order of `CONTACT_COLUMNS`. */
function contactRows(campaignId: string, file: string, customers: Map<string, string[]>): unknown[][] {
  return dataLines(file).map(([customerId, contactedAt, converted, revenue]) => {
    const customer = customers.get(customerId as string) as string[];
    const birthDate = customer[1] as string;
    const age = birthDate === '' ? null : yearsBetween(birthDate, contactedAt as string);
    return [campaignId, customerId, contactedAt, Number(converted), Math.round(Number(revenue) * 100), age, customer[2], customer[3], customer[4], 'floor'];
  });
}

const CONTACT_COLUMNS = 'campaign_id, customer_id, contacted_at, converted, revenue_cents, age_at_contact, region, channel, customer_type, last_ingest_id';

/** Seconds to insert every contact file into a fresh migrated SQLite database. */
export async function sqliteBareInsertSeconds(files: BenchFiles): Promise<number> {
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
    for (const fields of dataLines(files.customersCsv)) {
      customers.set(fields[0] as string, fields);
      insertCustomer.run(fields[0], fields[1] || null, fields[2], fields[3], fields[4], CREATED_AT, CREATED_AT);
    }
    for (const campaign of files.contactsCsvs) database.prepare('insert into campaigns (campaign_id, created_at) values (?, ?)').run(campaign.campaignId, CREATED_AT);
  })();
  const insert = database.prepare(`insert into campaign_contacts (${CONTACT_COLUMNS}) values (${CONTACT_COLUMNS.split(', ').map(() => '?').join(', ')})`);
  let elapsed = 0;
  for (const campaign of files.contactsCsvs) {
    const started = performance.now();
    // One transaction per file, as each upload is one.
    database.transaction(() => {
      for (const row of contactRows(campaign.campaignId, campaign.file, customers)) insert.run(...row);
    })();
    elapsed += (performance.now() - started) / 1000;
  }
  database.close();
  fs.rmSync(directory, { recursive: true, force: true });
  return elapsed;
}

/** Seconds of the bare GROUP BY over the SQLite database `sqliteFile`. */
export function sqliteBareGroupBySeconds(sqliteFile: string): number {
  const database = new SqliteDatabase(sqliteFile, { readonly: true });
  const statement = database.prepare(GROUP_BY);
  const started = performance.now();
  statement.all();
  const elapsed = (performance.now() - started) / 1000;
  database.close();
  return elapsed;
}

/** Seconds to insert every contact file into a fresh migrated schema on the PostgreSQL server at `url`. */
export async function postgresBareInsertSeconds(files: BenchFiles, url: string): Promise<number> {
  const schema = `bench_floor_${process.pid}_${Date.now() % 100_000}`;
  const settings = { dialect: 'postgres' as const, connectionString: url, schema, poolSize: 2 };
  const handle = await openDatabase(settings);
  await migrateToLatest(handle.db, settings);
  await handle.close();
  const client = new pg.Client({ connectionString: url, options: `-c search_path=${schema}` });
  await client.connect();
  try {
    const customers = new Map<string, string[]>();
    const customerColumns: unknown[][] = [[], [], [], [], []];
    for (const fields of dataLines(files.customersCsv)) {
      customers.set(fields[0] as string, fields);
      [fields[0], fields[1] || null, fields[2], fields[3], fields[4]].forEach((value, index) => customerColumns[index]?.push(value));
    }
    await client.query(
      `insert into customers (customer_id, birth_date, region, channel, customer_type, created_at, updated_at)
       select *, $6, $6 from unnest($1::text[], $2::text[], $3::text[], $4::text[], $5::text[])`,
      [...customerColumns, CREATED_AT],
    );
    for (const campaign of files.contactsCsvs) await client.query('insert into campaigns (campaign_id, created_at) values ($1, $2)', [campaign.campaignId, CREATED_AT]);
    let elapsed = 0;
    for (const campaign of files.contactsCsvs) {
      const text = contactRows(campaign.campaignId, campaign.file, customers)
        .map((row) => row.map((value) => (value === null ? '\\N' : String(value))).join('\t'))
        .join('\n');
      const started = performance.now();
      await client.query('begin');
      await pipeline(Readable.from([text, '\n']), client.query(copyFrom(`copy campaign_contacts (${CONTACT_COLUMNS}) from stdin`)));
      await client.query('commit');
      elapsed += (performance.now() - started) / 1000;
    }
    return elapsed;
  } finally {
    await client.query(`drop schema if exists "${schema}" cascade`);
    await client.end();
  }
}

/** Seconds of the bare GROUP BY over the schema `schema` on the PostgreSQL server at `url`. */
export async function postgresBareGroupBySeconds(url: string, schema: string): Promise<number> {
  const client = new pg.Client({ connectionString: url, options: `-c search_path=${schema}` });
  await client.connect();
  try {
    const started = performance.now();
    await client.query(GROUP_BY);
    return (performance.now() - started) / 1000;
  } finally {
    await client.end();
  }
}
