/**
 * The report resources as the API answers them, declared once: fastify serializes responses
 * through these schemas (so no field leaks out unlisted), the types are read from them, and
 * the OpenAPI components are generated from them.
 */
import { Type, type Static } from 'typebox';
import { ReportDefinition } from '../definition/index.js';
import { SegmentRow, SnapshotTrigger } from './snapshot.js';

const LatestSnapshot = Type.Object({ snapshot_id: Type.String(), sequence: Type.Integer(), created_at: Type.String({ format: 'date-time' }) });

/** A saved report: its id, its definition with every default filled in, and its latest snapshot. */
export const Report = Type.Object({
  report_id: Type.String(),
  ...ReportDefinition.properties,
  created_at: Type.String({ format: 'date-time' }),
  latest_snapshot: Type.Union([LatestSnapshot, Type.Null()]),
});
export type Report = Static<typeof Report>;

export const ReportList = Type.Object({ reports: Type.Array(Report) });

export const SnapshotMeta = Type.Object({
  snapshot_id: Type.String(),
  report_id: Type.String(),
  sequence: Type.Integer(),
  created_at: Type.String({ format: 'date-time' }),
  fingerprint: Type.String(),
  population_rows: Type.Integer(),
  segment_count: Type.Integer(),
  duration_ms: Type.Integer(),
  trigger: SnapshotTrigger,
});

export const SnapshotList = Type.Object({
  report_id: Type.String(),
  total: Type.Integer(),
  limit: Type.Integer(),
  offset: Type.Integer(),
  snapshots: Type.Array(SnapshotMeta),
});

/** The JSON form of the BI pull: the flat rows of one snapshot, with their column names. */
export const SegmentTable = Type.Object({
  report_id: Type.String(),
  snapshot_id: Type.String(),
  snapshot_created_at: Type.String({ format: 'date-time' }),
  columns: Type.Array(Type.String()),
  segments: Type.Array(SegmentRow),
});
