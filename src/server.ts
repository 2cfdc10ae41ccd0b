/**
 * Runs the service: database → migrations → HTTP listener → schedule.
 * On SIGINT/SIGTERM it stops taking requests, lets in-flight ones finish (up to the grace
 * period) and closes the database.
 */
import { buildApp } from './app.js';
import { countActiveKeys, createKey } from './auth/keys.js';
import type { Config } from './config.js';
import { openDatabase } from './db/connect.js';
import { migrateToLatest } from './db/migrate.js';
import { createLogger } from './logger.js';

export async function startService(config: Config) {
  const logger = createLogger(config.logLevel);
  const database = await openDatabase(config.database, logger);
  const applied = await migrateToLatest(database.db, config.database);
  if (applied.length > 0) logger.info({ applied }, 'migrations applied');
  if (config.authMode === 'keys' && (await countActiveKeys(database.db)) === 0) {
    const issued = await createKey(database.db, 'admin', 'first admin key');
    // Shown once, on the terminal only (not in the JSON log), so the operator can create the others.
    process.stdout.write(`\nNo API key existed, so one admin key was created. It is shown only now; keep it safe:\n${issued.key}\n\n`);
  }
  const app = await buildApp({ config, database, logger });
  app.addHook('onClose', async () => {
    await database.close();
  });
  await app.listen({ host: config.host, port: config.port });
  logger.info({ dialect: database.dialect, url: `http://${config.host}:${(app.server.address() as { port: number }).port}` }, 'segrank is listening');

  let closing = false;
  const shutdown = async (signal: string) => {
    if (closing) return;
    closing = true;
    logger.info({ signal }, 'shutting down: finishing in-flight requests');
    const forced = setTimeout(() => {
      logger.error('in-flight requests did not finish within the grace period; exiting');
      process.exit(1);
    }, config.shutdownGraceMs);
    forced.unref();
    await app.close();
    logger.info('stopped');
  };
  process.once('SIGINT', () => void shutdown('SIGINT'));
  process.once('SIGTERM', () => void shutdown('SIGTERM'));
  return { app, database, logger };
}
