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
import type { Writable } from 'node:stream';
import type { DestinationStream } from 'pino';
import { createLogger } from './logger.js';
import { limitHeapGrowth } from './heap-growth.js';

export interface ServiceOutput {
  /** Where the JSON log lines go; standard output by default. */
  log?: DestinationStream;
  /** Where the first admin key is shown, apart from the logs; standard error by default. */
  notice?: Writable;
}

export async function startService(config: Config, output: ServiceOutput = {}) {
  limitHeapGrowth(config.heapGrowingPercent);
  const logger = createLogger(config.logLevel, output.log === undefined ? {} : { destination: output.log });
  const database = await openDatabase(config.database, logger);
  const applied = await migrateToLatest(database.db, config.database);
  if (applied.length > 0) logger.info({ applied }, 'migrations applied');
  if (config.authMode === 'keys' && (await countActiveKeys(database.db)) === 0) {
    const issued = await createKey(database.db, 'admin', 'first admin key');
    // Shown once, as plain text on standard error: never in the JSON log stream, which is often
    // shipped to a log store where anyone with read access would find it.
    (output.notice ?? process.stderr).write(`\nNo API key existed, so one admin key was created. It is shown only now; keep it safe:\n${issued.key}\n\n`);
    logger.info({ keyId: issued.keyId }, 'first admin key created and shown on standard error');
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
