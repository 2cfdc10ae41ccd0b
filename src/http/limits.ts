/**
 * Protective limits, each from a well-kept fastify plugin: security headers, CORS (off unless
 * origins are configured) and 503 with Retry-After when the process is under memory or
 * event-loop pressure (rate limits are in rate-limits.ts). Errors leave as problem details like every other.
 */
import cors from '@fastify/cors';
import helmet from '@fastify/helmet';
import underPressure from '@fastify/under-pressure';
import type { FastifyInstance } from 'fastify';
import v8 from 'node:v8';
import type { Config } from '../config.js';
import { sendProblem } from './errors.js';
import { Problem } from './problems.js';

const RETRY_AFTER_SECONDS = 10;

export async function registerLimits(app: FastifyInstance, config: Config): Promise<void> {
  await app.register(helmet, {
    // The service answers JSON, CSV and one self-contained HTML page: nothing is loaded from elsewhere.
    // upgrade-insecure-requests is left out: inside a company network the service often runs on
    // plain HTTP, and the page's links and picker must keep working there.
    contentSecurityPolicy: {
      directives: { defaultSrc: ["'self'"], imgSrc: ["'self'", 'data:'], styleSrc: ["'self'", "'unsafe-inline'"], scriptSrc: ["'self'"], upgradeInsecureRequests: null },
    },
  });
  if (config.corsOrigins.length > 0) {
    await app.register(cors, { origin: config.corsOrigins, methods: ['GET', 'POST', 'DELETE'], allowedHeaders: ['authorization', 'content-type', 'idempotency-key', 'if-none-match'] });
  }
  const heapLimitBytes = config.maxHeapUsedMiB > 0 ? config.maxHeapUsedMiB * 1024 * 1024 : 0.9 * v8.getHeapStatistics().heap_size_limit;
  await app.register(underPressure, {
    maxEventLoopDelay: config.maxEventLoopDelayMs,
    // The plugin reads the mean delay over each sample window and counts a window without any
    // sample as an infinite delay; with its default 1 s window, one synchronous step longer
    // than a second (an upload's commit, a large report query) answered the next requests 503.
    // Over 5 s windows (the default here) only a sustained overload does.
    sampleInterval: config.loadSampleIntervalMs,
    maxHeapUsedBytes: heapLimitBytes,
    retryAfter: RETRY_AFTER_SECONDS,
    pressureHandler: (request, reply, type, value) => {
      sendProblem(
        reply.header('retry-after', String(RETRY_AFTER_SECONDS)),
        request,
        new Problem('unavailable', `the service is under load (${type}${value === undefined ? '' : ` ${Math.round(value)}`}); try again in ${RETRY_AFTER_SECONDS} s`),
      );
    },
  });
}
