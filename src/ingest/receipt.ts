/**
 * The receipt of an upload, declared once: its TypeScript type, the response validation of the
 * upload and receipt routes and the OpenAPI component all come from this declaration.
 */
import { Type, type Static } from 'typebox';

const count = (description?: string) => Type.Integer({ minimum: 0, ...(description === undefined ? {} : { description }) });

/** What an upload answers, and what `GET /v1/ingests/{id}` answers later. */
export const Receipt = Type.Object(
  {
    ingest_id: Type.String(),
    kind: Type.Unsafe<'customers' | 'sales' | 'contacts'>({ type: 'string', enum: ['customers', 'sales', 'contacts'] }),
    campaign_id: Type.Union([Type.String(), Type.Null()]),
    on_error: Type.Unsafe<'reject' | 'skip'>({ type: 'string', enum: ['reject', 'skip'] }),
    content_type: Type.String(),
    rows: count('Data rows received.'),
    inserted: count(),
    updated: count(),
    unchanged: count('Rows whose key was already stored with the same values.'),
    rejected: count(),
    holdout_rows: count('Rows of a contacts upload stored as holdout (kept out of the campaign on purpose); 0 for other uploads.'),
    sha256: Type.String({ pattern: '^[0-9a-f]{64}$', description: 'SHA-256 of the request body as received.' }),
    idempotency_key: Type.Union([Type.String(), Type.Null()]),
    received_at: Type.String({ format: 'date-time' }),
    duration_ms: count(),
    extra_attributes: Type.Array(Type.String(), {
      description: 'The extra attribute columns a customer upload stored (each usable as a report dimension); empty for other uploads.',
    }),
    warnings: Type.Array(Type.String(), {
      description: 'What the upload stored but may not have meant, such as labels differing from stored ones only in case or spacing.',
    }),
  },
  { additionalProperties: false },
);

export type Receipt = Static<typeof Receipt>;

/** One page of the rows an upload with `on_error=skip` left out. */
export const RejectedRowsPage = Type.Object(
  {
    ingest_id: Type.String(),
    total: Type.Integer({ description: 'Rejected rows of the upload in all.' }),
    limit: Type.Integer(),
    offset: Type.Integer(),
    rows: Type.Array(
      Type.Object(
        {
          row: Type.Integer({ description: '1-based data row (the CSV header is not a row).' }),
          line: Type.Integer({ description: '1-based line of the upload where the row starts.' }),
          column: Type.Union([Type.String(), Type.Null()]),
          value: Type.Union([Type.String(), Type.Null()]),
          reason: Type.String(),
        },
        { additionalProperties: false },
      ),
    ),
  },
  { additionalProperties: false },
);

export type RejectedRowsPage = Static<typeof RejectedRowsPage>;

/** One page of receipts, newest first. */
export const ReceiptList = Type.Object(
  {
    total: Type.Integer({ minimum: 0, description: 'Receipts matching the filter in all.' }),
    limit: Type.Integer(),
    offset: Type.Integer(),
    ingests: Type.Array(Receipt),
  },
  { additionalProperties: false },
);

export type ReceiptList = Static<typeof ReceiptList>;
