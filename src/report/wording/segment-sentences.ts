/**
 * Sentences a manager can read, generated from a snapshot's own fields. Every number goes
 * through `format.ts` from the field that holds it, so the words and the figures agree.
 * Sentences carry no number that is not a field (or a definition setting), so a reader can
 * always find the figure a sentence quotes.
 */
import {
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
import type { ReportDefinition } from '../definition/index.js';
import type { Reversal, SnapshotSegment, Verdict } from '../shapes/index.js';

/** The words for a report's unit, outcome and value. */
export interface Vocabulary {
  /** plural noun of the unit */
  units: string;
  /** the outcome rate */
  rateName: string;
  /** the value metric */
  valueName: string;
  /** plural noun of the units the value metric averages over */
  valueUnits: string;
}

/**
 * The nouns of a report's sentences, from its source and value basis.
 * @example
 * vocabulary(definition).rateName; // 'conversion rate' for a campaign report
 */
export function vocabulary(definition: ReportDefinition): Vocabulary {
  const campaign = 'campaign_ids' in definition.source;
  if (campaign) {
    return {
      units: 'contacted customers',
      rateName: 'conversion rate',
      valueName: definition.value_basis === 'per_unit' ? 'revenue per contacted customer' : 'revenue per converting customer',
      valueUnits: definition.value_basis === 'per_unit' ? 'contacted customers' : 'converting customers',
    };
  }
  return {
    units: 'customers',
    rateName: 'purchase rate',
    valueName: definition.value_basis === 'per_unit' ? 'spend per customer' : 'spend per buying customer',
    valueUnits: definition.value_basis === 'per_unit' ? 'customers' : 'buying customers',
  };
}

/** Cautions every report shows, whatever its data (see DESIGN.md, "Cautions the product itself shows"). */
export const CAUTIONS: readonly string[] = [
  'Targeting or excluding people by age, sex or similar traits is restricted in some industries and places, among them housing, credit, employment and insurance advertising. Check local law and take advice from qualified counsel before acting on these segments.',
  'Birth dates are personal data: keep only what this analysis needs, and erase a customer on request (DELETE /v1/customers/{customer_id} removes every row about them).',
  'These comparisons describe the customers as recorded; a segment that does better is associated with the outcome, which does not show that targeting it will cause more of it.',
  'Verdicts allow for the number of segments tested; the smallest detectable differences are those a comparison finds 80% of the time at the stated confidence.',
];

/** "region North", "age band 25-34 and channel web". */
export function describeSegment(values: Record<string, string>): string {
  return Object.entries(values)
    .map(([dimension, value]) => `${dimension.replace(/_/g, ' ')} ${value}`)
    .join(' and ');
}

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

/** The ranking metric of a segment, seen through one interface whichever metric it is. */
interface MetricView {
  name: string;
  estimate: number | null;
  low: number | null;
  high: number | null;
  rest: number | null;
  difference: number | null;
  differenceLow: number | null;
  differenceHigh: number | null;
  adjustedP: number | null;
  mdd: number | null;
  level(value: number): string;
  signed(value: number): string;
  magnitude(value: number): string;
  unit: string;
}

function metricView(segment: SnapshotSegment, metric: ReportDefinition['rank_by'], words: Vocabulary): MetricView {
  if (metric === 'conversion_rate') {
    return {
      name: words.rateName,
      estimate: segment.conversion_rate,
      low: segment.conversion_rate_ci_low,
      high: segment.conversion_rate_ci_high,
      rest: segment.rest.conversion_rate,
      difference: segment.rate_diff,
      differenceLow: segment.rate_diff_ci_low,
      differenceHigh: segment.rate_diff_ci_high,
      adjustedP: segment.rate_p_adjusted,
      mdd: segment.min_detectable_diff,
      level: formatPercent,
      signed: formatPoints,
      magnitude: formatPointsMagnitude,
      unit: ' percentage points',
    };
  }
  return {
    name: words.valueName,
    estimate: segment.value_mean,
    low: segment.value_ci_low,
    high: segment.value_ci_high,
    rest: segment.rest.value_mean,
    difference: segment.value_diff,
    differenceLow: segment.value_diff_ci_low,
    differenceHigh: segment.value_diff_ci_high,
    adjustedP: segment.value_p_adjusted,
    mdd: segment.min_detectable_diff,
    level: formatMoney,
    signed: formatSignedMoney,
    magnitude: (value) => formatMoney(Math.abs(value)),
    unit: '',
  };
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
export const TOP_RANKS_WATCHED = 3;
export const JUMP_PLACES = 3;
export const LITTLE_DATA_MULTIPLE_OF_MIN_N = 10;

/** Whether a segment rose into the top ranks on little data (see the thresholds above). */
export function jumpedOnLittleData(segment: SnapshotSegment, context: SentenceContext): boolean {
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
  return `${mainSentence(segment, context)}${secondarySentence(segment, context)}${changeSentence(segment, context)}${rankSentence(segment, context)}`;
}

export interface ReportSummaryInput {
  definition: ReportDefinition;
  vocabulary: Vocabulary;
  population: { n: number; conversion_rate: number | null; value_mean: number | null };
  counts: Record<Verdict, number>;
  /** tests of the ranking metric that could be computed */
  familySize: number;
  top: SnapshotSegment | null;
  reversals: number;
}

const ADJUSTMENT_NAMES: Record<ReportDefinition['adjustment'], string> = {
  bh: 'the Benjamini-Hochberg false discovery rate',
  holm: "Holm's correction",
  none: 'no correction for the number of tests',
};

/**
 * The short paragraph at the top of a report.
 * @example
 * reportSummary(input); // 'The population holds 12,400 contacted customers with a conversion rate of 11.2% …'
 */
export function reportSummary(input: ReportSummaryInput): string {
  const { definition, vocabulary: words, counts } = input;
  if (input.population.n === 0) {
    return `The population is empty: no ${words.units} match this report's source, so there is nothing to compare yet.`;
  }
  const confidence = formatConfidence(definition.confidence);
  const metric = definition.rank_by === 'conversion_rate' ? words.rateName : words.valueName;
  const overall =
    definition.rank_by === 'conversion_rate'
      ? input.population.conversion_rate === null
        ? ''
        : ` with a ${words.rateName} of ${formatPercent(input.population.conversion_rate)}`
      : input.population.value_mean === null
        ? ''
        : ` with a ${words.valueName} of ${formatMoney(input.population.value_mean)}`;
  const segments = counts.better + counts.worse + counts.no_detectable_difference + counts.inconclusive + counts.too_small;
  const parts = [
    `The population holds ${formatCount(input.population.n)} ${words.units}${overall}.`,
    ` Of ${formatCount(segments)} segments, ${formatCount(input.familySize)} were tested against the rest on ${metric}, using ${ADJUSTMENT_NAMES[definition.adjustment]} at ${confidence} confidence:`,
    ` ${formatCount(counts.better)} do better, ${formatCount(counts.worse)} do worse, ${formatCount(counts.no_detectable_difference)} show no detectable difference and ${formatCount(counts.inconclusive)} are inconclusive;`,
    ` ${formatCount(counts.too_small)} have fewer than ${formatCount(definition.min_n)} ${words.units} (or leave fewer than that outside) and were not tested.`,
  ];
  if (input.top !== null && input.top.rank === 1) {
    const view = metricView(input.top, definition.rank_by, words);
    if (view.estimate !== null) {
      parts.push(` First in the ranking is ${describeSegment(input.top.values)} with ${view.level(view.estimate)}${input.top.verdict === 'better' ? ', reliably above the rest' : ', though not reliably different from the rest'}.`);
    }
  }
  if (input.reversals > 0) parts.push(' Some comparisons reverse within the levels of another dimension; see the reversal notes before reading the one-way segments alone.');
  return parts.join('');
}

/**
 * A reversal (Simpson's paradox) in words: which way the overall comparison goes, and that
 * it goes the other way within every compared level of another dimension.
 * @example
 * reversalSentence(reversal, words, 'conversion_rate', 30);
 */
export function reversalSentence(
  reversal: Omit<Reversal, 'sentence'>,
  words: Vocabulary,
  metric: ReportDefinition['rank_by'],
  minN: number,
): string {
  const level = metric === 'conversion_rate' ? formatPercent : formatMoney;
  const name = metric === 'conversion_rate' ? words.rateName : words.valueName;
  const dimension = reversal.dimension.replace(/_/g, ' ');
  const within = reversal.within.replace(/_/g, ' ');
  return `Overall, ${dimension} ${reversal.higher_overall} has a higher ${name} than ${dimension} ${reversal.lower_overall} (${level(reversal.higher_overall_metric)} against ${level(reversal.lower_overall_metric)}), but within each of the ${formatCount(reversal.levels_compared)} levels of ${within} where both have at least ${formatCount(minN)} ${words.units} it is the other way round. The overall order comes from how the two are spread over ${within} (Simpson's paradox): compare them within ${within}, not overall.`;
}
