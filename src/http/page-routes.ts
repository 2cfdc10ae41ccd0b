/**
 * The report as a web page: `GET /reports/{report_id}` (optionally `?snapshot=<id>`) renders
 * a snapshot with its charts. The page's inline stylesheet and script carry per-response CSP
 * nonces (the global policy stays `script-src 'self'`), so no separate asset route is needed.
 * Access is checked by the auth hook like every route; for this path it challenges with HTTP
 * Basic, so a browser can log in with the API key as the password.
 */
import type { FastifyInstance } from 'fastify';
import type { Config } from '../config.js';
import type { DatabaseHandle } from '../db/connect.js';
import type { Logger } from '../logger.js';
import type { Snapshot } from '../report/shapes/index.js';
import { ReportNotFoundError, getSnapshotBody, listSnapshots, reportDependencies } from '../report/snapshot/index.js';
import { TREND_SNAPSHOTS } from '../view/charts/trend.js';
import type { ChartFigure } from '../view/figure.js';
import { renderReportPage, reportCharts } from '../view/page.js';
import { Problem } from './problems.js';
import { ReportIdParams } from './schemas.js';

export interface PageRouteDependencies {
  config: Config;
  database: DatabaseHandle;
  logger: Logger;
  now: () => Date;
}

/** Snapshots the picker offers, newest first. */
export const PICKER_SNAPSHOTS = 100;
/** Snapshot listings read to place the shown one among the others. */
const LISTING_LIMIT = 1000;
/** Pages whose charts are kept: drawing them takes most of a page's time, and a snapshot never changes. */
const CACHED_CHART_SETS = 16;

const pageQuery = {
  type: 'object',
  additionalProperties: false,
  properties: { snapshot: { type: 'string', minLength: 1, maxLength: 200, default: 'latest' } },
} as const;

export function pageRoutes(routeDeps: PageRouteDependencies) {
  return async function plugin(app: FastifyInstance): Promise<void> {
    const deps = reportDependencies(routeDeps.database, routeDeps.logger, routeDeps.now);

    // Keyed by the shown snapshot and the snapshots of its trend; the oldest entry goes first.
    const chartCache = new Map<string, Promise<ChartFigure[]>>();
    const chartsFor = (shown: Snapshot, history: readonly Snapshot[]): Promise<ChartFigure[]> => {
      const key = [shown.report_id, shown.snapshot_id, ...history.map((snapshot) => snapshot.snapshot_id)].join('|');
      let charts = chartCache.get(key);
      if (charts === undefined) {
        charts = reportCharts(shown, history);
        chartCache.set(key, charts);
        // A failed drawing is not kept, so the next request tries again.
        charts.catch(() => chartCache.delete(key));
        while (chartCache.size > CACHED_CHART_SETS) chartCache.delete(chartCache.keys().next().value as string);
      }
      return charts;
    };

    const readSnapshot = async (reportId: string, snapshotId: string): Promise<Snapshot | undefined> => {
      const body = await getSnapshotBody(deps, reportId, snapshotId);
      return body === undefined ? undefined : (JSON.parse(body) as Snapshot);
    };

    app.get(
      '/reports/:report_id',
      { schema: { params: ReportIdParams, querystring: pageQuery }, helmet: { enableCSPNonces: true } },
      async (request, reply) => {
        const { report_id: reportId } = request.params as { report_id: string };
        const { snapshot: snapshotId } = request.query as { snapshot: string };
        let shown: Snapshot | undefined;
        try {
          shown = await readSnapshot(reportId, snapshotId);
        } catch (error) {
          if (error instanceof ReportNotFoundError) throw new Problem('not-found', error.message);
          throw error;
        }
        if (shown === undefined) {
          throw new Problem(
            'not-found',
            snapshotId === 'latest' ? `report ${reportId} has no snapshot yet; POST /v1/reports/${reportId}/refresh computes one` : `report ${reportId} has no snapshot ${snapshotId}`,
          );
        }
        const listing = await listSnapshots(deps, reportId, { limit: LISTING_LIMIT, offset: 0 });
        const earlier = listing.snapshots
          .filter((meta) => meta.sequence < (shown as Snapshot).sequence)
          .slice(0, TREND_SNAPSHOTS - 1);
        const history: Snapshot[] = [shown];
        for (const meta of earlier) {
          const snapshot = await readSnapshot(reportId, meta.snapshot_id);
          if (snapshot) history.push(snapshot);
        }
        const nonces = reply.cspNonce;
        const page = await renderReportPage({
          snapshot: shown,
          history,
          figures: await chartsFor(shown, history),
          choices: listing.snapshots.slice(0, PICKER_SNAPSHOTS).map((meta) => ({ snapshot_id: meta.snapshot_id, sequence: meta.sequence, created_at: meta.created_at })),
          openMode: routeDeps.config.authMode === 'open',
          nonces,
        });
        return reply.code(200).type('text/html; charset=utf-8').header('cache-control', 'private, no-cache').send(page);
      },
    );
  };
}
