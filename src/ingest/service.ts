/**
 * One upload from body to receipt: receive the whole body (`body-spool.ts`), then parse it as a
 * stream, check each row, write in batches inside one transaction, and record the receipt. Either the whole upload lands (with its rejected
 * rows listed, in skip mode) or nothing of it does.
 */
import { randomUUID } from 'node:crypto';
import type { Readable } from 'node:stream';
import { setImmediate as nextTurn } from 'node:timers/promises';
import type { Kysely } from 'kysely';
import type { Logger } from '../logger.js';
import { spoolBody, type SpooledBody } from './body-spool.js';
export { BodyIdleTimeoutError, ClientAbortedError, UploadTooLargeError } from './body-spool.js';
import { sqliteConnectionOf } from '../db/connect.js';
import { takeCellCountsLock, takeWriteLock } from '../db/write-lock.js';
import { applyCellDeltas } from '../aggregates/apply-deltas.js';
import { CellDeltas } from '../aggregates/cell-deltas.js';
import type { Database, IngestKind, IngestsTable, OnError, RejectedRowsTable } from '../db/tables.js';
import { contactsKind, customersKind, salesKind, type PendingRow, type UploadKind } from './kinds.js';
import { checkColumns, InvalidColumnsError } from './header-check.js';
import { LabelNotes } from './label-notes.js';
import { DEFAULT_PARSE_LIMITS, MalformedBodyError, parseRecords, type CsvDelimiter, type ParsedRecord, type UploadFormat } from './parse.js';
import type { Receipt } from './receipt.js';
import * as repository from './repository.js';
import { UploadKeyRegister } from './upload-keys.js';
import type { RowError } from './row-checks.js';
import type { SnapshotRedaction } from './erasure.js';

export interface IngestLimits {
  maxBytes: number;
  /** Longest pause in the arrival of an upload body before it is given up. */
  idleTimeoutMs: number;
  /** Folder for the temporary files of large upload bodies. */
  spoolDir: string;
  maxRows: number;
  progressEveryRows: number;
}

export interface IngestDependencies {
  /** the writer: uploads and erasure */
  db: Kysely<Database>;
  /** reads that must not wait behind an upload's writes (receipts): on SQLite a second connection */
  readDb: Kysely<Database>;
  logger: Logger;
  limits: IngestLimits;
  now: () => Date;
  /** what an erasure does to stored snapshots (the report layer's redaction), if anything */
  redactSnapshots?: SnapshotRedaction;
}

export interface UploadRequest {
  kind: IngestKind;
  campaignId: string | null;
  body: Readable;
  format: UploadFormat;
  /** The field separator of a CSV upload. */
  delimiter: CsvDelimiter;
  contentType: string;
  onError: OnError;
  idempotencyKey: string | null;
  /** Whose Idempotency-Keys this upload's is among: the sending API key's id, or "open" without keys. */
  idempotencyScope: string;
}

export interface RowProblem extends RowError {
  row: number;
  line: number;
}

/** The upload held bad rows and was all-or-nothing, or every row was bad: nothing was written. */
export class RowsRejectedError extends Error {
  override name = 'RowsRejectedError';
  constructor(
    readonly problems: RowProblem[],
    readonly rejectedCount: number,
    readonly rowCount: number,
    message = `${rejectedCount} of ${rowCount} ${rowCount === 1 ? 'row is' : 'rows are'} invalid; nothing was written`,
  ) {
    super(message);
  }
}

export class TooManyRowsError extends Error {
  override name = 'TooManyRowsError';
  constructor(readonly limitRows: number) {
    super(`the upload has more than ${limitRows} rows`);
  }
}

export class EmptyUploadError extends Error {
  override name = 'EmptyUploadError';
}

/** The customer columns that are built-in dimensions; any other label column is an extra attribute. */
const BUILT_IN_LABELS = ['region', 'channel'] as const;

export class IdempotencyConflictError extends Error {
  override name = 'IdempotencyConflictError';
}

/** Most row problems listed in a rejection response; the count covers all of them. */
const MAX_LISTED_PROBLEMS = 100;
/**
 * Rows checked against stored data and written together. PostgreSQL writes a batch as one
 * multi-row statement, so larger batches save round trips. SQLite runs one prepared statement
 * per row whatever the batch size, and there a small batch is garbage before the next young-
 * generation collection instead of being copied by it: measured on 250,000 customers, 940 ms
 * of scavenges at 2,000 rows per batch, 180–210 ms at 100–200, and a 45 MiB lower peak.
 */
