/**
 * Rate limits, counted two ways so one client's traffic cannot starve another's:
 *
 * - per API key, for requests whose key verified (in open mode every non-public request counts
 *   against the one implicit key);
 * - per client address, for everything that carries no valid key: public routes, requests
 *   without a key, and failed authentications. The address is checked before authentication,
 *   so a client guessing keys meets 429 instead of a key lookup per guess.
 *
 * `/healthz` is never counted: it is the liveness probe of whatever runs the service, often
 * sent through the same proxy address as everyone else, and a 429 there would restart a
 * healthy service. Counting is done by @fastify/rate-limit's store (fixed windows, bounded
 * memory); the answer is a problem detail stating the real limit and window.
 */
import rateLimit from '@fastify/rate-limit';
import type { FastifyInstance, FastifyRequest } from 'fastify';
import type { Config } from '../config.js';
import { isPublicRoute, presentedKey } from './auth.js';
import { Problem } from './problems.js';

/** Routes never counted. */
const UNLIMITED_ROUTES = new Set(['/healthz']);
/** Distinct keys and addresses whose counts are kept at once; the least recently seen go first. */
const TRACKED_CLIENTS = 50_000;
const ADDRESS = 'from this address without a valid API key';

type Check = ReturnType<FastifyInstance['createRateLimit']>;

export interface RateLimits {
  /**
   * Counts a failed authentication against the client's address; a problem (429) when the
   * address is past its limit, which is then answered instead of 401.
   */
  failedAuthentication(request: FastifyRequest): Promise<Problem | null>;
}

function windowText(seconds: number): string {
  return seconds % 60 === 0 ? `${seconds / 60} minute${seconds === 60 ? '' : 's'}` : `${seconds} seconds`;
}

function limitProblem(limit: number, windowSeconds: number, who: string, ttlInSeconds: number): Problem {
  const retryAfter = Math.max(1, ttlInSeconds);
  return new Problem(
    'rate-limited',
    `more than ${limit} requests in ${windowText(windowSeconds)} ${who}; try again in ${retryAfter} s`,
    { limit, window_seconds: windowSeconds },
    { 'retry-after': String(retryAfter) },
  );
}

/**
 * Registers the limiter's hooks: the address check as an onRequest hook (call this before the
 * authentication hook is added, so it runs first), the key check once the key is known.
 * Returns null when both limits are off.
 */
export async function registerRateLimits(app: FastifyInstance, config: Config): Promise<RateLimits | null> {
  const { rateLimitPerKey: perKey, rateLimitPerAddress: perAddress, rateLimitWindowSeconds: windowSeconds } = config;
  if (perKey === 0 && perAddress === 0) return null;
  await app.register(rateLimit, { global: false, cache: TRACKED_CLIENTS, timeWindow: windowSeconds * 1000 });
  const timeWindow = windowSeconds * 1000;
  const byAddress: Check | null = perAddress > 0 ? app.createRateLimit({ max: perAddress, timeWindow, keyGenerator: (request) => `address:${request.ip}` }) : null;
  const byKey: Check | null =
    perKey > 0 ? app.createRateLimit({ max: perKey, timeWindow, keyGenerator: (request) => `key:${request.apiKey?.keyId ?? 'open'}` }) : null;
  const openMode = config.authMode === 'open';

  /**
   * Public routes, unknown routes and preflights are never authenticated, so whatever key they
   * carry they count against the address; elsewhere a presented key is judged (and a refused
   * one counted) once it has been verified.
   */
  const countsAgainstAddress = (request: FastifyRequest): boolean => {
    const route = request.routeOptions.url;
    if (route !== undefined && UNLIMITED_ROUTES.has(route)) return false;
    if (route === undefined || isPublicRoute(route) || request.method === 'OPTIONS') return true;
    if (openMode) return false; // counted against the service's one implicit key
    return presentedKey(request.headers.authorization) === null;
  };

  app.addHook('onRequest', async (request) => {
    if (byAddress === null || !countsAgainstAddress(request)) return;
    const outcome = await byAddress(request);
    if (!outcome.isAllowed && outcome.isExceeded) throw limitProblem(perAddress, windowSeconds, ADDRESS, outcome.ttlInSeconds);
  });

  // preParsing runs after every onRequest hook, authentication's included, and before a body is read.
  app.addHook('preParsing', async (request, _reply, payload) => {
    const route = request.routeOptions.url;
    if (byKey === null || route === undefined || UNLIMITED_ROUTES.has(route) || request.method === 'OPTIONS') return payload;
    if (request.apiKey === null && !(openMode && !isPublicRoute(route))) return payload;
    const outcome = await byKey(request);
    if (!outcome.isAllowed && outcome.isExceeded) throw limitProblem(perKey, windowSeconds, 'with this API key', outcome.ttlInSeconds);
    return payload;
  });

  return {
    async failedAuthentication(request) {
      if (byAddress === null) return null;
      const outcome = await byAddress(request);
      return !outcome.isAllowed && outcome.isExceeded ? limitProblem(perAddress, windowSeconds, ADDRESS, outcome.ttlInSeconds) : null;
    },
  };
}
