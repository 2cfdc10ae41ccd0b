/**
 * Every SQL statement about report definitions and snapshots. Snapshots are written once and
 * never updated; their body is the whole snapshot as JSON text.
 */
import type { Kysely } from 'kysely';
import { sqliteConnectionOf } from '../../db/connect.js';
import type { Executor } from '../../db/executor.js';
import { prepared } from '../../db/prepared.js';
import type { Database, ReportSnapshotsTable, ReportsTable } from '../../db/tables.js';

/** Stores a new report definition. */
export async function insertReport(db: Executor, row: ReportsTable): Promise<void> {
  await db.insertInto('reports').values(row).execute();
}

/** One report definition, or undefined when there is none with this id. */
export async function findReport(db: Executor, reportId: string): Promise<ReportsTable | undefined> {
  return db.selectFrom('reports').selectAll().where('report_id', '=', reportId).executeTakeFirst();
}

/** Replaces the definition of a report; false when there is none with this id. */
export async function replaceReportDefinition(db: Executor, reportId: string, changes: Pick<ReportsTable, 'name' | 'definition' | 'refresh'>): Promise<boolean> {
  const result = await db.updateTable('reports').set(changes).where('report_id', '=', reportId).executeTakeFirst();
  return Number(result.numUpdatedRows) > 0;
}

/** Deletes a report and its snapshots; false when there is none with this id. */
export async function deleteReport(db: Executor, reportId: string): Promise<boolean> {
  await db.deleteFrom('report_snapshots').where('report_id', '=', reportId).execute();
  const result = await db.deleteFrom('reports').where('report_id', '=', reportId).executeTakeFirst();
  return Number(result.numDeletedRows) > 0;
}

function compareText(left: string, right: string): number {
  return left === right ? 0 : left < right ? -1 : 1;
}

/** Oldest first, then by name and id. Ordered here, not in SQL, so both engines agree whatever their collation. */
function byCreation(left: ReportsTable, right: ReportsTable): number {
  return compareText(left.created_at, right.created_at) || compareText(left.name, right.name) || compareText(left.report_id, right.report_id);
}

/** Every report definition, oldest first. */
export async function listReports(db: Executor): Promise<ReportsTable[]> {
  const rows = await db.selectFrom('reports').selectAll().execute();
  return rows.sort(byCreation);
}

/** The ids of the reports with the given refresh mode, oldest first. */
export async function listReportIdsByRefresh(db: Executor, refresh: ReportsTable['refresh']): Promise<string[]> {
  const rows = await db.selectFrom('reports').selectAll().where('refresh', '=', refresh).execute();
  return rows.sort(byCreation).map((row) => row.report_id);
}

/** The ids among `campaignIds` with no stored campaign. */
export async function missingCampaigns(db: Executor, campaignIds: string[]): Promise<string[]> {
  if (campaignIds.length === 0) return [];
  const found = await db.selectFrom('campaigns').select('campaign_id').where('campaign_id', 'in', campaignIds).execute();
  const known = new Set(found.map((row) => row.campaign_id));
  return campaignIds.filter((id) => !known.has(id));
}

/** The names among `names` that no customer has as an extra attribute (one indexed look-up each). */
export async function missingAttributes(db: Executor, names: string[]): Promise<string[]> {
  const missing: string[] = [];
  for (const name of names) {
    const found = await db.selectFrom('customer_attributes').select('name').where('name', '=', name).limit(1).executeTakeFirst();
    if (!found) missing.push(name);
  }
  return missing;
}

export type SnapshotMeta = Omit<ReportSnapshotsTable, 'body' | 'redacted_at'>;

const META_COLUMNS = ['snapshot_id', 'report_id', 'sequence', 'created_at', 'fingerprint', 'population_rows', 'segment_count', 'duration_ms', 'trigger'] as const;

function toMeta(row: SnapshotMeta): SnapshotMeta {
  return {
    ...row,
    sequence: Number(row.sequence),
    population_rows: Number(row.population_rows),
    segment_count: Number(row.segment_count),
    duration_ms: Number(row.duration_ms),
  };
}

/** Snapshots of a report, newest first. */
export async function listSnapshots(db: Executor, reportId: string, page: { limit: number; offset: number }): Promise<SnapshotMeta[]> {
  const rows = await db
    .selectFrom('report_snapshots')
    .select(META_COLUMNS)
    .where('report_id', '=', reportId)
    .orderBy('sequence', 'desc')
    .limit(page.limit)
    .offset(page.offset)
    .execute();
  return rows.map(toMeta);
}

/** How many snapshots a report has. */
export async function countSnapshots(db: Executor, reportId: string): Promise<number> {
  const row = await db.selectFrom('report_snapshots').select((eb) => eb.fn.countAll().as('count')).where('report_id', '=', reportId).executeTakeFirst();
  return Number(row?.count ?? 0);
}

/** The newest snapshot's summary (without its body), or undefined when there is none. */
export async function latestSnapshotMeta(db: Executor, reportId: string): Promise<SnapshotMeta | undefined> {
  const row = await db.selectFrom('report_snapshots').select(META_COLUMNS).where('report_id', '=', reportId).orderBy('sequence', 'desc').limit(1).executeTakeFirst();
  return row ? toMeta(row) : undefined;
}

