/**
 * Builds the HTTP application from its dependencies without listening, so tests drive it
 * through `inject` and `main.ts` alone decides where it listens.
 */
import accepts from '@fastify/accepts';
import Fastify, { type FastifyInstance } from 'fastify';
import { KeyVerifier } from './auth/key-verifier.js';
import type { Config } from './config.js';
import type { DatabaseHandle } from './db/connect.js';
import { registerAuth } from './http/auth.js';
import { registerCrossSiteCheck } from './http/cross-site.js';
import { answerRouterError, registerErrorHandling } from './http/errors.js';
import { registerLimits } from './http/limits.js';
import { registerRateLimits } from './http/rate-limits.js';
import { healthRoutes } from './http/health-routes.js';
import { ingestRoutes } from './http/ingest-routes.js';
import { openapiRoutes } from './http/openapi-routes.js';
import { pageRoutes } from './http/page-routes.js';
import { planRoutes } from './http/plan-routes.js';
import { reportRoutes } from './http/report-routes.js';
import type { IngestDependencies } from './ingest/service.js';
import type { Logger } from './logger.js';
import { SegmentTableCache } from './present/index.js';
import { createSnapshotBuilder, redactStoredSnapshots, reportDependencies, type SnapshotBuilder } from './report/snapshot/index.js';
import { refreshSchedulePlugin } from './schedule/plugin.js';
import { createChartCache } from './view/chart-cache.js';

export interface RegisteredRoute {
  method: string;
  url: string;
}

declare module 'fastify' {
  interface FastifyInstance {
    registeredRoutes: RegisteredRoute[];
  }
}

export interface AppDependencies {
  config: Config;
  database: DatabaseHandle;
  logger: Logger;
  /** The clock; tests pass a fixed one. */
  now?: () => Date;
  /** Where snapshots are built, when not on the workers the configuration asks for (tests of a failing worker); the caller closes it. */
  snapshots?: SnapshotBuilder;
}

export async function buildApp(deps: AppDependencies): Promise<FastifyInstance> {
  const now = deps.now ?? (() => new Date());
  const app = Fastify({
    loggerInstance: deps.logger,
    // Uploads stream through their own size check; this limit covers the small JSON bodies.
    bodyLimit: 1024 * 1024,
    ajv: { customOptions: { removeAdditional: false, coerceTypes: 'array', useDefaults: true } },
    return503OnClosing: true,
    requestTimeout: deps.config.requestTimeoutMs,
    // Identifiers may be 200 characters; the router's default limit (100) would refuse them.
    routerOptions: { maxParamLength: 256 },
    // Errors the router raises before any route runs (a malformed URL, an overlong parameter)
    // leave as problem details too.
    frameworkErrors: answerRouterError,
  });
  registerErrorHandling(app);
  // The route list lets the contract test compare what is served with openapi.yaml.
  const routes: RegisteredRoute[] = [];
  app.decorate('registeredRoutes', routes);
  app.addHook('onRoute', (route) => {
    for (const method of [route.method].flat()) if (method !== 'HEAD') routes.push({ method, url: route.url });
  });

  // Built once and shared by the plugins that need them.
  const ownBuilder = deps.snapshots === undefined;
  const snapshots = deps.snapshots ?? createSnapshotBuilder({ workers: deps.config.refreshWorkers, timeoutMs: deps.config.refreshBuildTimeoutMs, idleTimeoutMs: deps.config.refreshWorkerIdleMs, logger: deps.logger });
  const reports = reportDependencies(
    deps.database,
    deps.logger,
    now,
    { publicationThreshold: deps.config.publicationThreshold, maxLabelsPerDimension: deps.config.maxLabelsPerDimension },
    snapshots,
  );
  const ingest: IngestDependencies = {
    db: deps.database.db,
    readDb: deps.database.readDb,
    logger: deps.logger,
    now,
    redactSnapshots: (trx, customer) => redactStoredSnapshots(trx, customer, { threshold: deps.config.publicationThreshold, now }),
    limits: {
      maxBytes: deps.config.maxUploadBytes,
      maxRows: deps.config.maxUploadRows,
      idleTimeoutMs: deps.config.uploadIdleTimeoutMs,
      spoolDir: deps.config.uploadSpoolDir,
      progressEveryRows: deps.config.ingestProgressEveryRows,
    },
  };
  const tables = new SegmentTableCache(64, deps.config.sharedStateCacheMs);
  // A request that may have written (a refresh, an erasure, a deleted report) makes the next
  // segment table read the database again; it runs before the answer leaves, so the client
  // that made the change sees it on its next request.
  app.addHook('onSend', async (request, _reply, payload) => {
    if (request.method !== 'GET' && request.method !== 'HEAD' && request.method !== 'OPTIONS') tables.versions.forgetAll();
    return payload;
  });
  const charts = createChartCache();
  app.addHook('onClose', async () => {
    tables.clear();
    charts.clear();
    if (ownBuilder) await snapshots.close();
  });

  // The address limit runs before authentication, so key guessing is limited too.
  const rateLimits = await registerRateLimits(app, deps.config);
  registerCrossSiteCheck(app, { allowedOrigins: deps.config.corsOrigins });
  registerAuth(app, {
    keys: new KeyVerifier(deps.database.readDb, deps.config.sharedStateCacheMs),
    mode: deps.config.authMode,
    ...(rateLimits ? { onKeyRefused: (request) => rateLimits.failedAuthentication(request) } : {}),
  });
  await registerLimits(app, deps.config);
  await app.register(accepts);
  await app.register(healthRoutes, { db: deps.database.readDb });
  await app.register(openapiRoutes);
  await app.register(ingestRoutes, ingest);
  await app.register(reportRoutes, { reports, tables });
  await app.register(planRoutes, { reports });
  await app.register(pageRoutes, { reports, charts, openMode: deps.config.authMode === 'open' });
  if (deps.config.scheduleEnabled) {
    await app.register(refreshSchedulePlugin, { reports, cron: deps.config.refreshCron, timeZone: deps.config.refreshTimeZone });
  }
  return app;
}
