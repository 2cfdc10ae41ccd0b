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
} from './repository.js';
