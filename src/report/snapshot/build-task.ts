/**
 * The CPU-heavy part of a refresh, the same on a worker thread and on the main thread: read the
 * previous snapshot, build the new one, and write its JSON text. Everything here is pure
 * computation on what the job carries (structured-clone-able: BigInt sums and plain objects).
 */
import { DEFAULT_PUBLICATION_THRESHOLD } from '../../config.js';
import type { Snapshot } from '../shapes/index.js';
import { buildSnapshot } from './build.js';
import type { SnapshotInput } from './input.js';
import { publishedText, readStoredSnapshot } from './stored.js';

export interface SnapshotBuildJob {
  /** Every input of `buildSnapshot` but the previous snapshot, which travels as its stored text. */
  input: Omit<SnapshotInput, 'previousSnapshot'>;
  /** The report's latest stored snapshot body, or null for its first snapshot. */
  previousBody: string | null;
  /**
   * Milliseconds the refresh ran before the build (reading the aggregates); the build adds its
   * own time to make `duration_ms`. Each thread measures on its own clock, so no clock is compared across threads.
   */
  elapsedBeforeBuildMs: number;
}

/** What the service needs of a built snapshot without parsing its text again. */
export type SnapshotSummary = Pick<Snapshot, 'snapshot_id' | 'fingerprint' | 'created_at' | 'duration_ms' | 'row_counts'>;

export interface BuiltSnapshot {
  /** The snapshot's JSON text, as it is stored and sent. */
  body: string;
  summary: SnapshotSummary;
}

/**
 * Builds and serialises one snapshot; its `duration_ms` runs from the start of the refresh to the end of the build.
 * @throws StatsInputError when the aggregates are inconsistent (as `buildSnapshot`)
 */
export function runSnapshotBuild(job: SnapshotBuildJob): BuiltSnapshot {
  const buildStarted = performance.now();
  const threshold = job.input.publicationThreshold ?? DEFAULT_PUBLICATION_THRESHOLD;
  const previousSnapshot = job.previousBody === null ? null : readStoredSnapshot(publishedText(job.previousBody, threshold));
  const snapshot = buildSnapshot({ ...job.input, previousSnapshot });
  snapshot.duration_ms = Math.round(job.elapsedBeforeBuildMs + performance.now() - buildStarted);
  const { snapshot_id, fingerprint, created_at, duration_ms, row_counts } = snapshot;
  return { body: JSON.stringify(snapshot), summary: { snapshot_id, fingerprint, created_at, duration_ms, row_counts } };
}

/** The stored text of a snapshot given another sequence number (another instance took the one it was built with). */
export function renumberedBody(body: string, sequence: number): string {
  const snapshot = JSON.parse(body) as Snapshot;
  snapshot.sequence = sequence;
  return JSON.stringify(snapshot);
}
