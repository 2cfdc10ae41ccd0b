/**
 * The report as a web page: `GET /reports/{report_id}` (optionally `?snapshot=<id>`) renders
 * a snapshot with its charts. The page's inline stylesheet and script carry per-response CSP
 * nonces (the global policy stays `script-src 'self'`), so no separate asset route is needed.
 * Access is checked by the auth hook like every route; for this path it challenges with HTTP
 * Basic, so a browser can log in with the API key as the password.
 */
import type { FastifyPluginAsync } from 'fastify';
import { snapshotInContext, type ReportDependencies } from '../report/snapshot/index.js';
import { TREND_SNAPSHOTS } from '../view/charts/trend.js';
import type { ChartCache } from '../view/chart-cache.js';
import { renderReportPage } from '../view/page.js';
import { ReportIdParams } from './schemas.js';

export interface PageRouteOptions {
  reports: ReportDependencies;
  /** charts of recently shown pages, kept across requests */
  charts: ChartCache;
  /** whether the service runs without keys, which the page says in a banner */
  openMode: boolean;
}

/** Snapshots the picker offers, newest first. */
const PICKER_SNAPSHOTS = 100;
/** Snapshot listings read to place the shown one among the others. */
const LISTING_LIMIT = 1000;

const pageQuery = {
  type: 'object',
  additionalProperties: false,
  properties: { snapshot: { type: 'string', minLength: 1, maxLength: 200, default: 'latest' } },
} as const;

export const pageRoutes: FastifyPluginAsync<PageRouteOptions> = async (app, { reports: deps, charts, openMode }) => {
  app.get(
    '/reports/:report_id',
    { schema: { params: ReportIdParams, querystring: pageQuery }, helmet: { enableCSPNonces: true } },
    async (request, reply) => {
      const { report_id: reportId } = request.params as { report_id: string };
      const { snapshot: snapshotId } = request.query as { snapshot: string };
      const { shown, history, listing } = await snapshotInContext(deps, reportId, snapshotId, { historyLength: TREND_SNAPSHOTS, listingLimit: LISTING_LIMIT });
      const nonces = reply.cspNonce;
      const page = await renderReportPage({
        snapshot: shown,
        history,
        figures: await charts.chartsFor(shown, history),
        choices: listing.slice(0, PICKER_SNAPSHOTS).map((meta) => ({ snapshot_id: meta.snapshot_id, sequence: meta.sequence, created_at: meta.created_at })),
        openMode,
        nonces,
      });
      return reply.code(200).type('text/html; charset=utf-8').header('cache-control', 'private, no-cache').send(page);
    },
  );
};
