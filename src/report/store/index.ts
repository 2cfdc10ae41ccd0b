/** Every SQL statement about report definitions and snapshots. */
export {
  countSnapshots,
  findReport,
  findSnapshotBody,
  insertReport,
  insertSnapshot,
  latestSnapshotMeta,
  listReportIdsByRefresh,
  listReports,
  listSnapshots,
  missingAttributes,
  missingCampaigns,
  nextSnapshotSequence,
  replaceRedactedBody,
  snapshotBodies,
  snapshotVersion,
  type SnapshotMeta,
} from './repository.js';
