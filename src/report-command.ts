/**
 * What a `segrank` command that reads or refreshes reports needs: the configured database,
 * migrated, and the report dependencies over it, with a quiet log (warnings and errors only
 * unless LOG_LEVEL asks for more), closed again when the command is done.
 */
import type { Config } from './config.js';
import { openDatabase } from './db/connect.js';
import { migrateToLatest } from './db/migrate.js';
import { createLogger } from './logger.js';
import { createSnapshotBuilder, reportDependencies, type ReportDependencies } from './report/snapshot/index.js';

export async function withReportDependencies<T>(config: Config, run: (deps: ReportDependencies) => Promise<T>): Promise<T> {
  const logger = createLogger(config.logLevel === 'info' ? 'warn' : config.logLevel, { pretty: false });
  const database = await openDatabase(config.database, logger);
  const snapshots = createSnapshotBuilder({ workers: config.refreshWorkers, timeoutMs: config.refreshBuildTimeoutMs, logger });
  try {
    await migrateToLatest(database.db, config.database);
    const deps = reportDependencies(
      database,
      logger,
      () => new Date(),
      { publicationThreshold: config.publicationThreshold, maxLabelsPerDimension: config.maxLabelsPerDimension },
      snapshots,
    );
    return await run(deps);
  } finally {
    await snapshots.close();
    await database.close();
  }
}
