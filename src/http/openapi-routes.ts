import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { FastifyPluginAsync } from 'fastify';

export const OPENAPI_PATH = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../openapi.yaml');

export const openapiRoutes: FastifyPluginAsync = async (app) => {
  const document = fs.readFileSync(OPENAPI_PATH, 'utf8');
  app.get('/openapi.yaml', async (_request, reply) => reply.type('application/yaml; charset=utf-8').send(document));
};
