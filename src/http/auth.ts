/**
 * Who may call what. Every route's accepted roles are listed here, in one table; a route
 * missing from the table needs an admin key (fail closed), and a test checks that every
 * registered route is listed. Admin keys are accepted everywhere.
 */
import type { FastifyInstance, FastifyRequest } from 'fastify';
import type { KeyVerifier } from '../auth/key-verifier.js';
import type { Role } from '../auth/keys.js';
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
  'GET /v1/reports/:report_id/plan': ['read'],
  'POST /v1/plans': ['read'],
  'GET /reports/:report_id': ['read'],
};

/**
 * Where Basic credentials are accepted: what a browser reads (the report page and the data it
 * links to), by GET or HEAD only. A browser resends Basic credentials it once used on any
 * request to the service, another site's forms included; a key must arrive as a bearer token,
 * which no browser attaches on its own, for anything else.
 */
const BASIC_ROUTES = new Set(['/reports/:report_id', '/v1/reports/:report_id/segments', '/v1/reports/:report_id/snapshots/:snapshot_id']);

function acceptsBasic(method: string, url: string): boolean {
  return (method === 'GET' || method === 'HEAD') && BASIC_ROUTES.has(url);
}

function accessFor(method: string, url: string): Access {
  return ROUTE_ACCESS[`${method} ${url}`] ?? ['admin'];
}

/** Whether a route (by its URL pattern) is open to anyone; every public route is a GET. */
export function isPublicRoute(url: string): boolean {
  return accessFor('GET', url) === 'public';
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

export interface AuthOptions {
  keys: KeyVerifier;
  mode: 'keys' | 'open';
  /** Told of every refused key; a problem it returns (429) is answered instead of 401. */
  onKeyRefused?: (request: FastifyRequest) => Promise<Problem | null>;
}

export function registerAuth(app: FastifyInstance, options: AuthOptions): void {
  app.decorateRequest('apiKey', null);
  if (options.mode === 'open') return;
  app.addHook('onRequest', async (request, reply) => {
    const routeUrl = request.routeOptions.url;
    if (routeUrl === undefined) return; // no such route: the 404 handler answers
    // A CORS preflight carries no credentials by design; it only asks what the browser may send.
    if (request.method === 'OPTIONS') return;
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
    if (/^\s*basic\s/i.test(request.headers.authorization ?? '') && !acceptsBasic(request.method, routeUrl)) {
      const limited = await options.onKeyRefused?.(request);
      if (limited) return sendProblem(reply, request, limited);
      return sendProblem(
        reply.header('www-authenticate', 'Bearer'),
        request,
        new Problem('unauthorized', 'Basic credentials are accepted only when reading the report page and the data it links to; send the key as "Authorization: Bearer <key>"'),
      );
    }
    const verified = await options.keys.verify(presented);
    if (!verified) {
      const limited = await options.onKeyRefused?.(request);
      if (limited) return sendProblem(reply, request, limited);
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
