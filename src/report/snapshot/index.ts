/**
 * Snapshots: built purely from the aggregates (`buildSnapshot`) with the profiles and
 * population figures that go into them, and made, stored and read through the report service.
 */
export { buildSnapshot } from './build.js';
export { createSnapshotBuilder, SnapshotBuildFailedError, type SnapshotBuilder } from './build-pool.js';
export { SpendBeyondLimitError } from '../../segments/index.js';
export { TooManyLabelsError } from './label-limit.js';
export type { SnapshotInput } from './input.js';
export { redactStoredSnapshots } from './redaction.js';
export {
  MAX_EXPANDED_VALUES,
  ageValueGridAxes,
  ageValueGridCells,
  correlationFromSums,
  describeDistribution,
  populationDescriptives,
  populationHistograms,
} from './profiles.js';
export {
  ReportNotFoundError,
  SnapshotNotFoundError,
  createReport,
  deleteReport,
  getReport,
  getSnapshotBody,
  listReports,
  listSnapshots,
  refreshReport,
  refreshReportText,
  replaceReport,
  reportDependencies,
  snapshotVersionKey,
  snapshotInContext,
  publishedSnapshotText,
  type ReportDependencies,
} from './service.js';
