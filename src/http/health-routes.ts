import type { FastifyInstance } from 'fastify';
import type { Kysely } from 'kysely';
import { pingDatabase } from '../db/connect.js';
import type { Database } from '../db/tables.js';
import { Health } from './schemas.js';

export function healthRoutes(deps: { db: Kysely<Database> }) {
  return async function plugin(app: FastifyInstance): Promise<void> {
    app.get('/healthz', { schema: { response: { 200: Health, 503: Health } } }, async (request, reply) => {
      try {
        await pingDatabase(deps.db);
        return { status: 'ok', database: 'ok' };
      } catch (error) {
        request.log.error({ err: error }, 'health check: database unreachable');
        return reply.code(503).send({ status: 'unavailable', database: 'unreachable' });
      }
    });
  };
}
