/**
 * The flat segment table of a snapshot for BI tools: one row per segment, led by the snapshot
 * id and its as-of time (so weekly appends can be told apart) and the rank, then one column per
 * report dimension holding the segment's label there (empty where the segment does not fix
 * that dimension), then the fixed segment fields. Rendered once per snapshot and format:
 * snapshots never change, so a rendered table (and its entity tag) stays valid for as long as
 * it is kept, and BI tools that poll cost a small lookup instead of parsing the whole snapshot.
 */
import { createHash } from 'node:crypto';
import { gzipSync } from 'node:zlib';
import { LRUCache } from 'lru-cache';
import { tableCsv } from './csv.js';
import { SEGMENT_ROW_FIELDS, type Snapshot } from '../report/shapes/index.js';
import { withoutHoldout } from '../report/analysis/index.js';
import { publishedSnapshotText, type ReportDependencies } from '../report/snapshot/index.js';
import { SnapshotVersionCache } from './snapshot-versions.js';

export type TableFormat = 'json' | 'csv';

export interface TableOptions {
  /** start the CSV with a UTF-8 byte order mark, for spreadsheet programs that guess the encoding otherwise */
  bom: boolean;
  /** include the holdout columns (empty) even when the report's population has no holdout customers, for a fixed layout */
  holdoutColumns?: boolean;
}

export interface RenderedTable {
  snapshotId: string;
  body: string;
  /** The body encoded once as UTF-8, so each response copies bytes instead of encoding 100 kB of text. */
  bytes: Buffer;
  entityTag: string;
  /**
   * The bytes gzip-compressed once, for clients that accept it (BI tools do): the bench's 150 kB table
   * leaves as 33 kB, without compressing per request. A representation of its
   * own, so it has its own entity tag.
   */
  gzipped: Buffer;
  gzippedEntityTag: string;
}

const UTF8_BOM = '\uFEFF';
const LEADING_COLUMNS = ['snapshot_id', 'as_of', 'rank'] as const;
const SEGMENT_COLUMNS = SEGMENT_ROW_FIELDS.filter((field) => field !== 'rank');
const HOLDOUT_COLUMNS: readonly string[] = Object.keys(withoutHoldout());
/** The table of a report without holdout customers keeps the columns it had before holdouts existed. */
const COLUMNS_WITHOUT_HOLDOUT = SEGMENT_COLUMNS.filter((field) => !HOLDOUT_COLUMNS.includes(field));

export function entityTag(body: string | Buffer): string {
  return `"${createHash('sha256').update(body).digest('base64url').slice(0, 32)}"`;
}

/**
 * The column holding a dimension's label: the dimension's own name, or `dimension_<name>` when
 * an extra customer column shares its name with a fixed column (say, one called `n`).
 * @example
 * dimensionColumn('region'); // 'region'
 * dimensionColumn('verdict'); // 'dimension_verdict'
 */
function dimensionColumn(dimension: string): string {
  const taken: readonly string[] = [...LEADING_COLUMNS, ...SEGMENT_COLUMNS];
  return taken.includes(dimension) ? `dimension_${dimension}` : dimension;
}

/** The table's columns in order, for a report over these dimensions (with the holdout figures when its population has holdout customers). */
export function segmentTableColumns(dimensions: readonly string[], withHoldout = false): string[] {
  return [...LEADING_COLUMNS, ...dimensions.map(dimensionColumn), ...(withHoldout ? SEGMENT_COLUMNS : COLUMNS_WITHOUT_HOLDOUT)];
}

function hasHoldout(snapshot: Snapshot): boolean {
  return snapshot.segments.some((segment) => segment.holdout_n !== null);
}

/** The table's rows, each keyed by the columns in their order. */
function segmentTableRows(snapshot: Snapshot, withHoldout: boolean): Array<Record<string, unknown>> {
  const dimensions = snapshot.definition.dimensions;
  const fields = withHoldout ? SEGMENT_COLUMNS : COLUMNS_WITHOUT_HOLDOUT;
  return snapshot.segments.map((segment) => {
    const row: Record<string, unknown> = { snapshot_id: snapshot.snapshot_id, as_of: snapshot.created_at, rank: segment.rank };
    for (const dimension of dimensions) row[dimensionColumn(dimension)] = segment.values[dimension] ?? null;
    for (const field of fields) row[field] = segment[field as keyof typeof segment];
    return row;
  });
}

