/**
 * Upload, receipt and erasure routes. Upload bodies are handed to the ingest service as a raw
 * stream (no body parser in this scope), so a large upload is parsed while it arrives.
 */
import type { FastifyPluginAsync, FastifyRequest } from 'fastify';
import type { Readable } from 'node:stream';
import type { IngestKind, OnError } from '../db/tables.js';
import { eraseCustomer } from '../ingest/erasure.js';
import { formatFromContentType, parseContentType } from '../ingest/media-type.js';
import { listCampaigns } from '../ingest/campaigns.js';
import { findReceipt, findRejectedRows, listReceipts } from '../ingest/receipts.js';
import { CSV_DELIMITERS, type CsvDelimiter } from '../ingest/parse.js';
import { ingestUpload, type IngestDependencies } from '../ingest/service.js';
import { logPseudonym } from '../logger.js';
import { Problem } from './problems.js';
import { rejectedRowsCsv } from '../present/index.js';
import { negotiate } from './negotiate.js';
import { CampaignList, Receipt, ReceiptList, RejectedRowsPage } from './schemas.js';

const REJECTED_MEDIA_TYPES = { json: 'application/json; charset=utf-8', csv: 'text/csv; charset=utf-8; header=present' } as const;

const uploadQuerySchema = {
  type: 'object',
  properties: {
    on_error: { type: 'string', enum: ['reject', 'skip'], default: 'reject' },
    delimiter: { type: 'string', enum: Object.keys(CSV_DELIMITERS), default: 'comma' },
  },
  additionalProperties: false,
} as const;

const identifierPattern = '^[^\\u0000-\\u001f\\u007f]{1,200}$';

