/**
 * Report routes: save and read definitions, compute snapshots, read them whole, and the flat
 * ranked table for BI tools (JSON or CSV, with ETag / If-None-Match). The in-process weekly
 * schedule starts with the application when the configuration enables it.
 */
import type { FastifyInstance, FastifyReply, FastifyRequest } from 'fastify';
import type { Config } from '../config.js';
import type { DatabaseHandle } from '../db/connect.js';
import { parseContentType } from '../ingest/media-type.js';
import type { Logger } from '../logger.js';
import { InvalidDefinitionError } from '../report/definition/index.js';
import { SegmentTableCache, entityTag, type TableFormat } from '../present/index.js';
import { Report, ReportList, SnapshotList } from '../report/shapes/index.js';
import {
  segmentTable,
  ReportNotFoundError,
  createReport,
  getReport,
  getSnapshotBody,
  listReports,
  listSnapshots,
  refreshReport,
  reportDependencies,
} from '../report/snapshot/index.js';
import { startRefreshSchedule, type RefreshSchedule } from '../schedule/weekly.js';
import { Problem } from './problems.js';
import { ReportIdParams, SnapshotParams } from './schemas.js';

export interface ReportRouteDependencies {
  config: Config;
  database: DatabaseHandle;
  logger: Logger;
  now: () => Date;
}

/** Domain errors of the report service as problem details. */
function asProblem(error: unknown): unknown {
  if (error instanceof InvalidDefinitionError) {
    const first = error.issues[0];
    const detail =
      error.issues.length === 1 && first ? `${first.field}: ${first.reason}` : `the report definition has ${error.issues.length} problems; see errors`;
    return new Problem('invalid-request', detail, { errors: error.issues.map((issue) => ({ field: issue.field, reason: issue.reason })) });
  }
  if (error instanceof ReportNotFoundError) return new Problem('not-found', error.message);
  return error;
}

async function handle<T>(work: () => Promise<T>): Promise<T> {
  try {
    return await work();
  } catch (error) {
    throw asProblem(error);
  }
}

