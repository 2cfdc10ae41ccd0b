/**
 * The flat segment table of a snapshot, rendered once per snapshot and format. Snapshots never
 * change, so a rendered table (and its entity tag) stays valid for as long as it is kept; BI
 * tools that poll then cost a small lookup instead of parsing and writing the whole snapshot.
 */
import { createHash } from 'node:crypto';
import { LRUCache } from 'lru-cache';
import { segmentsCsv } from './csv.js';
import { SEGMENT_ROW_FIELDS, toSegmentRow, type Snapshot } from '../report/shapes/index.js';

export type TableFormat = 'json' | 'csv';

export interface RenderedTable {
  snapshotId: string;
  body: string;
  /** The body encoded once as UTF-8, so each response copies bytes instead of encoding 100 kB of text. */
  bytes: Buffer;
  entityTag: string;
}

export function entityTag(body: string | Buffer): string {
  return `"${createHash('sha256').update(body).digest('base64url').slice(0, 32)}"`;
}

export function renderSegmentTable(snapshot: Snapshot, format: TableFormat): RenderedTable {
  const rows = snapshot.segments.map(toSegmentRow);
  const body =
    format === 'csv'
      ? segmentsCsv(rows)
      : JSON.stringify({ report_id: snapshot.report_id, snapshot_id: snapshot.snapshot_id, snapshot_created_at: snapshot.created_at, columns: SEGMENT_ROW_FIELDS, segments: rows });
  return { snapshotId: snapshot.snapshot_id, body, bytes: Buffer.from(body, 'utf8'), entityTag: entityTag(body) };
}

/** A small least-recently-used store of rendered tables, keyed by report, snapshot and format. */
export class SegmentTableCache {
  private readonly entries: LRUCache<string, RenderedTable>;
  constructor(capacity = 64) {
    this.entries = new LRUCache({ max: capacity });
  }

  get(reportId: string, snapshotId: string, format: TableFormat): RenderedTable | undefined {
    return this.entries.get(tableKey(reportId, snapshotId, format));
  }

  /** `version` names the version of the snapshot's body the table was rendered from (its id by default). */
  set(reportId: string, format: TableFormat, table: RenderedTable, version: string = table.snapshotId): void {
    this.entries.set(tableKey(reportId, version, format), table);
    }

  /** Drops every table of one report (it was deleted). */
  forgetReport(reportId: string): void {
    const prefix = `${reportId}\u0000`;
    for (const key of [...this.entries.keys()]) if (key.startsWith(prefix)) this.entries.delete(key);
  }

  clear(): void {
    this.entries.clear();
  }

  get size(): number {
    return this.entries.size;
  }
}

function tableKey(reportId: string, snapshotId: string, format: TableFormat): string {
  return `${reportId}\u0000${snapshotId}\u0000${format}`;
}
