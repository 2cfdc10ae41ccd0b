/** A whole application on a fresh test database, closed and removed after the test. */
import type { FastifyInstance } from 'fastify';
import pino from 'pino';
import { buildApp } from '../../src/app.js';
import { loadConfig, type Config } from '../../src/config.js';
import type { Dialect } from '../../src/db/connect.js';
import type { Logger } from '../../src/logger.js';
import { checkResponse } from './contract.js';
import { createTestDatabase, type TestDatabase } from './database.js';

export interface TestApp {
  app: FastifyInstance;
  database: TestDatabase;
  config: Config;
  /** Responses this app sent that do not match openapi.yaml; close() fails when there are any. */
  contractViolations: string[];
  close(): Promise<void>;
}

/** A fixed clock keeps "today" stable in tests of future dates and ages. */
export const TEST_TODAY = new Date('2026-06-15T12:00:00Z');

export async function createTestApp(dialect: Dialect, overrides: Partial<Config> = {}, now: () => Date = () => TEST_TODAY, logger?: Logger): Promise<TestApp> {
  const database = await createTestDatabase(dialect);
  const config: Config = { ...loadConfig({}), database: database.settings, scheduleEnabled: false, authMode: 'open', ...overrides };
  const app = await buildApp({ config, database: database.handle, logger: logger ?? pino({ level: process.env['TEST_LOG_LEVEL'] ?? 'silent' }), now });
  const contractViolations: string[] = [];
  app.addHook('onSend', async (request, reply, payload) => {
    if (typeof payload === 'string' && request.routeOptions.url) {
      const contentType = reply.getHeader('content-type');
      contractViolations.push(...checkResponse(request.method, request.routeOptions.url, reply.statusCode, typeof contentType === 'string' ? contentType : undefined, payload));
    }
    return payload;
  });
  await app.ready();
  return {
    app,
    database,
    config,
    contractViolations,
    async close() {
      await app.close();
      await database.destroy();
      if (contractViolations.length > 0) {
        throw new Error(`responses that break openapi.yaml:\n${contractViolations.join('\n')}`);
      }
    },
  };
}
