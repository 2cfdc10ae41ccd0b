import { Migrator, type Kysely, type MigrationProvider } from 'kysely';
import { migrations } from '../../migrations/index.js';
import type { DatabaseSettings } from '../config.js';
import type { Database } from './tables.js';

const provider: MigrationProvider = { getMigrations: async () => migrations };

class MigrationError extends Error {
  override name = 'MigrationError';
}

function migratorFor(db: Kysely<Database>, settings: DatabaseSettings): Migrator {
  return new Migrator({
    db,
    provider,
    // Qualify the bookkeeping tables so several schemas on one PostgreSQL server stay apart.
    ...(settings.dialect === 'postgres' ? { migrationTableSchema: settings.schema } : {}),
  });
}

type MigrationResults = Awaited<ReturnType<Migrator['migrateToLatest']>>['results'];

function appliedNames(error: unknown, results: MigrationResults): string[] {
  if (error) {
    const failed = results?.find((result) => result.status === 'Error')?.migrationName ?? 'unknown';
    throw new MigrationError(`migration ${failed} failed: ${error instanceof Error ? error.message : String(error)}`);
  }
  return (results ?? []).filter((result) => result.status === 'Success').map((result) => result.migrationName);
}

// invalid_schema_name, undefined_table, undefined_column: what a catalogue read reports when
// another schema's tables vanish under it.
const VANISHED_OBJECT_CODES = new Set(['3F000', '42P01', '42703']);

/**
 * Whether a migration attempt failed only because another schema on the same PostgreSQL server
 * was dropped meanwhile: the migrator looks for its own tables through kysely's introspection,
 * which reads every schema, and an object dropped during that read is reported missing. The
 * attempt is repeated only when no migration had started, so nothing is applied twice. The
 * same holds when another process migrating the same new schema created the migrator's tables
 * at the same moment (two instances starting together); the next attempt waits on its lock.
 */
function failedOnAnotherSchema(error: unknown, results: MigrationResults, settings: DatabaseSettings): boolean {
  if (settings.dialect !== 'postgres' || !(error instanceof Error)) return false;
  const code = (error as Error & { code?: unknown }).code;
  const noMigrationStarted = (results ?? []).every((result) => result.status === 'NotExecuted');
  if (typeof code !== 'string' || !noMigrationStarted) return false;
  return (VANISHED_OBJECT_CODES.has(code) && !error.message.includes(`"${settings.schema}"`)) || CREATED_MEANWHILE_CODES.has(code);
}

// unique_violation, duplicate_table: what CREATE TABLE IF NOT EXISTS of the migrator's own tables
// reports when another process starting on the same new schema creates them at the same moment.
const CREATED_MEANWHILE_CODES = new Set(['23505', '42P07']);

// A busy server (many schemas made and dropped, as by parallel test suites) can fail several reads in a row.
const MIGRATION_ATTEMPTS = 8;
const RETRY_PAUSE_MS = 25;

/** Brings the schema to the newest migration; returns the names applied by this call. */
export async function migrateToLatest(db: Kysely<Database>, settings: DatabaseSettings): Promise<string[]> {
  for (let attempt = 1; ; attempt++) {
    const { error, results } = await migratorFor(db, settings).migrateToLatest();
    if (attempt < MIGRATION_ATTEMPTS && failedOnAnotherSchema(error, results, settings)) {
      await new Promise((resolve) => setTimeout(resolve, RETRY_PAUSE_MS * attempt));
      continue;
    }
    return appliedNames(error, results);
  }
}

/** Brings the schema to the named migration (up or down); for tests of a migration on stored rows. */
export async function migrateTo(db: Kysely<Database>, settings: DatabaseSettings, migrationName: string): Promise<string[]> {
  const { error, results } = await migratorFor(db, settings).migrateTo(migrationName);
  return appliedNames(error, results);
}
