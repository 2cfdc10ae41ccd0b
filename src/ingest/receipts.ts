/**
 * Reading back what an upload left: its receipt and the rows it rejected. Ingest ids are UUIDs
 * the service made; any other text names no upload, so the database is not asked.
 */
import type { Kysely } from 'kysely';
import type { Database } from '../db/tables.js';
import * as repository from './repository.js';
import type { IngestKind } from '../db/tables.js';
import { listIngests } from './listing-repository.js';
import type { Receipt, ReceiptList, RejectedRowsPage } from './receipt.js';
import { toReceipt } from './service.js';

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/;

async function findIngest(db: Kysely<Database>, ingestId: string) {
  return UUID.test(ingestId) ? repository.findIngest(db, ingestId) : undefined;
}

/** The receipt of an upload, or undefined when there is no upload with this id. */
export async function findReceipt(db: Kysely<Database>, ingestId: string): Promise<Receipt | undefined> {
  const stored = await findIngest(db, ingestId);
  return stored === undefined ? undefined : toReceipt(stored);
}

/** One page of the rows an upload rejected, in upload order, or undefined when there is no upload with this id. */
export async function findRejectedRows(db: Kysely<Database>, ingestId: string, page: { limit: number; offset: number }): Promise<RejectedRowsPage | undefined> {
  const stored = await findIngest(db, ingestId);
  if (stored === undefined) return undefined;
  const rows = await repository.listRejectedRows(db, ingestId, page);
  return {
    ingest_id: ingestId,
    total: Number(stored.rejected),
    limit: page.limit,
    offset: page.offset,
    rows: rows.map((row) => ({ row: Number(row.row_number), line: Number(row.line), column: row.column_name, value: row.value, reason: row.reason })),
  };
}

/** One page of receipts, newest first, optionally of one kind or one campaign. */
export async function listReceipts(
  db: Kysely<Database>,
  filter: { kind: IngestKind | null; campaignId: string | null },
  page: { limit: number; offset: number },
): Promise<ReceiptList> {
  const { rows, total } = await listIngests(db, filter, page);
  return { total, limit: page.limit, offset: page.offset, ingests: rows.map(toReceipt) };
}