export const ingestRoutes: FastifyPluginAsync<IngestDependencies> = async (app, deps) => {
  // Uploads are streamed to the parser; any content type reaches the handler, which decides.
  app.removeAllContentTypeParsers();
  app.addContentTypeParser('*', (_request, payload, done) => done(null, payload));

  const upload = async (request: FastifyRequest, kind: IngestKind, campaignId: string | null) => {
    const contentType = request.headers['content-type'] ?? '';
    const format = formatFromContentType(contentType);
    if (format === null) {
      throw new Problem('unsupported-media-type', `send the rows as text/csv, application/json or application/x-ndjson (got "${contentType || 'none'}")`);
    }
    // Bodies are read as UTF-8 only; a declared charset or content coding the parser would
    // ignore is refused by name rather than later as garbled text.
    const { mediaType, charset } = parseContentType(contentType);
    if (charset !== null && charset !== 'utf-8' && charset !== 'utf8') {
      throw new Problem('unsupported-media-type', `send the rows as UTF-8 text (got charset=${charset})`);
    }
    const contentEncoding = String(request.headers['content-encoding'] ?? '').trim().toLowerCase();
    if (contentEncoding !== '' && contentEncoding !== 'identity') {
      throw new Problem('unsupported-media-type', `send the rows uncompressed (got Content-Encoding: ${contentEncoding})`);
    }
    const declaredLength = Number(request.headers['content-length']);
    if (Number.isFinite(declaredLength) && declaredLength > deps.limits.maxBytes) {
      throw new Problem('payload-too-large', `the upload is larger than ${deps.limits.maxBytes} bytes`, { limit_bytes: deps.limits.maxBytes });
    }
    const body = request.body as Readable | undefined;
    if (!body || typeof (body as Readable).pipe !== 'function') throw new Problem('malformed-body', 'the upload is empty');
    const key = request.headers['idempotency-key'];
    const idempotencyKey = typeof key === 'string' && key.trim() !== '' ? key.trim().slice(0, 200) : null;
    const { on_error: onError, delimiter } = request.query as { on_error: OnError; delimiter: CsvDelimiter };
    if (delimiter !== 'comma' && format !== 'csv') throw new Problem('invalid-request', `delimiter applies to text/csv uploads only (got ${mediaType})`);
    return ingestUpload(
      { ...deps, logger: request.log },
      // Idempotency-Keys are the sending API key's own: another key's same value is another upload.
      { kind, campaignId, body, format, delimiter, contentType: mediaType, onError, idempotencyKey, idempotencyScope: request.apiKey?.keyId ?? 'open' },
    );
  };

  const uploadResponses = { 200: Receipt, 201: Receipt };

  app.post('/v1/customers', { schema: { querystring: uploadQuerySchema, response: uploadResponses } }, async (request, reply) => {
    const { receipt, replayed } = await upload(request, 'customers', null);
    return reply.code(replayed ? 200 : 201).header('location', `/v1/ingests/${receipt.ingest_id}`).header('segrank-receipt-replayed', String(replayed)).send(receipt);
  });

  app.post('/v1/sales', { schema: { querystring: uploadQuerySchema, response: uploadResponses } }, async (request, reply) => {
    const { receipt, replayed } = await upload(request, 'sales', null);
    return reply.code(replayed ? 200 : 201).header('location', `/v1/ingests/${receipt.ingest_id}`).header('segrank-receipt-replayed', String(replayed)).send(receipt);
  });

  app.post(
    '/v1/campaigns/:campaign_id/contacts',
    {
      schema: {
        params: { type: 'object', properties: { campaign_id: { type: 'string', pattern: identifierPattern } }, required: ['campaign_id'] },
        querystring: uploadQuerySchema,
        response: uploadResponses,
      },
    },
    async (request, reply) => {
      const { campaign_id: campaignId } = request.params as { campaign_id: string };
      // Surrounding spaces are dropped as in every other identifier, so spaces alone name nothing.
      if (campaignId.trim() === '') throw new Problem('invalid-request', 'campaign_id must not be blank');
      const { receipt, replayed } = await upload(request, 'contacts', campaignId.trim());
      return reply.code(replayed ? 200 : 201).header('location', `/v1/ingests/${receipt.ingest_id}`).header('segrank-receipt-replayed', String(replayed)).send(receipt);
    },
  );

  app.get(
    '/v1/ingests/:ingest_id',
    { schema: { params: { type: 'object', properties: { ingest_id: { type: 'string' } }, required: ['ingest_id'] }, response: { 200: Receipt } } },
    async (request) => {
      const { ingest_id: ingestId } = request.params as { ingest_id: string };
      const receipt = await findReceipt(deps.readDb, ingestId);
      if (!receipt) throw new Problem('not-found', `no upload with id ${ingestId}`);
      return receipt;
    },
  );

  app.get(
    '/v1/ingests/:ingest_id/rejected',
    {
      schema: {
        params: { type: 'object', properties: { ingest_id: { type: 'string' } }, required: ['ingest_id'] },
        querystring: {
          type: 'object',
          properties: {
            limit: { type: 'integer', minimum: 1, maximum: 10_000, default: 1000 },
            offset: { type: 'integer', minimum: 0, default: 0 },
            format: { type: 'string', enum: ['json', 'csv'] },
          },
          additionalProperties: false,
        },
        response: { 200: RejectedRowsPage },
      },
    },
    async (request, reply) => {
      const { ingest_id: ingestId } = request.params as { ingest_id: string };
      const { limit, offset, format } = request.query as { limit: number; offset: number; format?: 'json' | 'csv' };
      const representation = format ?? negotiate(request, REJECTED_MEDIA_TYPES, 'the rejected rows are available as application/json or text/csv');
      const page = await findRejectedRows(deps.readDb, ingestId, { limit, offset });
      if (!page) throw new Problem('not-found', `no upload with id ${ingestId}`);
      reply.header('vary', 'Accept');
      if (representation === 'json') return page;
      return reply
        .type(REJECTED_MEDIA_TYPES.csv)
        .header('content-disposition', `attachment; filename="rejected-${ingestId}.csv"`)
        .serializer((body: string) => body)
        .send(rejectedRowsCsv(page.rows));
    },
  );

  app.get(
    '/v1/ingests',
    {
      schema: {
        querystring: {
          type: 'object',
          properties: {
            limit: { type: 'integer', minimum: 1, maximum: 1000, default: 100 },
            offset: { type: 'integer', minimum: 0, default: 0 },
            kind: { type: 'string', enum: ['customers', 'sales', 'contacts'] },
            campaign_id: { type: 'string', pattern: identifierPattern },
          },
          additionalProperties: false,
        },
        response: { 200: ReceiptList },
      },
    },
    async (request) => {
      const { limit, offset, kind, campaign_id: campaignId } = request.query as { limit: number; offset: number; kind?: IngestKind; campaign_id?: string };
      return listReceipts(deps.db, { kind: kind ?? null, campaignId: campaignId?.trim() ?? null }, { limit, offset });
    },
  );

  app.get('/v1/campaigns', { schema: { response: { 200: CampaignList } } }, async () => listCampaigns(deps.db));

  app.delete(
    '/v1/customers/:customer_id',
    { schema: { params: { type: 'object', properties: { customer_id: { type: 'string' } }, required: ['customer_id'] } } },
    async (request, reply) => {
      const { customer_id: customerId } = request.params as { customer_id: string };
      const { erased, snapshotsRedacted } = await eraseCustomer(deps.db, customerId, deps.redactSnapshots);
      if (!erased) throw new Problem('not-found', `no customer with id ${customerId}`);
      // Logs carry no customer id: a keyed hash matches lines about one customer within this run.
      request.log.info({ customer: logPseudonym(customerId), snapshotsRedacted }, 'customer erased');
      return reply.code(204).send();
    },
  );
};
