/**
 * PostgreSQL plans a query by its statistics of each table, which its autovacuum refreshes only
 * after a pause (a minute by default) once a tenth of a table has changed. A report refreshed
 * right after a large upload was then planned for the empty tables of before: on 250,000 bench
 * contacts the refresh's count of contacted customers ran as 62,500 nested index probes, 640 ms,
 * instead of a hash join, 150 ms (bench/pg-refresh-reads.ts, docs/SCALING.md). So an upload
 * that grew a table by a tenth or more (or filled a table never analysed) analyses it before
 * it answers. ANALYZE reads a fixed sample of a table (30,000 rows at the default statistics
 * target), so it costs about the same at any size. SQLite's planner needs no such statistics
 * here (its queries follow the indexes), so nothing is done there.
 */
import { sql, type Kysely } from 'kysely';
import type { Database } from './tables.js';

/** The tables an upload of each kind inserts into, whose statistics the reports' plans read. */
const TABLES_OF_UPLOAD = {
  customers: ['customers'],
  sales: ['sales'],
  contacts: ['campaign_contacts', 'contact_value_counts'],
} as const;

/** The share of a table's rows an upload must have added for its statistics to be refreshed. */
const GROWTH_SHARE = 0.1;

/**
 * After an upload of `kind` that inserted `insertedRows` committed on PostgreSQL: analyses each
 * table it wrote whose estimated size grew by `GROWTH_SHARE` or more (or that was never
 * analysed). `sqlite`: true on SQLite, where nothing is done.
 * @throws whatever the database throws
 */
export async function refreshStatisticsAfterUpload(db: Kysely<Database>, sqlite: boolean, kind: keyof typeof TABLES_OF_UPLOAD, insertedRows: number): Promise<void> {
  if (sqlite || insertedRows === 0) return;
  const tables: readonly string[] = TABLES_OF_UPLOAD[kind];
  const { rows } = await sql<{ table: string; estimated: number }>`
    select relname as table, reltuples as estimated from pg_class
    where relnamespace = current_schema()::regnamespace and relname in (${sql.join(tables)})`.execute(db);
  for (const { table, estimated } of rows) {
    // reltuples is -1 for a table never analysed (or vacuumed), and counts the rows of the last analysis.
    const before = Number(estimated);
    if (before < 0 || insertedRows >= GROWTH_SHARE * Math.max(before, insertedRows)) await sql`analyze ${sql.id(table)}`.execute(db);
  }
}
