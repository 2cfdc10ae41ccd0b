/**
 * The analysis that fills a snapshot's segments: each segment tested against its rest, the
 * verdict rule, the ranking, the change since last time and the reversal check.
 */
export {
  MIN_EXPECTED_CELL_COUNT,
  PLANNING_POWER,
  analyzeSegment,
  minimumDetectableMeanDifference,
  rateTest,
  valueSummary,
  type RateTest,
  type SegmentStatistics,
} from './segment-tests.js';
export { decideVerdict, type VerdictInput } from './verdict.js';
export { MIN_LEVELS_FOR_REVERSAL, findReversals, type ReversalInput } from './reversals.js';
