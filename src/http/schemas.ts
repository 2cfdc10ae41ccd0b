/** Response schemas shared by routes; fastify serializes through them, so no field leaks out unlisted. */

export const receiptSchema = {
  type: 'object',
  required: ['ingest_id', 'kind', 'campaign_id', 'on_error', 'rows', 'inserted', 'updated', 'unchanged', 'rejected', 'sha256', 'received_at', 'duration_ms'],
  properties: {
    ingest_id: { type: 'string' },
    kind: { type: 'string', enum: ['customers', 'sales', 'contacts'] },
    campaign_id: { type: ['string', 'null'] },
    on_error: { type: 'string', enum: ['reject', 'skip'] },
    content_type: { type: 'string' },
    rows: { type: 'integer' },
    inserted: { type: 'integer' },
    updated: { type: 'integer' },
    unchanged: { type: 'integer' },
    rejected: { type: 'integer' },
    sha256: { type: 'string' },
    idempotency_key: { type: ['string', 'null'] },
    received_at: { type: 'string' },
    duration_ms: { type: 'integer' },
  },
} as const;

export const rejectedRowsPageSchema = {
  type: 'object',
  required: ['ingest_id', 'total', 'limit', 'offset', 'rows'],
  properties: {
    ingest_id: { type: 'string' },
    total: { type: 'integer' },
    limit: { type: 'integer' },
    offset: { type: 'integer' },
    rows: {
      type: 'array',
      items: {
        type: 'object',
        required: ['row', 'line', 'column', 'value', 'reason'],
        properties: {
          row: { type: 'integer' },
          line: { type: 'integer' },
          column: { type: ['string', 'null'] },
          value: { type: ['string', 'null'] },
          reason: { type: 'string' },
        },
      },
    },
  },
} as const;

export const healthSchema = {
  type: 'object',
  required: ['status', 'database'],
  properties: { status: { type: 'string', enum: ['ok', 'unavailable'] }, database: { type: 'string' } },
} as const;

/** Path parameters of every route under /v1/reports/:report_id and /reports/:report_id. */
export const reportIdParams = {
  type: 'object',
  required: ['report_id'],
  properties: { report_id: { type: 'string', minLength: 1, maxLength: 200 } },
} as const;
