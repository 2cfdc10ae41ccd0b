/**
 * Snapshots: built purely from the aggregates (`buildSnapshot`) with the profiles and
 * population figures that go into them, and made, stored and read through the report service.
 */
export { buildSnapshot } from './build.js';
export { fingerprintOf } from './fingerprint.js';
export type { SnapshotIdentity, SnapshotInput } from './input.js';
export {
  MAX_EXPANDED_VALUES,
  MAX_GRID_BINS,
  ageValueGridAxes,
  ageValueGridCells,
  correlationFromSums,
  describeDistribution,
  populationDescriptives,
  populationHistograms,
} from './profiles.js';
export {
  ReportNotFoundError,
  createReport,
  getReport,
  getSnapshotBody,
  listReports,
  listSnapshots,
  precedingWindow,
  refreshReport,
  reportDependencies,
  segmentTable,
  valueDistributionScope,
  type ReportDependencies,
  type ReportResource,
} from './service.js';
