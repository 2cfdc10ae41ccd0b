/** The ranking of a report's segments on its ranking metric. */
import { compareText } from '../../segments/index.js';
import type { ReportDefinition } from '../definition/index.js';
import type { SnapshotSegment } from '../shapes/index.js';

/** The ranking key of a tested segment: the lower confidence bound or the estimate of the ranking metric. */
function rankingKey(segment: SnapshotSegment, definition: ReportDefinition): number | null {
  if (definition.rank_by === 'conversion_rate') {
    return definition.rank_order === 'lower_bound' ? segment.conversion_rate_ci_low : segment.conversion_rate;
  }
  return definition.rank_order === 'lower_bound' ? segment.value_ci_low : segment.value_mean;
}

/**
 * Orders segments: tested ones by the ranking key (higher first; a missing key last), ties by
 * n (larger first) and then by name; untested ones after them by n and name, without a rank.
 */
export function rankSegments(segments: SnapshotSegment[], definition: ReportDefinition): SnapshotSegment[] {
  const byNameAndSize = (left: SnapshotSegment, right: SnapshotSegment) => (right.n ?? 0) - (left.n ?? 0) || compareText(left.segment, right.segment);
  const tested = segments.filter((segment) => segment.tested);
  const untested = segments.filter((segment) => !segment.tested);
  tested.sort((left, right) => {
    const leftKey = rankingKey(left, definition);
    const rightKey = rankingKey(right, definition);
    if (leftKey === null && rightKey !== null) return 1;
    if (rightKey === null && leftKey !== null) return -1;
    if (leftKey !== null && rightKey !== null && leftKey !== rightKey) return rightKey - leftKey;
    return byNameAndSize(left, right);
  });
  untested.sort(byNameAndSize);
  tested.forEach((segment, index) => {
    segment.rank = index + 1;
  });
  for (const segment of untested) segment.rank = null;
  return [...tested, ...untested];
}
