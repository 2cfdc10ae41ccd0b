/**
 * Reading a stored snapshot body. Snapshots are immutable, so one stored before a field was
 * added lacks it; the reader fills what later code relies on. A verdict of the former rule,
 * "no detectable difference", did not test any margin: it is read as `inconclusive`, with a
 * note saying so, and its sentence is left as it was written.
 */
import type { Snapshot, SnapshotSegment } from '../shapes/index.js';
import { withoutHoldout } from '../analysis/uplift.js';
import { storedTextIsWithheldAt, withholdSnapshot } from './withholding.js';

const FORMER_NO_DIFFERENCE = 'no_detectable_difference';

type StoredSegment = Omit<SnapshotSegment, 'mirror_of' | 'equivalence' | 'strata' | 'change'> & Partial<Pick<SnapshotSegment, 'mirror_of' | 'equivalence' | 'strata'>> & { change: unknown };

function currentSegment(stored: StoredSegment): SnapshotSegment {
  // Snapshots stored before holdouts existed had none: their holdout fields are all null.
  const segment = { ...withoutHoldout(), ...stored } as unknown as SnapshotSegment;
  if ((stored.verdict as string) === FORMER_NO_DIFFERENCE) {
    segment.verdict = 'inconclusive';
    segment.notes = [...stored.notes, 'Stored under a former rule as "no detectable difference", which tested no equivalence margin; read as inconclusive.'];
  }
  segment.mirror_of = stored.mirror_of ?? null;
  segment.equivalence = stored.equivalence ?? { conversion_rate: null, value: null };
  segment.strata = stored.strata ?? null;
  // A change of the former rule compared two snapshots of the same contacts: not a valid comparison.
  const change = stored.change as { new_n?: number } | null;
  segment.change = change !== null && change.new_n !== undefined ? (stored.change as SnapshotSegment['change']) : null;
  return segment;
}

/** A stored snapshot body, in the current shape. */
export function readStoredSnapshot(body: string): Snapshot {
  const snapshot = JSON.parse(body) as Snapshot;
  const counts = snapshot.verdict_counts as Record<string, number>;
  if (counts[FORMER_NO_DIFFERENCE] !== undefined) {
    counts['inconclusive'] = (counts['inconclusive'] ?? 0) + (counts[FORMER_NO_DIFFERENCE] ?? 0);
    delete counts[FORMER_NO_DIFFERENCE];
  }
  counts['equivalent'] ??= 0;
  snapshot.segments = snapshot.segments.map((segment) => currentSegment(segment as unknown as StoredSegment));
  return snapshot;
}

/**
 * Stored snapshot text as it may be served: withheld at the current threshold. Snapshots
 * stored before withholding existed, or under a lower threshold, are withheld as they are read.
 */
export function publishedText(body: string, threshold: number): string {
  if (storedTextIsWithheldAt(body, threshold)) return body;
  // Read in the current shape first: a snapshot stored before withholding may predate other fields too.
  return JSON.stringify(withholdSnapshot(readStoredSnapshot(body), threshold));
}
