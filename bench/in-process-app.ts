/**
 * The service's application in the bench's own process, on a database the bench opened: open
 * access, no schedule, no load shedding and upload limits wide enough for a million rows, so a
 * bench script can upload its files through `app.inject` and then time reads on the same data.
 */
import type { FastifyInstance } from 'fastify';
import pino from 'pino';
import { buildApp } from '../src/app.js';
import { loadConfig, type DatabaseSettings } from '../src/config.js';
import type { DatabaseHandle } from '../src/db/connect.js';

/** A ready application over `database` (opened with `settings`), logging nothing. */
export async function inProcessApp(database: DatabaseHandle, settings: DatabaseSettings): Promise<FastifyInstance> {
  const config = { ...loadConfig({}), database: settings, scheduleEnabled: false, authMode: 'open' as const, maxEventLoopDelayMs: 0, maxUploadBytes: 1024 * 1024 * 1024, maxUploadRows: 10_000_000 };
  const app = await buildApp({ config, database, logger: pino({ level: 'silent' }) });
  await app.ready();
  return app;
}
