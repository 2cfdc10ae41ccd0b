/** Every SQL statement about report definitions and snapshots. */
export {
  countSnapshots,
  deleteReport,
  findReport,
  findSnapshotBody,
  insertReport,
  insertSnapshot,
  latestSnapshotId,
  latestSnapshotMeta,
  listReportIdsByRefresh,
  listReports,
  listSnapshots,
  missingAttributes,
  missingCampaigns,
  nextSnapshotSequence,
  replaceReportDefinition,
  type SnapshotMeta,
} from './repository.js';
