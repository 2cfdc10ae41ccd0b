/** Every SQL statement about report definitions and snapshots. */
export {
  countSnapshots,
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
  type SnapshotMeta,
} from './repository.js';
