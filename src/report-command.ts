/**
 * What a `segrank` command that works on the stored data needs: the configured database,
 * migrated, with a quiet log (warnings and errors only unless LOG_LEVEL asks for more), closed
 * again when the command is done; and for commands that read or refresh reports, the report
 * dependencies over it.
 */
import type { Config } from './config.js';
import { openDatabase, type DatabaseHandle } from './db/connect.js';
import { migrateToLatest } from './db/migrate.js';
import { createLogger, type Logger } from './logger.js';
import { reportDependencies, type ReportDependencies } from './report/snapshot/index.js';

export async function withMigratedDatabase<T>(config: Config, run: (database: DatabaseHandle, logger: Logger) => Promise<T>): Promise<T> {
  const logger = createLogger(config.logLevel === 'info' ? 'warn' : config.logLevel, { pretty: false });
  const database = await openDatabase(config.database, logger);
  try {
    await migrateToLatest(database.db, config.database);
    return await run(database, logger);
  } finally {
    await database.close();
  }
}

export async function withReportDependencies<T>(config: Config, run: (deps: ReportDependencies) => Promise<T>): Promise<T> {
  return withMigratedDatabase(config, (database, logger) =>
    run(
      reportDependencies(database, logger, () => new Date(), {
        publicationThreshold: config.publicationThreshold,
        maxLabelsPerDimension: config.maxLabelsPerDimension,
      }),
    ),
  );
}
