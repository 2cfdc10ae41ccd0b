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

/**
 * One row of the BI pull: the snapshot's id and as-of time, the rank, one column per report
 * dimension (its label there, or null), then the segment row's other fields.
 */
const SegmentTableRow = Type.Object(
  {
    snapshot_id: Type.String(),
    as_of: Type.String({ format: 'date-time', description: 'when the snapshot was computed' }),
    ...SegmentRow.properties,
  },
  {
    additionalProperties: Type.Union([Type.String(), Type.Null()]),
    description: 'the other properties are the report dimensions, each holding the segment label for that dimension, null where the segment does not fix it',
  },
);

/** The JSON form of the BI pull: the flat rows of one snapshot, with their column names in order. */
export const SegmentTable = Type.Object({
  report_id: Type.String(),
  snapshot_id: Type.String(),
  snapshot_created_at: Type.String({ format: 'date-time' }),
  columns: Type.Array(Type.String(), { description: 'snapshot_id, as_of, rank, one per report dimension, then the SegmentRow fields after rank' }),
  segments: Type.Array(SegmentTableRow),
});
