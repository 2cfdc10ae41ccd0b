/**
 * The analysis that fills a snapshot's segments: each segment tested against its rest, its
 * row, the verdict rule, the ranking, the change since last time and the reversal check.
 */
export { comparisonBasis, recordChanges, type ComparisonBasis, type PreviousFigures, type PreviousWindow } from './change.js';
export { valueOrNull } from './outcome.js';
export { rankSegments } from './ranking.js';
export { MIN_LEVELS_FOR_REVERSAL, findReversals, type ReversalInput } from './reversals.js';
export { segmentLabel, segmentRow } from './segment-row.js';
export {
  MIN_EXPECTED_CELL_COUNT,
  PLANNING_POWER,
  analyzeSegment,
  minimumDetectableMeanDifference,
  rateTest,
  statisticNotes,
  valueSummary,
  type RateTest,
  type SegmentStatistics,
} from './segment-tests.js';
export { decideVerdict, segmentVerdict, type VerdictInput } from './verdict.js';