const BATCH_ROWS = { sqlite: 200, postgres: 2_000 } as const;
/**
 * Pending changes to `contact_value_counts` (distinct keys) past which an upload writes them
 * before its end: they are usually far fewer than its rows (most contacts share a value), but
 * an upload of unconverted and converted contacts with distinct revenues could hold one per row.
 */
const PENDING_CELL_KEYS_LIMIT = 100_000;
/** Rows parsed between two turns given back to the event loop (a few milliseconds of work). */
const YIELD_EVERY_ROWS = 500;

const KINDS: Record<IngestKind, UploadKind<unknown>> = {
  customers: customersKind as UploadKind<unknown>,
  sales: salesKind as UploadKind<unknown>,
  contacts: contactsKind as UploadKind<unknown>,
};

export async function ingestUpload(deps: IngestDependencies, request: UploadRequest): Promise<{ receipt: Receipt; replayed: boolean }> {
  const started = performance.now();
  // The whole body arrives before the database is touched, so a slow or stalled client holds
  // no transaction (on SQLite the single writer) while it sends.
  const spooled = await spoolBody(request.body, { maxBytes: deps.limits.maxBytes, idleTimeoutMs: deps.limits.idleTimeoutMs, spoolDir: deps.limits.spoolDir });
  try {
    return await storeUpload(deps, request, spooled, started);
  } finally {
    await spooled.dispose();
  }
}

