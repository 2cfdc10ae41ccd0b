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
export { comparisonNote, reportSummary, reversalSentence, snapshotCautions } from './report-sentences.js';
export { segmentSummary, type SentenceContext } from './segment-sentences.js';
export { describeSegment, readableSegmentName, vocabulary } from './vocabulary.js';
