/**
 * Which stored version of a snapshot the segment table of a request names (`latest` or an id,
 * and whether an erasure redacted it), kept in memory for a short while so a BI tool polling
 * the table costs no database read per request. A new snapshot, an erasure or a deleted report
 * made through this process calls `forgetAll`, so the next request reads again; made elsewhere
 * (another process on the same database, the command line, the schedule) it is seen within
 * `validityMs` (the SHARED_STATE_CACHE_MS setting); 0 reads on every request.
 */
import { LRUCache } from 'lru-cache';
import { snapshotVersionKey, type ReportDependencies } from '../report/snapshot/index.js';

export interface SnapshotVersion {
  snapshotId: string;
  /** Names the snapshot's body as stored: its id and when it was last redacted. */
  key: string;
}

/** Distinct (report, snapshot) lookups kept at once; the least recently used go first. */
const KEPT_LOOKUPS = 1000;

export class SnapshotVersionCache {
  private readonly versions: LRUCache<string, SnapshotVersion> | null;
  /** Counts `forgetAll` calls, so a read that began before one is not kept after it. */
  private generation = 0;

  constructor(validityMs: number) {
    this.versions = validityMs > 0 ? new LRUCache({ max: KEPT_LOOKUPS, ttl: validityMs, ttlAutopurge: false, updateAgeOnGet: false }) : null;
  }

  /**
   * The stored version of a report's snapshot (`latest` for the newest); undefined when the
   * report has none yet.
   * @throws ReportNotFoundError
   */
  async lookup(deps: ReportDependencies, reportId: string, snapshotId: string): Promise<SnapshotVersion | undefined> {
    const lookupKey = `${reportId}\u0000${snapshotId}`;
    const kept = this.versions?.get(lookupKey);
    if (kept !== undefined) return kept;
    const generationAtRead = this.generation;
    const version = await snapshotVersionKey(deps, reportId, snapshotId);
    // Only what exists is kept: a snapshot that is missing now may be written a moment later.
    if (version !== undefined && generationAtRead === this.generation) this.versions?.set(lookupKey, version);
    return version;
  }

  /** Forgets every kept lookup: something in the database may have changed. */
  forgetAll(): void {
    this.generation++;
    this.versions?.clear();
  }
}