async function storeUpload(deps: IngestDependencies, request: UploadRequest, spooled: SpooledBody, started: number): Promise<{ receipt: Receipt; replayed: boolean }> {
  if (request.idempotencyKey !== null) {
    const earlier = await repository.findIngestByIdempotencyKey(deps.db, request.idempotencyScope, request.idempotencyKey);
    if (earlier) {
      if (earlier.sha256 !== spooled.sha256) {
        throw new IdempotencyConflictError('this Idempotency-Key was used for an upload with a different body');
      }
      // The same bytes sent elsewhere (another kind, campaign, format or on_error) are another
      // request; replaying the first receipt would report an upload that never happened.
      if (earlier.kind !== request.kind || earlier.campaign_id !== request.campaignId || earlier.content_type !== request.contentType || earlier.on_error !== request.onError) {
        throw new IdempotencyConflictError(
          `this Idempotency-Key was used for a ${earlier.kind} upload${earlier.campaign_id === null ? '' : ` to campaign ${earlier.campaign_id}`} as ${earlier.content_type} with on_error=${earlier.on_error}`,
        );
      }
      return { receipt: toReceipt(earlier), replayed: true };
    }
  }
  const body = spooled.open();

  const kind = KINDS[request.kind];
  const ingestId = randomUUID();
  const receivedAt = deps.now().toISOString();
  const today = receivedAt.slice(0, 10);
  const log = deps.logger.child({ ingestId, kind: request.kind, campaignId: request.campaignId });
  log.info({ format: request.format, onError: request.onError }, 'upload started');

  const receipt = await deps.db
    .transaction()
    .execute(async (trx) => {
    const store: repository.UploadStore = { trx, sqlite: sqliteConnectionOf(deps.db) };
    // A customers upload may move stored contacts between cells (their copied region, channel,
    // type and age), which an upload of contacts for the same customers at the same time would
    // count in the old cells: on PostgreSQL it runs alone, as an erasure does.
    await takeWriteLock(trx, store.sqlite !== null, request.kind === 'customers' ? 'customers' : 'upload');
    log.debug('upload writing');
    if (request.campaignId !== null) await repository.ensureCampaign(trx, request.campaignId, receivedAt);
    const batchRows = store.sqlite === null ? BATCH_ROWS.postgres : BATCH_ROWS.sqlite;
    const mayExist = await repository.hasStoredRows(trx, request.kind, request.campaignId);
    // The upload's keys with the line of each one's first occurrence, held in memory only.
    const seenKeys = new UploadKeyRegister();
    const problems: RowProblem[] = [];
    const rejectedRows: RejectedRowsTable[] = [];
    const totals = { rows: 0, inserted: 0, updated: 0, unchanged: 0, rejected: 0, holdout: 0 };
    const notes = new LabelNotes();
    let write = true;
    const cellDeltas = new CellDeltas();
    // Written once at the end (or early past the limit): each key once per statement, in one order.
    const writeCellDeltas = async () => {
      if (cellDeltas.size === 0) return;
      await takeCellCountsLock(trx, store.sqlite !== null);
      await applyCellDeltas(trx, cellDeltas, store.sqlite);
      cellDeltas.clear();
    };
    let nextProgress = deps.limits.progressEveryRows;

    // The customer a rejected row was about is kept with it, so erasing the customer erases it too.
    const reject = (rowNumber: number, line: number, errors: RowError[], customerId: string | null) => {
      totals.rejected += 1;
      for (const error of errors) {
        if (request.onError === 'reject') {
          write = false;
          if (problems.length < MAX_LISTED_PROBLEMS) problems.push({ row: rowNumber, line, ...error });
        } else {
          rejectedRows.push({
            ingest_id: ingestId,
            ordinal: rejectedRows.length + 1,
            row_number: rowNumber,
            line,
            customer_id: customerId,
            column_name: error.column,
            value: error.value,
            reason: error.reason,
          });
        }
      }
    };

    let batch: Array<PendingRow<unknown>> = [];
    const flush = async () => {
      if (batch.length === 0) return;
      const outcome = await kind.applyBatch({ store, write, mayExist, ingestId, now: receivedAt, campaignId: request.campaignId, cellDeltas }, batch);
      if (write && cellDeltas.size >= PENDING_CELL_KEYS_LIMIT) await writeCellDeltas();
      totals.inserted += outcome.inserted;
      totals.updated += outcome.updated;
      totals.unchanged += outcome.unchanged;
      totals.holdout += outcome.holdout;
      for (const { rowNumber, line, customerId, error } of outcome.rejected) reject(rowNumber, line, [error], customerOf({ customer_id: customerId }));
      batch = [];
    };

    for await (const record of parseRecords(body, request.format, DEFAULT_PARSE_LIMITS, request.delimiter)) {
      totals.rows = record.row;
      if (record.row > deps.limits.maxRows) throw new TooManyRowsError(deps.limits.maxRows);
      // The columns are checked once, on the first row (a CSV header, or the first JSON object).
      if (record.row === 1) {
        const issues = checkColumns(request.kind, record.columns ?? [...record.fields.keys()]);
        if (issues.length > 0) throw new InvalidColumnsError(issues, record.columnsLine ?? record.line);
      }
      const checked = checkRecord(kind, record, today);
      if (!checked.ok) {
        reject(record.row, record.line, checked.errors, customerOf(Object.fromEntries(record.fields)));
      } else {
        const key = kind.key(checked.row);
        const firstLine = seenKeys.firstSeenOn(key, record.line);
        if (firstLine !== null) {
          reject(record.row, record.line, [{ column: kind.keyColumn, value: key, reason: `${kind.keyColumn} ${key} appears twice in this upload (first on line ${firstLine})` }], customerOf(checked.row));
        } else {
          if (kind.labels) notes.see(kind.labels(checked.row), BUILT_IN_LABELS);
          batch.push({ row: checked.row, line: record.line, rowNumber: record.row });
          if (batch.length >= batchRows) await flush();
        }
      }
      // Parsing buffered body data and writing batches chains promises only, which kept the event
      // loop from its timers and sockets for half a second at a time (measured on a 250,000-row
      // upload). Giving up the turn every few hundred rows lets health checks and other requests
      // in, and keeps the load monitor from reading the upload as a stalled loop (503s).
      if (record.row % YIELD_EVERY_ROWS === 0) await nextTurn();
      if (record.row >= nextProgress) {
        const seconds = (performance.now() - started) / 1000;
        log.info({ rows: record.row, rowsPerSecond: Math.round(record.row / seconds), megabytes: Math.round(spooled.bytes / 1e5) / 10 }, 'upload progress');
        nextProgress += deps.limits.progressEveryRows;
      }
    }
    await flush();
    seenKeys.clear();
    if (totals.rows === 0) throw new EmptyUploadError(emptyUploadMessage(request.format, spooled));
    if (request.onError === 'reject' && totals.rejected > 0) {
      throw new RowsRejectedError(problems, totals.rejected, totals.rows);
    }
    // Skipping bad rows is for keeping the good ones; with none left the upload failed, and
    // answering 201 with nothing stored would read as success.
    if (totals.rejected === totals.rows) {
      throw new RowsRejectedError(
        rejectedRows.slice(0, MAX_LISTED_PROBLEMS).map((rejected) => ({ row: rejected.row_number, line: rejected.line, column: rejected.column_name, value: rejected.value, reason: rejected.reason })),
        totals.rejected,
        totals.rows,
        `every row was rejected (${totals.rows === 1 ? 'the only row' : `all ${totals.rows}`}), so on_error=skip kept nothing; nothing was written`,
      );
    }

    await writeCellDeltas();

    const stored: IngestsTable = {
      ingest_id: ingestId,
      kind: request.kind,
      campaign_id: request.campaignId,
      on_error: request.onError,
      content_type: request.contentType,
      rows_received: totals.rows,
      inserted: totals.inserted,
      updated: totals.updated,
      unchanged: totals.unchanged,
      rejected: totals.rejected,
      holdout_rows: totals.holdout,
      sha256: spooled.sha256,
      idempotency_key: request.idempotencyKey,
      idempotency_scope: request.idempotencyKey === null ? null : request.idempotencyScope,
      received_at: receivedAt,
      duration_ms: Math.round(performance.now() - started),
      extra_attributes: JSON.stringify(notes.extraAttributes()),
      warnings: JSON.stringify(kind.labels ? await notes.warnings(trx) : []),
    };
    await repository.insertIngest(trx, stored);
    await repository.insertRejectedRows(store, rejectedRows);
    return toReceipt(stored);
  })
    .catch((error: unknown) => {
      // Two uploads with the same new Idempotency-Key at once: the second to commit loses.
      if (request.idempotencyKey !== null && isUniqueViolation(error)) {
        throw new IdempotencyConflictError('another upload with this Idempotency-Key was stored first; repeat the request to get its receipt');
      }
      // A CSV or NDJSON body of one line whose rows were run together fails on its header or
      // JSON first; the missing line breaks are the cause to name.
      if (error instanceof MalformedBodyError && isSingleLine(request.format, spooled)) {
        throw new EmptyUploadError(`${emptyUploadMessage(request.format, spooled)} (read as one line: ${error.message})`);
      }
      throw error;
    });

  const seconds = receipt.duration_ms / 1000;
  log.info({ ...receipt, rowsPerSecond: seconds > 0 ? Math.round(receipt.rows / seconds) : null }, 'upload stored');
  return { receipt, replayed: false };
}

