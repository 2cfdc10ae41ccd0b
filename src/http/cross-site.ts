/**
 * Refuses state-changing requests a browser sends on another site's behalf. A browser that
 * once signed in to the report page with Basic credentials attaches them to every later
 * request to the service, including a form or `text/plain` fetch another site makes it send
 * (a "simple" request, which CORS does not stop before it reaches the server). So every POST,
 * PUT, PATCH and DELETE is checked against the browser's own statement of where it came from,
 * the Fetch Metadata header `Sec-Fetch-Site` and, from older browsers, `Origin`: anything but
 * the service's own origin (or an origin listed in CORS_ORIGINS) gets 403 `cross-site`.
 * `same-site` is refused too: a sibling subdomain is another application. Requests without
 * either header come from tools, not browsers, and pass (they still need a key).
 * Reads stay open to links from elsewhere: a GET changes nothing.
 */
import type { FastifyInstance, FastifyRequest } from 'fastify';
import { Problem } from './problems.js';

const STATE_CHANGING = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);
/** Sec-Fetch-Site values of requests the service's own origin or the user made (typed address, bookmark). */
const OWN_SITE = new Set(['same-origin', 'none']);

function hostOf(origin: string): string | null {
  try {
    return new URL(origin).host;
  } catch {
    return null;
  }
}

/** Why the request is refused as cross-site, or null when it is not. */
function crossSiteReason(request: Pick<FastifyRequest, 'method' | 'headers'>, allowedOrigins: readonly string[]): string | null {
  if (!STATE_CHANGING.has(request.method)) return null;
  const origin = request.headers.origin;
  if (origin !== undefined && allowedOrigins.includes(origin)) return null;
  const fetchSite = request.headers['sec-fetch-site'];
  if (typeof fetchSite === 'string' && !OWN_SITE.has(fetchSite.toLowerCase())) {
    return `the browser marked this ${request.method} as sent from another site (Sec-Fetch-Site: ${fetchSite})`;
  }
  // The scheme is left out of the comparison: behind a proxy that ends TLS the service sees
  // plain HTTP while the browser's origin says https, and another site cannot share the host.
  if (origin !== undefined && hostOf(origin) !== request.headers.host) {
    return `the browser sent this ${request.method} from ${origin}, not from this service's own pages`;
  }
  return null;
}

export function registerCrossSiteCheck(app: FastifyInstance, options: { allowedOrigins: readonly string[] }): void {
  app.addHook('onRequest', async (request) => {
    const reason = crossSiteReason(request, options.allowedOrigins);
    if (reason !== null) {
      throw new Problem('cross-site', `${reason}; state-changing requests are accepted only from this service's origin${options.allowedOrigins.length > 0 ? ' or CORS_ORIGINS' : ''}, or from clients that are not browsers`);
    }
  });
}
