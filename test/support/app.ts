/** A whole application on a fresh test database, closed and removed after the test. */
import type { FastifyInstance } from 'fastify';
import pino from 'pino';
import { buildApp } from '../../src/app.js';
import { loadConfig, type Config } from '../../src/config.js';
import type { Dialect } from '../../src/db/connect.js';
import { createTestDatabase, type TestDatabase } from './database.js';

export interface TestApp {
  app: FastifyInstance;
  database: TestDatabase;
  config: Config;
  close(): Promise<void>;
}

/** A fixed clock keeps "today" stable in tests of future dates and ages. */
export const TEST_TODAY = new Date('2026-06-15T12:00:00Z');

export async function createTestApp(dialect: Dialect, overrides: Partial<Config> = {}, now: () => Date = () => TEST_TODAY): Promise<TestApp> {
  const database = await createTestDatabase(dialect);
  const config: Config = { ...loadConfig({}), database: database.settings, scheduleEnabled: false, ...overrides };
  const app = await buildApp({ config, database: database.handle, logger: pino({ level: process.env['TEST_LOG_LEVEL'] ?? 'silent' }), now });
  await app.ready();
  return {
    app,
    database,
    config,
    async close() {
      await app.close();
      await database.destroy();
    },
  };
}
