/**
 * Response bodies and path parameters shared by routes, declared once: fastify validates and
 * serializes through them (so no field leaks out unlisted) and the OpenAPI components are
 * generated from them.
 */
import { Type } from 'typebox';

export { Campaign, CampaignList } from '../ingest/campaigns.js';
export { Receipt, ReceiptList, RejectedRowsPage } from '../ingest/receipt.js';

export const Health = Type.Object({
  status: Type.Unsafe<'ok' | 'unavailable'>({ type: 'string', enum: ['ok', 'unavailable'] }),
  database: Type.String(),
});

const resourceId = () => Type.String({ minLength: 1, maxLength: 200 });

/** Path parameters of every route under /v1/reports/:report_id and /reports/:report_id. */
export const ReportIdParams = Type.Object({ report_id: resourceId() });

export const SnapshotParams = Type.Object({ report_id: resourceId(), snapshot_id: resourceId() });
