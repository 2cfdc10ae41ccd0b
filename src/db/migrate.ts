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

function appliedNames(error: unknown, results: Awaited<ReturnType<Migrator['migrateToLatest']>>['results']): string[] {
  if (error) {
    const failed = results?.find((result) => result.status === 'Error')?.migrationName ?? 'unknown';
    throw new MigrationError(`migration ${failed} failed: ${error instanceof Error ? error.message : String(error)}`);
  }
  return (results ?? []).filter((result) => result.status === 'Success').map((result) => result.migrationName);
}

const INVALID_SCHEMA_NAME = '3F000';

/**
 * Whether a migration attempt failed only because another schema on the same PostgreSQL server
 * was dropped meanwhile: the migrator looks for its own tables through kysely's introspection,
 * which reads every schema, and a schema dropped during that read is reported missing. Nothing
 * has been migrated at that point, so the attempt can be repeated.
 */
function failedOnAnotherSchema(error: unknown, settings: DatabaseSettings): boolean {
  if (settings.dialect !== 'postgres' || !(error instanceof Error)) return false;
  const code = (error as Error & { code?: unknown }).code;
  return code === INVALID_SCHEMA_NAME && !error.message.includes(`"${settings.schema}"`);
}

// A busy server (many schemas made and dropped, as by parallel test suites) can fail several reads in a row.
const MIGRATION_ATTEMPTS = 8;
const RETRY_PAUSE_MS = 25;

/** Brings the schema to the newest migration; returns the names applied by this call. */
export async function migrateToLatest(db: Kysely<Database>, settings: DatabaseSettings): Promise<string[]> {
  for (let attempt = 1; ; attempt++) {
    const { error, results } = await migratorFor(db, settings).migrateToLatest();
    if (attempt < MIGRATION_ATTEMPTS && failedOnAnotherSchema(error, settings)) {
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
