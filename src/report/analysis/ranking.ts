/**
 * The ranking of a report's segments on its ranking metric, by the expected (shrunk) figure
 * or its lower bound, within verdict tiers: better first, worse last, every other tested
 * segment between them, so no segment without a finding stands above one marked better. A
 * cross whose verdict one of its parents explains (`explained_by`) is placed right after that
 * parent when it would otherwise outrank it.
 */
import { compareText } from '../../segments/index.js';
import { type ReportDefinition, verdictMetric } from '../definition/index.js';
import type { SnapshotSegment } from '../shapes/index.js';

/** The ranking key of a tested segment: the lower bound of the expected figure, or the figure itself. */
function rankingKey(segment: SnapshotSegment, definition: ReportDefinition): number | null {
  const byLowerBound = definition.rank_order === 'lower_bound';
  if (definition.rank_by === 'uplift') return byLowerBound ? segment.uplift_ci_low : segment.uplift;
  if (definition.rank_by === 'incremental_profit') return byLowerBound ? segment.incremental_profit_ci_low : segment.incremental_profit_per_contact;
  if (verdictMetric(definition) === 'conversion_rate') {
    return definition.rank_order === 'lower_bound' ? segment.rate_expected_ci_low : segment.rate_expected;
  }
  return definition.rank_order === 'lower_bound' ? segment.value_expected_ci_low : segment.value_expected;
}

/**
 * 0 for better, 2 for worse, 1 for every other verdict of a tested segment; ranked by what
 * contacting added, 0 for advice to contact, 2 to hold back, 1 otherwise.
 */
function tier(segment: SnapshotSegment, definition: ReportDefinition): number {
  if (definition.rank_by === 'uplift' || definition.rank_by === 'incremental_profit') {
    if (segment.advice === 'contact') return 0;
    return segment.advice === 'hold_back' ? 2 : 1;
  }
  if (segment.verdict === 'better') return 0;
  if (segment.verdict === 'worse') return 2;
  return 1;
}

/** Moves each explained cross that stands above its parent to just after the parent (and the crosses placed after it). */
function placeAfterParents(ordered: SnapshotSegment[]): SnapshotSegment[] {
  const placed = new Set<string>();
  const waiting = new Map<string, SnapshotSegment[]>();
  const labels = new Set(ordered.map((segment) => segment.segment));
  const result: SnapshotSegment[] = [];
  const place = (segment: SnapshotSegment) => {
    result.push(segment);
    placed.add(segment.segment);
    for (const follower of waiting.get(segment.segment) ?? []) place(follower);
    waiting.delete(segment.segment);
  };
  for (const segment of ordered) {
    const parent = segment.explained_by;
    if (parent !== null && labels.has(parent) && !placed.has(parent)) waiting.set(parent, [...(waiting.get(parent) ?? []), segment]);
    else place(segment);
  }
  for (const followers of waiting.values()) for (const follower of followers) place(follower);
  return result;
}

/**
 * Orders segments: tested ones by tier, then by the ranking key (higher first; a missing key
 * last), ties by n (larger first) and then by name, explained crosses after their parents;
 * untested ones after them by n and name, without a rank.
 */
export function rankSegments(segments: SnapshotSegment[], definition: ReportDefinition): SnapshotSegment[] {
  const byNameAndSize = (left: SnapshotSegment, right: SnapshotSegment) => (right.n ?? 0) - (left.n ?? 0) || compareText(left.segment, right.segment);
  const untested = segments.filter((segment) => !segment.tested);
  const tested = segments
    .filter((segment) => segment.tested)
    .sort((left, right) => {
      const byTier = tier(left, definition) - tier(right, definition);
      if (byTier !== 0) return byTier;
      const leftKey = rankingKey(left, definition);
      const rightKey = rankingKey(right, definition);
      if (leftKey === null && rightKey !== null) return 1;
      if (rightKey === null && leftKey !== null) return -1;
      if (leftKey !== null && rightKey !== null && leftKey !== rightKey) return rightKey - leftKey;
      return byNameAndSize(left, right);
    });
  const ranked = placeAfterParents(tested);
  untested.sort(byNameAndSize);
  ranked.forEach((segment, index) => {
    segment.rank = index + 1;
  });
  for (const segment of untested) segment.rank = null;
  return [...ranked, ...untested];
}
