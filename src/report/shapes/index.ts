/** What a snapshot is made of: its declarations and types, the verdicts and the column order of the flat table. */
export {
  AgeValueGridCell,
  Comparison,
  Correlation,
  DataQuality,
  Descriptives,
  DimensionProfile,
  DimensionValueProfile,
  type EquivalenceTest,
  HistogramFigure,
  PopulationFigures,
  Reversal,
  SEGMENT_ROW_FIELDS,
  SegmentChange,
  SegmentRow,
  Snapshot,
  SnapshotSegment,
  VERDICTS,
  Verdict,
  toSegmentRow,
  type SegmentRowField,
} from './snapshot.js';
export { Report, ReportList, SegmentTable, SnapshotList, SnapshotMeta } from './resources.js';
