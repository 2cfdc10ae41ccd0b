/**
 * Snapshots: built purely from the aggregates (`buildSnapshot`), and made, stored and read
 * through the report service.
 */
export { buildSnapshot, fingerprintOf, rankSegments, type PreviousWindow, type SnapshotIdentity, type SnapshotInput } from './build.js';
export {
  MAX_EXPANDED_VALUES,
  MAX_GRID_BINS,
  ageGridAxis,
  ageValueGridAxes,
  ageValueGridCells,
  correlationFromSums,
  describeDistribution,
  dimensionProfiles,
  isExpandable,
  populationDescriptives,
  populationHistograms,
  type ProfileInput,
  type WeightedValue,
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
