/**
 * Report routes: save and read definitions, compute snapshots, read them whole, and the flat
 * ranked table for BI tools (JSON or CSV, with ETag / If-None-Match).
 */
import type { FastifyPluginAsync, FastifyReply, FastifyRequest } from 'fastify';
import { parseContentType } from '../ingest/media-type.js';
import { entityTag, segmentTable, type SegmentTableCache, type TableFormat } from '../present/index.js';
import { Report, ReportList, SnapshotList } from '../report/shapes/index.js';
import {
  SnapshotNotFoundError,
  createReport,
  deleteReport,
  getReport,
  getSnapshotBody,
  listReports,
  listSnapshots,
  refreshReportText,
  replaceReport,
  type ReportDependencies,
} from '../report/snapshot/index.js';
import { negotiate } from './negotiate.js';
import { Problem } from './problems.js';
import { ReportIdParams, SnapshotParams } from './schemas.js';

export interface ReportRouteOptions {
  reports: ReportDependencies;
  /** rendered segment tables, kept across requests */
  tables: SegmentTableCache;
}

/** Whether an If-None-Match header matches the tag (weak comparison, as RFC 9110 §13.1.2 asks for GET). */
function matchesIfNoneMatch(header: string | undefined, tag: string): boolean {
  if (header === undefined) return false;
  const opaque = (value: string) => value.trim().replace(/^W\//, '');
  return header.split(',').some((candidate) => candidate.trim() === '*' || opaque(candidate) === opaque(tag));
}

/** Sends `body` with a strong entity tag over its exact bytes (RFC 9110 §8.8.3), or 304 when the client has it. */
function sendWithEntityTag(request: FastifyRequest, reply: FastifyReply, body: string | Buffer, contentType: string, tag: string = entityTag(body)): FastifyReply {
  reply.header('etag', tag).header('cache-control', 'private, no-cache');
  if (!reply.hasHeader('vary')) reply.header('vary', 'Accept');
  if (matchesIfNoneMatch(request.headers['if-none-match'], tag)) return reply.code(304).send();
  return reply.code(200).type(contentType).send(body);
}

/** The media types the segment table is served as; the first is the one given when the client states no preference. */
const TABLE_MEDIA_TYPES: Record<TableFormat, string> = { json: 'application/json; charset=utf-8', csv: 'text/csv; charset=utf-8; header=present' };

/**
 * The representation of the segment table: `?format=` wins; otherwise the Accept header's
 * preferred type among application/json and text/csv (JSON when there is no preference).
 */
function negotiateFormat(request: FastifyRequest, format: TableFormat | undefined): TableFormat {
  return format ?? negotiate(request, TABLE_MEDIA_TYPES, 'the segment table is available as application/json or text/csv');
}

/** The report routes as a fastify plugin. */
export const reportRoutes: FastifyPluginAsync<ReportRouteOptions> = async (app, { reports: deps, tables }) => {
  const requireJson = async (request: FastifyRequest) => {
    const contentType = parseContentType(request.headers['content-type']).mediaType;
    if (contentType !== 'application/json') {
      throw new Problem('unsupported-media-type', `send the report definition as application/json (got "${contentType || 'none'}")`);
    }
  };

  app.post('/v1/reports', { preValidation: requireJson, schema: { body: { type: 'object' }, response: { 201: Report } } }, async (request, reply) => {
    const report = await createReport({ ...deps, logger: request.log }, request.body);
    return reply.code(201).header('location', `/v1/reports/${report.report_id}`).send(report);
  });

  app.get('/v1/reports', { schema: { response: { 200: ReportList } } }, async () => ({ reports: await listReports(deps) }));

  app.get('/v1/reports/:report_id', { schema: { params: ReportIdParams, response: { 200: Report } } }, async (request) => {
    const { report_id: reportId } = request.params as { report_id: string };
    return getReport(deps, reportId);
  });

  app.put(
    '/v1/reports/:report_id',
    { preValidation: requireJson, schema: { params: ReportIdParams, body: { type: 'object' }, response: { 200: Report } } },
    async (request) => {
      const { report_id: reportId } = request.params as { report_id: string };
      return replaceReport({ ...deps, logger: request.log }, reportId, request.body);
    },
  );

  app.delete('/v1/reports/:report_id', { schema: { params: ReportIdParams } }, async (request, reply) => {
    const { report_id: reportId } = request.params as { report_id: string };
    await deleteReport({ ...deps, logger: request.log }, reportId);
    tables.forgetReport(reportId);
    return reply.code(204).send();
  });

  app.post('/v1/reports/:report_id/refresh', { schema: { params: ReportIdParams } }, async (request, reply) => {
    const { report_id: reportId } = request.params as { report_id: string };
    // The text built beside the snapshot is sent as it was stored: no second serialisation here.
    const refreshed = await refreshReportText({ ...deps, logger: request.log }, reportId, 'manual');
    return reply
      .code(201)
      .header('location', `/v1/reports/${reportId}/snapshots/${refreshed.snapshotId}`)
      .type('application/json; charset=utf-8')
      .send(refreshed.body);
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
      return listSnapshots(deps, reportId, { limit, offset });
    },
  );

  app.get('/v1/reports/:report_id/snapshots/:snapshot_id', { schema: { params: SnapshotParams } }, async (request, reply) => {
    const { report_id: reportId, snapshot_id: snapshotId } = request.params as { report_id: string; snapshot_id: string };
    const body = await getSnapshotBody(deps, reportId, snapshotId);
    if (body === undefined) throw new SnapshotNotFoundError(reportId, snapshotId);
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
          properties: {
            snapshot: { type: 'string', minLength: 1, maxLength: 200, default: 'latest' },
            format: { type: 'string', enum: ['json', 'csv'] },
            bom: { type: 'string', enum: ['0', '1'], default: '0' },
            holdout_columns: { type: 'string', enum: ['0', '1'], default: '0' },
          },
        },
      },
    },
    async (request, reply) => {
      const { report_id: reportId } = request.params as { report_id: string };
      const { snapshot: snapshotId, format, bom, holdout_columns: holdoutColumns } = request.query as { snapshot: string; format?: TableFormat; bom: '0' | '1'; holdout_columns: '0' | '1' };
      const representation = negotiateFormat(request, format);
      if (bom === '1' && representation !== 'csv') throw new Problem('invalid-request', 'bom=1 applies to CSV only (JSON must not start with a byte order mark): add format=csv');
      const table = await segmentTable(deps, tables, reportId, snapshotId, representation, { bom: bom === '1', holdoutColumns: holdoutColumns === '1' });
      if (table === undefined) throw new SnapshotNotFoundError(reportId, snapshotId);
      if (representation === 'csv') reply.header('content-disposition', `attachment; filename="segments-${table.snapshotId}.csv"`);
      reply.header('vary', 'Accept, Accept-Encoding');
      if (request.accepts().encoding(['identity', 'gzip']) === 'gzip') {
        reply.header('content-encoding', 'gzip');
        return sendWithEntityTag(request, reply, table.gzipped, TABLE_MEDIA_TYPES[representation], table.gzippedEntityTag);
      }
      return sendWithEntityTag(request, reply, table.bytes, TABLE_MEDIA_TYPES[representation], table.entityTag);
    },
  );
};