function renderSegmentTable(snapshot: Snapshot, format: TableFormat, options: TableOptions = { bom: false }): RenderedTable {
  const withHoldout = hasHoldout(snapshot) || options.holdoutColumns === true;
  const columns = segmentTableColumns(snapshot.definition.dimensions, withHoldout);
  const rows = segmentTableRows(snapshot, withHoldout);
  const body =
    format === 'csv'
      ? `${options.bom ? UTF8_BOM : ''}${tableCsv(columns, rows)}`
      : JSON.stringify({ report_id: snapshot.report_id, snapshot_id: snapshot.snapshot_id, snapshot_created_at: snapshot.created_at, columns, segments: rows });
  const bytes = Buffer.from(body, 'utf8');
  const tag = entityTag(body);
  return { snapshotId: snapshot.snapshot_id, body, bytes, entityTag: tag, gzipped: gzipSync(bytes), gzippedEntityTag: `${tag.slice(0, -1)}-gzip"` };
}

/** A small least-recently-used store of rendered tables, keyed by report, snapshot, format and options. */
export class SegmentTableCache {
  private readonly entries: LRUCache<string, RenderedTable>;
  /** Which version of a snapshot a request names; see snapshot-versions.ts for how long it is trusted. */
  readonly versions: SnapshotVersionCache;
  constructor(capacity = 64, versionValidityMs = 0) {
    this.entries = new LRUCache({ max: capacity });
    this.versions = new SnapshotVersionCache(versionValidityMs);
  }

  get(reportId: string, snapshotId: string, format: TableFormat, options: TableOptions = { bom: false }): RenderedTable | undefined {
    return this.entries.get(tableKey(reportId, snapshotId, format, options));
  }

  /** `version` names the version of the snapshot's body the table was rendered from (its id by default). */
  set(reportId: string, format: TableFormat, table: RenderedTable, options: TableOptions = { bom: false }, version: string = table.snapshotId): void {
    this.entries.set(tableKey(reportId, version, format, options), table);
  }

  /** Drops every table of one report (it was deleted). */
  forgetReport(reportId: string): void {
    this.versions.forgetAll();
    const prefix = `${reportId}\u0000`;
    for (const key of [...this.entries.keys()]) if (key.startsWith(prefix)) this.entries.delete(key);
  }

  clear(): void {
    this.versions.forgetAll();
    this.entries.clear();
  }

  get size(): number {
    return this.entries.size;
  }
}

function tableKey(reportId: string, snapshotId: string, format: TableFormat, options: TableOptions): string {
  return `${reportId}\u0000${snapshotId}\u0000${format}\u0000${options.bom ? 'bom' : ''}\u0000${options.holdoutColumns === true ? 'holdout' : ''}`;
}

/**
 * The flat segment table of a snapshot (`latest` for the newest) in one format, rendered once
 * and then served from `cache`; undefined when there is no such snapshot.
 */
export async function segmentTable(
  deps: ReportDependencies,
  cache: SegmentTableCache,
  reportId: string,
  snapshotId: string,
  format: TableFormat,
  options: TableOptions = { bom: false },
): Promise<RenderedTable | undefined> {
  // An erasure may redact a stored snapshot, so a rendered table is kept per version of the body.
  const version = await cache.versions.lookup(deps, reportId, snapshotId);
  if (version === undefined) return undefined;
  const cached = cache.get(reportId, version.key, format, options);
  if (cached) return cached;
  const stored = await publishedSnapshotText(deps, reportId, version.snapshotId);
  if (stored === undefined) return undefined;
  const table = renderSegmentTable(JSON.parse(stored) as Snapshot, format, options);
  cache.set(reportId, format, table, options, version.key);
  return table;
}
