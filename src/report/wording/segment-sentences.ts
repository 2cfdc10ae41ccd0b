/**
 * Sentences a manager can read, generated from a snapshot's own fields. Every number goes
 * through `format.ts` from the field that holds it, so the words and the figures agree.
 * Sentences carry no number that is not a field (or a definition setting), so a reader can
 * always find the figure a sentence quotes.
 */
import { formatConfidence, formatCount, formatPoints, formatPValue, formatRank, formatRatio, formatSignedMoney } from './format.js';
import { type ReportDefinition, verdictMetric, type VerdictMetric } from '../definition/index.js';
import { isPublished, type EquivalenceTest, type PublishedSegment, type SnapshotSegment, type Verdict } from '../shapes/index.js';
import { metricView, type MetricView } from './metric-view.js';
import { describeSegment, type Vocabulary } from './vocabulary.js';
import { expectedSentence, explainedSentence } from './expected-sentences.js';
import { holdoutSentence } from './holdout-sentences.js';

function capitalize(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}

export interface SentenceContext {
  definition: ReportDefinition;
  vocabulary: Vocabulary;
  /** size of each metric's multiplicity family: the tested segments whose test could be computed */
  familySizes: Record<VerdictMetric, number>;
  /** whether a previous snapshot exists (for rank movement) */
  hasPreviousSnapshot: boolean;
  /** what the change of each segment is measured against */
  comparedWith: 'previous_window' | 'previous_snapshot' | null;
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
function missingReason(segment: PublishedSegment, metric: VerdictMetric, words: Vocabulary): string {
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

function liftClause(segment: PublishedSegment, metric: VerdictMetric): string {
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

function familyPhrase(context: SentenceContext, metric: VerdictMetric): string {
  return context.definition.adjustment === 'none'
    ? 'with no allowance for the number of segments tested'
    : `after allowing for the ${formatCount(context.familySizes[metric])} segments tested`;
}

function mainSentence(segment: PublishedSegment, context: SentenceContext): string {
  const metric = verdictMetric(context.definition);
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
        : segment.rest.n === 0
          ? `${who} covers everyone: no ${words.units} are left outside it to compare with, so it was not tested.`
          : `${who} covers almost everyone: the other ${formatCount(segment.rest.n)} ${segment.rest.n === 1 ? words.unit : words.units} ${segment.rest.n === 1 ? 'is' : 'are'} fewer than the ${minN} needed for a comparison, so it was not tested.`;
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
  if (verdict === 'equivalent') {
    const test = metric === 'conversion_rate' ? segment.equivalence.conversion_rate : segment.equivalence.value;
    const adjustment = context.definition.adjustment === 'none' ? 'p' : 'adjusted p';
    return `${opening}${liftClause(segment, metric)} Two one-sided tests show the difference lies within ± ${marginPhrase(view, test, words)} (${adjustment} ${formatPValue(test?.p_adjusted ?? 1)}), so for planning treat this group like the rest.`;
  }
  // inconclusive
  const notReliable = view.adjustedP === null ? '' : ` The difference is not reliable ${familyPhrase(context, metric)} (${adjustedPhrase(view, context)}).`;
  const [comparedCount, comparedUnits] = metric === 'conversion_rate' ? [segment.n, words.units] : [segment.value_n, words.valueUnits];
  const detectable =
    view.mdd === null
      ? ''
      : ` With ${formatCount(comparedCount)} ${comparedUnits} this comparison could only reliably detect a difference of about ${view.magnitude(view.mdd)}${view.unit} or more; a smaller real difference may be hidden.`;
  const test = metric === 'conversion_rate' ? segment.equivalence.conversion_rate : segment.equivalence.value;
  const notEquivalent = test === null ? '' : ` Nor do the data show it lies within ± ${marginPhrase(view, test, words)}: a difference that large cannot be ruled out.`;
  return `${opening}${missing ? ` ${missing}` : ''}${liftClause(segment, metric)}${notReliable}${notEquivalent}${detectable}`;
}

/** The margin with where it came from, e.g. "2 percentage points, the default equivalence margin". */
function marginPhrase(view: MetricView, test: EquivalenceTest | null, words: Vocabulary): string {
  if (test === null) return `the margin of the ${words.rateName}`;
  const source = test.margin_source === 'default' ? 'the default equivalence margin' : "the report's equivalence margin";
  return `${view.magnitude(test.margin)}${view.unit}, ${source}`;
}

function mirrorSentence(segment: SnapshotSegment): string {
  if (segment.mirror_of === null || !segment.tested) return '';
  return ` Its comparison is the same as that of ${segment.mirror_of} seen from the other side, so it is counted once among the tests.`;
}

function secondarySentence(segment: PublishedSegment, context: SentenceContext): string {
  if (!segment.tested) return '';
  const alpha = 1 - context.definition.confidence;
  const other = verdictMetric(context.definition) === 'conversion_rate' ? 'value' : 'conversion_rate';
  const view = metricView(segment, other, context.vocabulary);
  if (view.adjustedP === null || view.adjustedP >= alpha || view.difference === null || view.estimate === null || view.rest === null) return '';
  const direction = view.difference > 0 ? 'higher' : 'lower';
  return ` Its ${view.name} is also ${direction}: ${view.level(view.estimate)} against ${view.level(view.rest)} for the rest (${adjustedPhrase(view, context)}).`;
}

function changeSentence(segment: PublishedSegment, context: SentenceContext): string {
  const change = segment.change;
  const words = context.vocabulary;
  if (change === null) {
    const noNewData = context.comparedWith === 'previous_snapshot' && !segment.notes.some((note) => note.startsWith('The change since the previous snapshot'));
    return noNewData ? ` No ${words.units} were added to it since the previous snapshot, so there is no change to report.` : '';
  }
  const groups =
    change.compared_with === 'previous_window'
      ? 'this window against the previous window of the same length'
      : `the ${formatCount(change.new_n)} ${words.units} added since the previous snapshot against the ${formatCount(change.previous_n)} before them`;
  const adjustment = context.definition.adjustment === 'none' ? 'p' : 'adjusted p';
  const confidence = formatConfidence(context.definition.confidence);
  if (verdictMetric(context.definition) === 'conversion_rate') {
    if (change.rate_change === null) return '';
    const interval =
      change.rate_change_ci_low !== null && change.rate_change_ci_high !== null
        ? ` (${confidence} CI ${formatPoints(change.rate_change_ci_low)} to ${formatPoints(change.rate_change_ci_high)}${change.rate_change_p_adjusted === null ? '' : `, ${adjustment} ${formatPValue(change.rate_change_p_adjusted)}`})`
        : '';
    return ` Comparing ${groups}, its ${words.rateName} differs by ${formatPoints(change.rate_change)} percentage points${interval}.`;
  }
  if (change.value_change === null) return '';
  const interval =
    change.value_change_ci_low !== null && change.value_change_ci_high !== null
      ? ` (${confidence} CI ${formatSignedMoney(change.value_change_ci_low)} to ${formatSignedMoney(change.value_change_ci_high)}${change.value_change_p_adjusted === null ? '' : `, ${adjustment} ${formatPValue(change.value_change_p_adjusted)}`})`
      : '';
  return ` Comparing ${groups}, its ${words.valueName} differs by ${formatSignedMoney(change.value_change)}${interval}.`;
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
function jumpedOnLittleData(segment: PublishedSegment, context: SentenceContext): boolean {
  if (!context.hasPreviousSnapshot || segment.rank === null || segment.rank > TOP_RANKS_WATCHED) return false;
  if (segment.n >= LITTLE_DATA_MULTIPLE_OF_MIN_N * context.definition.min_n) return false;
  return segment.previous_rank === null || segment.previous_rank - segment.rank >= JUMP_PLACES;
}

function rankSentence(segment: PublishedSegment, context: SentenceContext): string {
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
 * A withheld segment is described without a single figure: neither how many it holds nor
 * how they did, only that it is below the publication threshold or withheld beside one.
 */
function withheldSentence(segment: SnapshotSegment, context: SentenceContext): string {
  const who = capitalize(describeSegment(segment.values));
  const threshold = formatCount(segment.withheld_below ?? 0);
  return `${who}: figures withheld. It has fewer than ${threshold} ${context.vocabulary.units} (or leaves fewer than ${threshold} outside it), or its figures would let such a group be recovered by subtraction; no published figure describes fewer than ${threshold} ${context.vocabulary.units}.`;
}

/**
 * The `summary` of one segment: its verdict in words with the figures behind it, what the
 * data could have detected when the answer is not clear, and any change since last time.
 * @example
 * segmentSummary(segment, context);
 * // 'Region North has a higher conversion rate than the rest: 18.2% (95% CI 15.1% to 21.6%) against 10.3% for the rest, …'
 */
export function segmentSummary(segment: SnapshotSegment, context: SentenceContext): string {
  if (!isPublished(segment)) return withheldSentence(segment, context);
  return `${mainSentence(segment, context)}${mirrorSentence(segment)}${explainedSentence(segment, context)}${expectedSentence(segment, context)}${secondarySentence(segment, context)}${changeSentence(segment, context)}${rankSentence(segment, context)}${holdoutSentence(segment, context.definition.confidence)}`;
}