function isUniqueViolation(error: unknown): boolean {
  const code = (error as { code?: unknown } | null)?.code;
  return code === '23505' || code === 'SQLITE_CONSTRAINT_UNIQUE';
}

function customerOf(row: unknown): string | null {
  const value = (row as { customer_id?: unknown } | undefined)?.customer_id;
  return typeof value === 'string' && value.trim() !== '' ? value.trim().slice(0, 200) : null;
}

function checkRecord(kind: UploadKind<unknown>, record: ParsedRecord, today: string) {
  if (record.defect) return { ok: false as const, errors: [record.defect] };
  return kind.check(record.fields, today);
}

export function toReceipt(row: IngestsTable): Receipt {
  return {
    ingest_id: row.ingest_id,
    kind: row.kind,
    campaign_id: row.campaign_id,
    on_error: row.on_error,
    content_type: row.content_type,
    rows: Number(row.rows_received),
    inserted: Number(row.inserted),
    updated: Number(row.updated),
    unchanged: Number(row.unchanged),
    rejected: Number(row.rejected),
    holdout_rows: Number(row.holdout_rows),
    sha256: row.sha256,
    idempotency_key: row.idempotency_key,
    received_at: row.received_at,
    duration_ms: Number(row.duration_ms),
    extra_attributes: stringList(row.extra_attributes),
    warnings: stringList(row.warnings),
  };
}

function stringList(json: string): string[] {
  const value: unknown = JSON.parse(json);
  return Array.isArray(value) ? value.map(String) : [];
}

/** Whether a line-based body (CSV, NDJSON) arrived whole as one line. */
function isSingleLine(format: UploadFormat, body: SpooledBody): boolean {
  return format !== 'json' && body.bytes > 0 && !body.sawLineBreak;
}

/** Why an upload has no data rows, with the likeliest cause when the body was a single line. */
function emptyUploadMessage(format: UploadFormat, body: SpooledBody): string {
  if (isSingleLine(format, body)) {
    return 'the upload holds no data rows: the body is a single line, as when `curl -d @file` strips the line breaks; send the file with `curl --data-binary @file`';
  }
  return format === 'csv' ? 'the upload holds no data rows: the CSV has a header row but nothing below it' : 'the upload holds no data rows';
}