/** The body of one snapshot (`latest` for the newest); undefined when there is none. */
export async function findSnapshotBody(db: Executor, reportId: string, snapshotId: string): Promise<string | undefined> {
  let query = db.selectFrom('report_snapshots').select('body').where('report_id', '=', reportId);
  query = snapshotId === 'latest' ? query.orderBy('sequence', 'desc').limit(1) : query.where('snapshot_id', '=', snapshotId);
  const row = await query.executeTakeFirst();
  return row?.body;
}

/**
 * The id of a snapshot (`latest` for the newest) with the time an erasure last redacted it,
 * which together name one version of its body; undefined when there is none. The `latest`
 * look-up runs on every BI pull: on SQLite as one cached prepared statement.
 */
export async function snapshotVersion(db: Kysely<Database>, reportId: string, snapshotId: string): Promise<{ snapshot_id: string; redacted_at: string | null } | undefined> {
  const connection = sqliteConnectionOf(db);
  if (connection !== null) {
    const text =
      snapshotId === 'latest'
        ? 'select snapshot_id, redacted_at from report_snapshots where report_id = ? order by sequence desc limit 1'
        : 'select snapshot_id, redacted_at from report_snapshots where report_id = ? and snapshot_id = ?';
    const parameters = snapshotId === 'latest' ? [reportId] : [reportId, snapshotId];
    return prepared(connection, text).get(...parameters) as { snapshot_id: string; redacted_at: string | null } | undefined;
  }
  let query = db.selectFrom('report_snapshots').select(['snapshot_id', 'redacted_at']).where('report_id', '=', reportId);
  query = snapshotId === 'latest' ? query.orderBy('sequence', 'desc').limit(1) : query.where('snapshot_id', '=', snapshotId);
  return query.executeTakeFirst();
}

/** Every snapshot of a report with its body, oldest first (erasure rewrites them one by one). */
export async function snapshotBodies(db: Executor, reportId: string): Promise<Array<{ snapshot_id: string; body: string }>> {
  return db.selectFrom('report_snapshots').select(['snapshot_id', 'body']).where('report_id', '=', reportId).orderBy('sequence').execute();
}

/** Replaces a snapshot's body (and its segment count) after an erasure redacted it. */
export async function replaceRedactedBody(db: Executor, snapshotId: string, redacted: { body: string; segmentCount: number; redactedAt: string }): Promise<void> {
  await db
    .updateTable('report_snapshots')
    .set({ body: redacted.body, segment_count: redacted.segmentCount, redacted_at: redacted.redactedAt })
    .where('snapshot_id', '=', snapshotId)
    .execute();
}

/** The sequence number the next snapshot of a report takes: one more than the highest so far. */
export async function nextSnapshotSequence(db: Executor, reportId: string): Promise<number> {
  const row = await db.selectFrom('report_snapshots').select((eb) => eb.fn.max('sequence').as('sequence')).where('report_id', '=', reportId).executeTakeFirst();
  return Number(row?.sequence ?? 0) + 1;
}

/** Stores a snapshot; the unique (report, sequence) key refuses a second snapshot with the same number. */
export async function insertSnapshot(db: Executor, row: ReportSnapshotsTable): Promise<void> {
  await db.insertInto('report_snapshots').values(row).execute();
}

/**
 * When the newest snapshot of a report began reading its data, at the latest, and whether an
 * erasure has since removed from it what it held about a customer; undefined without snapshots.
 * Its figures were read after `created_at − duration_ms` (the refresh measures its duration
 * from before its reads), so uploads finished before then are in it.
 */
export async function latestSnapshotReadStart(db: Executor, reportId: string): Promise<{ readStart: number; redacted: boolean } | undefined> {
  const row = await db
    .selectFrom('report_snapshots')
    .select(['created_at', 'duration_ms', 'redacted_at'])
    .where('report_id', '=', reportId)
    .orderBy('sequence', 'desc')
    .limit(1)
    .executeTakeFirst();
  if (row === undefined) return undefined;
  return { readStart: Date.parse(row.created_at) - Number(row.duration_ms), redacted: row.redacted_at !== null };
}

/** No upload lasts a day (the body arrives whole before its transaction opens), so one finished after a moment was received at most a day before it. */
const LONGEST_UPLOAD_MS = 86_400_000;
const COMMIT_MARGIN_MS = 60_000;

/**
 * Whether an upload that may have finished after `since` (epoch ms) changed contacts already
 * stored in one of the campaigns: it updated contacts of the campaign, or updated customers
 * (whose region, channel, type or birth date are copied onto their contacts). Conservative: a
 * customer update that moved no contact of these campaigns counts too.
 */
export async function contactsChangedSince(db: Executor, campaignIds: readonly string[], since: number): Promise<boolean> {
  if (campaignIds.length === 0) return false;
  const rows = await db
    .selectFrom('ingests')
    .select(['received_at', 'duration_ms'])
    .where('received_at', '>=', new Date(since - LONGEST_UPLOAD_MS).toISOString())
    .where('updated', '>', 0)
    .where((eb) => eb.or([eb('kind', '=', 'customers'), eb.and([eb('kind', '=', 'contacts'), eb('campaign_id', 'in', [...campaignIds])])]))
    .execute();
  // An upload's duration is measured just before its commit: a minute's margin covers the commit itself.
  return rows.some((row) => Date.parse(row.received_at) + Number(row.duration_ms) + COMMIT_MARGIN_MS >= since);
}
