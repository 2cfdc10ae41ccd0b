/** Every sentence of a report, and the one formatter of the numbers in them. */
export {
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
} from './format.js';
export {
  CAUTIONS,
  JUMP_PLACES,
  LITTLE_DATA_MULTIPLE_OF_MIN_N,
  TOP_RANKS_WATCHED,
  describeSegment,
  jumpedOnLittleData,
  reportSummary,
  reversalSentence,
  segmentSummary,
  vocabulary,
  type ReportSummaryInput,
  type SentenceContext,
  type Vocabulary,
} from './segment-sentences.js';
