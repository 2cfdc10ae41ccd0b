/**
 * The analysis that fills a snapshot's segments: each segment tested against its rest, its
 * row, the verdict rule, the ranking, the change since last time and the reversal check.
 */
export { comparisonBasis, recordChanges, type PreviousWindow } from './change.js';
export { expectedFigures, type ExpectedFigure, type ExpectedFigures } from './expected.js';
export { explainingParent } from './parents.js';
export { valueOrNull } from './outcome.js';
export { rankSegments } from './ranking.js';
export { findReversals } from './reversals.js';
export { campaignStrata, mirroredSegments } from './families.js';
export { segmentLabel, segmentRow } from './segment-row.js';
export { adviceInterval, adviceOf, analyzeHoldout, withoutHoldout, type Advice, type Economics, type HoldoutArms, type HoldoutFigures } from './uplift.js';
export { positiveLogSummaries, type PositiveLogs } from './value-logs.js';
export { analyzeSegment, valueSummary } from './segment-tests.js';
export { decideVerdict, segmentVerdict, type VerdictInput } from './verdict.js';
export type { AnalysisSettings } from './segment-tests.js';
