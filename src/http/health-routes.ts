import type { FastifyPluginAsync } from 'fastify';
import type { Kysely } from 'kysely';
import { checkHealth } from '../db/health.js';
import type { Database } from '../db/tables.js';
import { Health } from './schemas.js';

export const healthRoutes: FastifyPluginAsync<{ db: Kysely<Database> }> = async (app, { db }) => {
  app.get('/healthz', { schema: { response: { 200: Health, 503: Health } } }, async (request, reply) => {
    const health = await checkHealth(db, request.log);
    return reply.code(health.status === 'ok' ? 200 : 503).send(health);
  });
};
