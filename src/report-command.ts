/**
 * What a `segrank` command that works on the stored data needs: the configured database,
 * migrated, with a quiet log (warnings and errors only unless LOG_LEVEL asks for more), closed
 * again when the command is done; and for commands that read or refresh reports, the report
 * dependencies over it, with the snapshot builder's workers closed when the command ends.
 */
import type { Config } from './config.js';
import { openDatabase, type DatabaseHandle } from './db/connect.js';
import { migrateToLatest } from './db/migrate.js';
import { createLogger, type Logger } from './logger.js';
import { createSnapshotBuilder, reportDependencies, type ReportDependencies } from './report/snapshot/index.js';

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
  return withMigratedDatabase(config, async (database, logger) => {
    const snapshots = createSnapshotBuilder({ workers: config.refreshWorkers, timeoutMs: config.refreshBuildTimeoutMs, idleTimeoutMs: config.refreshWorkerIdleMs, logger });
    try {
      return await run(
        reportDependencies(
          database,
          logger,
          () => new Date(),
          { publicationThreshold: config.publicationThreshold, maxLabelsPerDimension: config.maxLabelsPerDimension },
          snapshots,
        ),
      );
    } finally {
      await snapshots.close();
    }
  });
}
