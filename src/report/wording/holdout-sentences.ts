/**
 * The sentence of a segment's holdout figures: what contacting added, and the advice with the
 * numbers behind it. Empty for a report without holdout customers.
 */
import type { SnapshotSegment } from '../shapes/index.js';
import { formatCount, formatPercent, formatPoints, formatSignedMoney } from './format.js';

const ADVICE_WORDS = {
  contact: 'contact this segment: the whole interval is above zero',
  hold_back: 'hold this segment back: the whole interval is below zero',
  undecided: 'undecided: the interval reaches both sides of zero',
} as const;

/**
 * @example
 * holdoutSentence(segment, 0.95);
 * // ' Against 50 held-out customers (10.0% converted), contacting changed the conversion rate by +20.0 points (95% CI +6.8 to +29.6); …'
 */
export function holdoutSentence(segment: SnapshotSegment, confidence: number): string {
  if (segment.holdout_n === null) return '';
  const level = formatPercent(confidence).replace('.0%', '%');
  if (segment.uplift === null || segment.uplift_ci_low === null || segment.uplift_ci_high === null) {
    return ` The uplift was not measured: the segment has ${formatCount(segment.holdout_n)} held-out customers, fewer than the report needs in each arm.`;
  }
  const held = segment.holdout_rate === null ? '' : ` (${formatPercent(segment.holdout_rate)} converted)`;
  let sentence = ` Against ${formatCount(segment.holdout_n)} held-out customers${held}, contacting changed the conversion rate by ${formatPoints(segment.uplift)} points (${level} CI ${formatPoints(segment.uplift_ci_low)} to ${formatPoints(segment.uplift_ci_high)}).`;
  const profit = segment.incremental_profit_per_contact;
  const basis =
    profit !== null && segment.incremental_profit_ci_low !== null && segment.incremental_profit_ci_high !== null
      ? `incremental profit per contact ${formatSignedMoney(profit)} (${level} CI ${formatSignedMoney(segment.incremental_profit_ci_low)} to ${formatSignedMoney(segment.incremental_profit_ci_high)})`
      : 'the uplift';
  if (segment.advice !== null) {
    sentence += ` Advice on ${basis}, its interval widened for the number of uplift tests: ${ADVICE_WORDS[segment.advice]}.`;
  }
  return sentence;
}