/** Whether an If-None-Match header matches the tag (weak comparison, as RFC 9110 §13.1.2 asks for GET). */
function matchesIfNoneMatch(header: string | undefined, tag: string): boolean {
  if (header === undefined) return false;
  const opaque = (value: string) => value.trim().replace(/^W\//, '');
  return header.split(',').some((candidate) => candidate.trim() === '*' || opaque(candidate) === opaque(tag));
}

/** Sends `body` with a strong entity tag over its exact bytes (RFC 9110 §8.8.3), or 304 when the client has it. */
function sendWithEntityTag(request: FastifyRequest, reply: FastifyReply, body: string | Buffer, contentType: string, tag: string = entityTag(body)): FastifyReply {
  reply.header('etag', tag).header('cache-control', 'private, no-cache').header('vary', 'Accept');
  if (matchesIfNoneMatch(request.headers['if-none-match'], tag)) return reply.code(304).send();
  return reply.code(200).type(contentType).send(body);
}

/**
 * The representation of the segment table: `?format=` wins; otherwise the Accept header's
 * preferred type among application/json and text/csv (JSON when there is no preference).
 */
function negotiateFormat(format: TableFormat | undefined, accept: string | undefined): TableFormat {
  if (format !== undefined) return format;
  if (accept === undefined || accept.trim() === '') return 'json';
  let best: { format: TableFormat; quality: number } | null = null;
  for (const part of accept.split(',')) {
    const [rawType, ...parameters] = part.split(';');
    const type = (rawType ?? '').trim().toLowerCase();
    const qualityParameter = parameters.map((parameter) => parameter.trim()).find((parameter) => parameter.startsWith('q='));
    const quality = qualityParameter === undefined ? 1 : Number(qualityParameter.slice(2));
    if (!Number.isFinite(quality) || quality <= 0) continue;
    const candidates: TableFormat[] =
      type === 'text/csv' ? ['csv'] : type === 'application/json' ? ['json'] : type === '*/*' || type === 'application/*' ? ['json'] : type === 'text/*' ? ['csv'] : [];
    for (const candidate of candidates) {
      if (best === null || quality > best.quality) best = { format: candidate, quality };
    }
  }
  if (best === null) throw new Problem('not-acceptable', 'the segment table is available as application/json or text/csv');
  return best.format;
}

/**
 * The report routes as a fastify plugin; with `config.scheduleEnabled` it also starts the
 * weekly schedule when the application is ready and stops it when the application closes.
 */
export function reportRoutes(routeDeps: ReportRouteDependencies) {
  return async function plugin(app: FastifyInstance): Promise<void> {
    const deps = reportDependencies(routeDeps.database, routeDeps.logger, routeDeps.now);

    if (routeDeps.config.scheduleEnabled) {
      let schedule: RefreshSchedule | null = null;
      app.addHook('onReady', async () => {
        schedule = startRefreshSchedule(deps, { cron: routeDeps.config.refreshCron, timeZone: routeDeps.config.refreshTimeZone });
      });
      app.addHook('onClose', async () => {
        await schedule?.stop();
      });
    }

    const tables = new SegmentTableCache();

    const requireJson = async (request: FastifyRequest) => {
      const contentType = parseContentType(request.headers['content-type']).mediaType;
      if (contentType !== 'application/json') {
        throw new Problem('unsupported-media-type', `send the report definition as application/json (got "${contentType || 'none'}")`);
      }
    };

    // The body is checked against the definition's declaration (ReportDefinitionBody) by
    // normalizeDefinition, in the same pass as the checks that compare fields or need stored
    // data, so one answer lists every problem of a definition with the reasons its fields state.
    app.post('/v1/reports', { preValidation: requireJson, schema: { body: { type: 'object' }, response: { 201: Report } } }, async (request, reply) => {
      const report = await handle(() => createReport({ ...deps, logger: request.log }, request.body));
      return reply.code(201).header('location', `/v1/reports/${report.report_id}`).send(report);
    });

    app.get('/v1/reports', { schema: { response: { 200: ReportList } } }, async () => ({ reports: await listReports(deps) }));

    app.get('/v1/reports/:report_id', { schema: { params: ReportIdParams, response: { 200: Report } } }, async (request) => {
      const { report_id: reportId } = request.params as { report_id: string };
      return handle(() => getReport(deps, reportId));
    });

    app.post('/v1/reports/:report_id/refresh', { schema: { params: ReportIdParams } }, async (request, reply) => {
      const { report_id: reportId } = request.params as { report_id: string };
      const snapshot = await handle(() => refreshReport({ ...deps, logger: request.log }, reportId, 'manual'));
      return reply
        .code(201)
        .header('location', `/v1/reports/${reportId}/snapshots/${snapshot.snapshot_id}`)
        .type('application/json; charset=utf-8')
        .send(JSON.stringify(snapshot));
    });

    app.get(
      '/v1/reports/:report_id/snapshots',
      {
        schema: {
          params: ReportIdParams,
          querystring: {
            type: 'object',
            additionalProperties: false,
            properties: { limit: { type: 'integer', minimum: 1, maximum: 1000, default: 100 }, offset: { type: 'integer', minimum: 0, default: 0 } },
          },
          response: { 200: SnapshotList },
        },
      },
      async (request) => {
        const { report_id: reportId } = request.params as { report_id: string };
        const { limit, offset } = request.query as { limit: number; offset: number };
        return handle(() => listSnapshots(deps, reportId, { limit, offset }));
      },
    );

    app.get('/v1/reports/:report_id/snapshots/:snapshot_id', { schema: { params: SnapshotParams } }, async (request, reply) => {
      const { report_id: reportId, snapshot_id: snapshotId } = request.params as { report_id: string; snapshot_id: string };
      const body = await handle(() => getSnapshotBody(deps, reportId, snapshotId));
      if (body === undefined) {
        throw new Problem('not-found', snapshotId === 'latest' ? `report ${reportId} has no snapshot yet; POST /v1/reports/${reportId}/refresh computes one` : `report ${reportId} has no snapshot ${snapshotId}`);
      }
      return sendWithEntityTag(request, reply, body, 'application/json; charset=utf-8');
    });

    app.get(
      '/v1/reports/:report_id/segments',
      {
        schema: {
          params: ReportIdParams,
          querystring: {
            type: 'object',
            additionalProperties: false,
            properties: { snapshot: { type: 'string', minLength: 1, maxLength: 200, default: 'latest' }, format: { type: 'string', enum: ['json', 'csv'] } },
          },
        },
      },
      async (request, reply) => {
        const { report_id: reportId } = request.params as { report_id: string };
        const { snapshot: snapshotId, format } = request.query as { snapshot: string; format?: TableFormat };
        const representation = negotiateFormat(format, request.headers.accept);
        const table = await handle(() => segmentTable(deps, tables, reportId, snapshotId, representation));
        if (table === undefined) {
          throw new Problem('not-found', snapshotId === 'latest' ? `report ${reportId} has no snapshot yet; POST /v1/reports/${reportId}/refresh computes one` : `report ${reportId} has no snapshot ${snapshotId}`);
        }
        if (representation === 'csv') {
          reply.header('content-disposition', `attachment; filename="segments-${table.snapshotId}.csv"`);
          return sendWithEntityTag(request, reply, table.bytes, 'text/csv; charset=utf-8; header=present', table.entityTag);
        }
        return sendWithEntityTag(request, reply, table.bytes, 'application/json; charset=utf-8', table.entityTag);
      },
    );
  };
}
