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

/** Brings the schema to the newest migration; returns the names applied by this call. */
export async function migrateToLatest(db: Kysely<Database>, settings: DatabaseSettings): Promise<string[]> {
  const { error, results } = await migratorFor(db, settings).migrateToLatest();
  return appliedNames(error, results);
}

/** Brings the schema to the named migration (up or down); for tests of a migration on stored rows. */
export async function migrateTo(db: Kysely<Database>, settings: DatabaseSettings, migrationName: string): Promise<string[]> {
  const { error, results } = await migratorFor(db, settings).migrateTo(migrationName);
  return appliedNames(error, results);
}
