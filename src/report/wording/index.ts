/** Every sentence of a report, and the one formatter of the numbers in them. */
export {
  formatCoefficient,
  formatConfidence,
  formatCount,
  formatMoney,
  formatPercent,
  formatPoints,
  formatPointsMagnitude,
  formatPValue,
  formatRank,
  formatRatio,
  formatSignedMoney,
  formatYears,
} from './format.js';
export { comparisonNote, reportSummary, reversalSentence, snapshotCautions, type ReportSummaryInput } from './report-sentences.js';
export {
  JUMP_PLACES,
  LITTLE_DATA_MULTIPLE_OF_MIN_N,
  TOP_RANKS_WATCHED,
  jumpedOnLittleData,
  segmentSummary,
  type SentenceContext,
} from './segment-sentences.js';
export { describeSegment, vocabulary, type Vocabulary } from './vocabulary.js';
