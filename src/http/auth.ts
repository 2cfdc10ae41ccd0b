/**
 * Who may call what. Every route's accepted roles are listed here, in one table; a route
 * missing from the table needs an admin key (fail closed), and a test checks that every
 * registered route is listed. Admin keys are accepted everywhere.
 */
import type { FastifyInstance } from 'fastify';
import type { Kysely } from 'kysely';
import { verifyKey, type Role } from '../auth/keys.js';
import type { Database } from '../db/tables.js';
import { sendProblem } from './errors.js';
import { Problem } from './problems.js';

export type Access = 'public' | readonly Role[];

export const ROUTE_ACCESS: Record<string, Access> = {
  'GET /healthz': 'public',
  'GET /openapi.yaml': 'public',
  'POST /v1/customers': ['ingest'],
  'POST /v1/sales': ['ingest'],
  'POST /v1/campaigns/:campaign_id/contacts': ['ingest'],
  'GET /v1/ingests/:ingest_id': ['ingest', 'read'],
  'GET /v1/ingests/:ingest_id/rejected': ['ingest', 'read'],
  'DELETE /v1/customers/:customer_id': ['admin'],
  'POST /v1/reports': ['admin'],
  'GET /v1/reports': ['read'],
  'GET /v1/reports/:report_id': ['read'],
  'PUT /v1/reports/:report_id': ['admin'],
  'DELETE /v1/reports/:report_id': ['admin'],
  'GET /v1/campaigns': ['ingest', 'read'],
  'GET /v1/ingests': ['ingest', 'read'],
  'POST /v1/reports/:report_id/refresh': ['admin'],
  'GET /v1/reports/:report_id/snapshots': ['read'],
  'GET /v1/reports/:report_id/snapshots/:snapshot_id': ['read'],
  'GET /v1/reports/:report_id/segments': ['read'],
  'GET /reports/:report_id': ['read'],
};

function accessFor(method: string, url: string): Access {
  return ROUTE_ACCESS[`${method} ${url}`] ?? ['admin'];
}

declare module 'fastify' {
  interface FastifyRequest {
    /** The verified key of this request; null on public routes and in open mode. */
    apiKey: { keyId: string; role: Role } | null;
  }
}

/** The key from `Bearer <key>`, or from Basic credentials whose password is the key (any user name). */
export function presentedKey(header: string | undefined): string | null {
  if (header === undefined) return null;
  const [scheme, ...rest] = header.trim().split(/\s+/);
  const credentials = rest.join(' ');
  if (scheme?.toLowerCase() === 'bearer') return credentials || null;
  if (scheme?.toLowerCase() === 'basic') {
    const decoded = Buffer.from(credentials, 'base64').toString('utf8');
    const separator = decoded.indexOf(':');
    return separator === -1 ? null : decoded.slice(separator + 1) || null;
  }
  return null;
}

export function registerAuth(app: FastifyInstance, options: { db: Kysely<Database>; mode: 'keys' | 'open' }): void {
  app.decorateRequest('apiKey', null);
  if (options.mode === 'open') return;
  app.addHook('onRequest', async (request, reply) => {
    const routeUrl = request.routeOptions.url;
    if (routeUrl === undefined) return; // no such route: the 404 handler answers
    const access = accessFor(request.method === 'HEAD' ? 'GET' : request.method, routeUrl);
    if (access === 'public') return;
    const presented = presentedKey(request.headers.authorization);
    // Browsers cannot send a bearer token when following a link; for the web page they are
    // asked for Basic credentials instead, with the key as the password.
    const fromBrowser = routeUrl.startsWith('/reports/') || (request.method === 'GET' && /text\/html/.test(request.headers.accept ?? ''));
    const challenge = fromBrowser ? 'Basic realm="segrank", charset="UTF-8"' : 'Bearer';
    if (!presented) {
      return sendProblem(reply.header('www-authenticate', challenge), request, new Problem('unauthorized', 'send an API key as "Authorization: Bearer <key>"'));
    }
    const verified = await verifyKey(options.db, presented);
    if (!verified) {
      return sendProblem(
        reply.header('www-authenticate', challenge === 'Bearer' ? 'Bearer error="invalid_token"' : challenge),
        request,
        new Problem('unauthorized', 'the API key is not valid or has been revoked'),
      );
    }
    if (verified.role !== 'admin' && !access.includes(verified.role)) {
      return sendProblem(reply, request, new Problem('forbidden', `this route needs a key with role ${access.join(' or ')}; this key has role ${verified.role}`));
    }
    request.apiKey = verified;
    return undefined;
  });
}
