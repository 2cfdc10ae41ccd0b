/**
 * Sentences a manager can read, generated from a snapshot's own fields. Every number goes
 * through `format.ts` from the field that holds it, so the words and the figures agree.
 * Sentences carry no number that is not a field (or a definition setting), so a reader can
 * always find the figure a sentence quotes.
 */
import { formatConfidence, formatCount, formatPoints, formatPValue, formatRank, formatRatio, formatSignedMoney } from './format.js';
import type { ReportDefinition } from '../definition/index.js';
import type { SnapshotSegment, Verdict } from '../shapes/index.js';
import { metricView, type MetricView } from './metric-view.js';
import { describeSegment, type Vocabulary } from './vocabulary.js';
import { expectedSentence, explainedSentence } from './expected-sentences.js';

function capitalize(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}

export interface SentenceContext {
  definition: ReportDefinition;
  vocabulary: Vocabulary;
  /** size of each metric's multiplicity family: the tested segments whose test could be computed */
  familySizes: Record<ReportDefinition['rank_by'], number>;
  /** whether a previous snapshot exists (for rank movement) */
  hasPreviousSnapshot: boolean;
}
function levelWithInterval(view: MetricView, confidence: string): string {
  if (view.estimate === null) return `a ${view.name} that cannot be computed`;
  const interval = view.low !== null && view.high !== null ? ` (${confidence} CI ${view.level(view.low)} to ${view.level(view.high)})` : '';
  return `a ${view.name} of ${view.level(view.estimate)}${interval}`;
}

function differenceWithInterval(view: MetricView, confidence: string): string {
  if (view.difference === null) return '';
  const interval =
    view.differenceLow !== null && view.differenceHigh !== null
      ? ` (${confidence} CI ${view.signed(view.differenceLow)} to ${view.signed(view.differenceHigh)})`
      : '';
  return `, a difference of ${view.signed(view.difference)}${view.unit}${interval}`;
}

function against(view: MetricView): string {
  return view.rest === null ? '' : ` against ${view.level(view.rest)} for the rest`;
}

/** Why a figure is missing, in words without numbers of their own. */
function missingReason(segment: SnapshotSegment, metric: ReportDefinition['rank_by'], words: Vocabulary): string {
  if (metric === 'conversion_rate') {
    if (segment.rate_p_value === null) return 'The rates could not be compared.';
    return '';
  }
  if (segment.value_n < 2) return `The ${words.valueName} could not be compared: the segment has fewer than two ${words.units} with a value.`;
  if (segment.rest.value_n < 2) return `The ${words.valueName} could not be compared: the rest has fewer than two ${words.units} with a value.`;
  if (segment.value_p_value === null && segment.conversions < 2) {
    return `The ${words.valueName} was not compared: the segment has fewer than two converted ${words.units}, too few to say anything about value.`;
  }
  if (segment.value_p_value === null && segment.rest.conversions < 2) {
    return `The ${words.valueName} was not compared: the rest has fewer than two converted ${words.units}, too few to say anything about value.`;
  }
  if (segment.value_p_value === null) return `The ${words.valueName} could not be compared: the values do not vary within the segment and the rest.`;
  return '';
}

function liftClause(segment: SnapshotSegment, metric: ReportDefinition['rank_by']): string {
  if (metric !== 'conversion_rate') return '';
  if (segment.lift !== null) return ` That is ${formatRatio(segment.lift)} times the rest's rate.`;
  if (segment.rest.conversions === 0) return " The lift cannot be computed: the rest has no conversions to divide by.";
  if (segment.conversions === 0) return ' The lift cannot be computed: the segment has no conversions, so its ratio to the rest has no interval.';
  return '';
}

function adjustedPhrase(view: MetricView, context: SentenceContext): string {
  if (view.adjustedP === null) return '';
  const adjustment = context.definition.adjustment === 'none' ? 'p' : 'adjusted p';
  return `${adjustment} ${formatPValue(view.adjustedP)}`;
}

function familyPhrase(context: SentenceContext, metric: ReportDefinition['rank_by']): string {
  return context.definition.adjustment === 'none'
    ? 'with no allowance for the number of segments tested'
    : `after allowing for the ${formatCount(context.familySizes[metric])} segments tested`;
}

function mainSentence(segment: SnapshotSegment, context: SentenceContext): string {
  const metric = context.definition.rank_by;
  const words = context.vocabulary;
  const view = metricView(segment, metric, words);
  const confidence = formatConfidence(context.definition.confidence);
  const who = capitalize(describeSegment(segment.values));
  const minN = formatCount(context.definition.min_n);
  const verdict: Verdict = segment.verdict;

  if (verdict === 'too_small') {
    const reason =
      segment.n < context.definition.min_n
        ? `${who} has only ${formatCount(segment.n)} ${words.units}, fewer than the ${minN} needed, so it was not tested against the rest.`
        : `${who} covers almost everyone: the other ${formatCount(segment.rest.n)} ${words.units} are fewer than the ${minN} needed for a comparison, so it was not tested.`;
    const level = view.estimate === null ? '' : ` It has ${levelWithInterval(view, confidence)}.`;
    const detectable =
      view.mdd === null
        ? ` With so few ${words.units} no difference of the ${view.name} could reliably be detected.`
        : ` With so few ${words.units} only a difference of about ${view.magnitude(view.mdd)}${view.unit} or more could have been detected.`;
    return `${reason}${level}${detectable}`;
  }

  const opening = `${who} has ${levelWithInterval(view, confidence)}${against(view)}${differenceWithInterval(view, confidence)}.`;
  const missing = missingReason(segment, metric, words);
  if (verdict === 'better' || verdict === 'worse') {
    const direction = verdict === 'better' ? 'higher' : 'lower';
    return `${who} has a ${direction} ${view.name} than the rest: ${view.level(view.estimate as number)}${
      view.low !== null && view.high !== null ? ` (${confidence} CI ${view.level(view.low)} to ${view.level(view.high)})` : ''
    }${against(view)}${differenceWithInterval(view, confidence)}.${liftClause(segment, metric)} The difference holds ${familyPhrase(context, metric)} (${adjustedPhrase(view, context)}).`;
  }
  if (verdict === 'no_detectable_difference') {
    return `${opening}${liftClause(segment, metric)} The interval rules out differences as large as ${view.magnitude(view.mdd as number)}${view.unit}, the smallest this comparison could reliably detect, so for planning treat this group like the rest.`;
  }
  // inconclusive
  const notReliable = view.adjustedP === null ? '' : ` The difference is not reliable ${familyPhrase(context, metric)} (${adjustedPhrase(view, context)}).`;
  const [comparedCount, comparedUnits] = metric === 'conversion_rate' ? [segment.n, words.units] : [segment.value_n, words.valueUnits];
  const detectable =
    view.mdd === null
      ? ''
      : ` With ${formatCount(comparedCount)} ${comparedUnits} this comparison could only reliably detect a difference of about ${view.magnitude(view.mdd)}${view.unit} or more; a smaller real difference may be hidden.`;
  return `${opening}${missing ? ` ${missing}` : ''}${liftClause(segment, metric)}${notReliable}${detectable}`;
}

