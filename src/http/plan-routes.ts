/**
 * Planning routes: the sizes of the next campaign for a stated baseline, and for every segment
 * of a report's latest snapshot.
 */
import type { FastifyPluginAsync, FastifyRequest } from 'fastify';
import { parseContentType } from '../ingest/media-type.js';
import { Plan, PlanRequest, ReportPlan, ReportPlanQuery, planCampaign, planForReport } from '../plan/index.js';
import type { ReportDependencies } from '../report/snapshot/index.js';
import { Problem } from './problems.js';
import { ReportIdParams } from './schemas.js';

export interface PlanRouteOptions {
  reports: ReportDependencies;
}

/** The planning routes as a fastify plugin. */
export const planRoutes: FastifyPluginAsync<PlanRouteOptions> = async (app, { reports: deps }) => {
  const requireJson = async (request: FastifyRequest) => {
    const contentType = parseContentType(request.headers['content-type']).mediaType;
    if (contentType !== 'application/json') {
      throw new Problem('unsupported-media-type', `send the plan request as application/json (got "${contentType || 'none'}")`);
    }
  };

  app.post('/v1/plans', { preValidation: requireJson, schema: { body: PlanRequest, response: { 200: Plan } } }, async (request) => {
    const plan = planCampaign(request.body as PlanRequest);
    if (!plan.ok) throw new Problem('invalid-request', plan.reason);
    return plan.value;
  });

  app.get(
    '/v1/reports/:report_id/plan',
    { schema: { params: ReportIdParams, querystring: ReportPlanQuery, response: { 200: ReportPlan } } },
    async (request) => {
      const { report_id: reportId } = request.params as { report_id: string };
      return planForReport(deps, reportId, request.query as ReportPlanQuery);
    },
  );
};
