/**
 * What the robustness suites compare before and after each request: which tables exist and how
 * many rows each holds. Tables are found by introspection rather than listed, so a table added by
 * a later migration is counted too.
 */
import { DEFAULT_MIGRATION_LOCK_TABLE, DEFAULT_MIGRATION_TABLE, sql } from 'kysely';
import type { TestApp } from './app.js';

export interface DatabaseState {
  /** Table names, sorted. */
  tables: string[];
  /** Rows per table. */
  counts: Record<string, number>;
}

/** Every table of the app's database (its own schema on PostgreSQL) with its row count. */
export async function readDatabaseState(testApp: TestApp): Promise<DatabaseState> {
  const tables = await listTables(testApp);
  return { tables, counts: await countTableRows(testApp, tables) };
}

/** The names of the app's tables, sorted (its own schema on PostgreSQL); the migrator's bookkeeping tables are left out. */
export async function listTables(testApp: TestApp): Promise<string[]> {
  const settings = testApp.database.settings;
  if (settings.dialect === 'sqlite') {
    return (await testApp.database.handle.db.introspection.getTables()).map((table) => table.name).sort();
  }
  // Only this schema's catalog rows: kysely's introspection reads every schema on the server and
  // fails when another suite drops its schema while the query runs.
  const result = await sql<{ name: string }>`
    select c.relname as name
    from pg_catalog.pg_class c join pg_catalog.pg_namespace ns on ns.oid = c.relnamespace
    where ns.nspname = ${settings.schema} and c.relkind in ('r', 'v', 'p')
      and c.relname not in (${DEFAULT_MIGRATION_TABLE}, ${DEFAULT_MIGRATION_LOCK_TABLE})`.execute(testApp.database.handle.db);
  return result.rows.map((row) => row.name).sort();
}

/** Rows per table, read in one statement so that all counts come from the same moment. */
export async function countTableRows(testApp: TestApp, tables: readonly string[]): Promise<Record<string, number>> {
  const columns = tables.map((table) => sql`(select count(*) from ${sql.table(table)}) as ${sql.ref(table)}`);
  const result = await sql<Record<string, number | string | bigint>>`select ${sql.join(columns)}`.execute(testApp.database.handle.db);
  const row = result.rows[0] ?? {};
  return Object.fromEntries(tables.map((table) => [table, Number(row[table])]));
}

/** How many rows each table gained (negative: lost) between two states. */
export function rowDelta(before: DatabaseState, after: DatabaseState): Record<string, number> {
  const delta: Record<string, number> = {};
  for (const table of new Set([...before.tables, ...after.tables])) delta[table] = (after.counts[table] ?? 0) - (before.counts[table] ?? 0);
  return delta;
}