function secondarySentence(segment: SnapshotSegment, context: SentenceContext): string {
  if (!segment.tested) return '';
  const alpha = 1 - context.definition.confidence;
  const other = context.definition.rank_by === 'conversion_rate' ? 'value' : 'conversion_rate';
  const view = metricView(segment, other, context.vocabulary);
  if (view.adjustedP === null || view.adjustedP >= alpha || view.difference === null || view.estimate === null || view.rest === null) return '';
  const direction = view.difference > 0 ? 'higher' : 'lower';
  return ` Its ${view.name} is also ${direction}: ${view.level(view.estimate)} against ${view.level(view.rest)} for the rest (${adjustedPhrase(view, context)}).`;
}

function changeSentence(segment: SnapshotSegment, context: SentenceContext): string {
  const change = segment.change;
  if (change === null) return '';
  const since = change.compared_with === 'previous_window' ? 'the previous window of the same length' : 'the previous snapshot';
  if (context.definition.rank_by === 'conversion_rate') {
    if (change.rate_change === null) return '';
    const interval =
      change.rate_change_ci_low !== null && change.rate_change_ci_high !== null
        ? ` (${formatConfidence(context.definition.confidence)} CI ${formatPoints(change.rate_change_ci_low)} to ${formatPoints(change.rate_change_ci_high)})`
        : '';
    return ` Since ${since} its ${context.vocabulary.rateName} changed by ${formatPoints(change.rate_change)} percentage points${interval}.`;
  }
  if (change.value_change === null) return '';
  const interval =
    change.value_change_ci_low !== null && change.value_change_ci_high !== null
      ? ` (${formatConfidence(context.definition.confidence)} CI ${formatSignedMoney(change.value_change_ci_low)} to ${formatSignedMoney(change.value_change_ci_high)})`
      : '';
  return ` Since ${since} its ${context.vocabulary.valueName} changed by ${formatSignedMoney(change.value_change)}${interval}.`;
}

/**
 * Segments that rose into the top three by three places or more (or appeared there) on fewer
 * than ten times `min_n` units get a caution: extreme results on little data tend to fall
 * back towards the average next time (regression to the mean; Galton 1886 — from memory).
 * The thresholds are common practice, not from a source.
 */
const TOP_RANKS_WATCHED = 3;
const JUMP_PLACES = 3;
const LITTLE_DATA_MULTIPLE_OF_MIN_N = 10;

/** Whether a segment rose into the top ranks on little data (see the thresholds above). */
function jumpedOnLittleData(segment: SnapshotSegment, context: SentenceContext): boolean {
  if (!context.hasPreviousSnapshot || segment.rank === null || segment.rank > TOP_RANKS_WATCHED) return false;
  if (segment.n >= LITTLE_DATA_MULTIPLE_OF_MIN_N * context.definition.min_n) return false;
  return segment.previous_rank === null || segment.previous_rank - segment.rank >= JUMP_PLACES;
}

function rankSentence(segment: SnapshotSegment, context: SentenceContext): string {
  if (!context.hasPreviousSnapshot || segment.rank === null) return '';
  let sentence = '';
  if (segment.previous_rank === null) sentence = ` It is new in the ranking at rank ${formatRank(segment.rank)}.`;
  else if (segment.previous_rank !== segment.rank) sentence = ` It moved from rank ${formatRank(segment.previous_rank)} to rank ${formatRank(segment.rank)}.`;
  if (jumpedOnLittleData(segment, context)) {
    sentence += ` It rose to the top on little data (${formatCount(segment.n)} ${context.vocabulary.units}); groups that jump to the top on small numbers often fall back next time (regression to the mean), so confirm it in another snapshot before acting on it.`;
  }
  return sentence;
}

/**
 * The `summary` of one segment: its verdict in words with the figures behind it, what the
 * data could have detected when the answer is not clear, and any change since last time.
 * @example
 * segmentSummary(segment, context);
 * // 'Region North has a higher conversion rate than the rest: 18.2% (95% CI 15.1% to 21.6%) against 10.3% for the rest, …'
 */
export function segmentSummary(segment: SnapshotSegment, context: SentenceContext): string {
  return `${mainSentence(segment, context)}${explainedSentence(segment, context)}${expectedSentence(segment, context)}${secondarySentence(segment, context)}${changeSentence(segment, context)}${rankSentence(segment, context)}`;
}
