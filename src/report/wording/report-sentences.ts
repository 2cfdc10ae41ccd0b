/**
 * The sentences about a report as a whole: its summary paragraph, the cautions it shows, what
 * it is compared with, and its reversals. Numbers go through `format.ts`, as in every sentence.
 */
import { formatConfidence, formatCount, formatMoney, formatPercent } from './format.js';
import { type ReportDefinition, verdictMetric, type VerdictMetric } from '../definition/index.js';
import type { Comparison, Reversal, SnapshotSegment, Verdict } from '../shapes/index.js';
import { metricView } from './metric-view.js';
import { describeSegment, type Vocabulary } from './vocabulary.js';

/** Cautions every report shows, whatever its data (the README's cautions section says the same). */
const CAUTIONS: readonly string[] = [
  'Targeting or excluding people by age, sex or similar traits is restricted in some industries and places, among them housing, credit, employment and insurance advertising. Check local law and take advice from qualified counsel before acting on these segments.',
  'Birth dates are personal data: keep only what this analysis needs, and erase a customer on request (DELETE /v1/customers/{customer_id} removes every row about them).',
  'These comparisons describe the customers as recorded; a segment that does better is associated with the outcome, which does not show that targeting it will cause more of it.',
  'Verdicts allow for the number of segments tested; the smallest detectable differences are those a comparison finds 80% of the time at the stated confidence.',
];
export interface ReportSummaryInput {
  definition: ReportDefinition;
  vocabulary: Vocabulary;
  population: { n: number; conversion_rate: number | null; value_mean: number | null };
  counts: Record<Verdict, number>;
  /** tests of the ranking metric that could be computed */
  familySize: number;
  top: SnapshotSegment | null;
  reversals: number;
  /** segments withheld by the publication threshold (counted among the too-small ones), and that threshold */
  withheld?: { segments: number; threshold: number };
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
  const metric = verdictMetric(definition) === 'conversion_rate' ? words.rateName : words.valueName;
  const overall =
    verdictMetric(definition) === 'conversion_rate'
      ? input.population.conversion_rate === null
        ? ''
        : ` with a ${words.rateName} of ${formatPercent(input.population.conversion_rate)}`
      : input.population.value_mean === null
        ? ''
        : ` with a ${words.valueName} of ${formatMoney(input.population.value_mean)}`;
  const segments = counts.better + counts.worse + counts.equivalent + counts.inconclusive + counts.too_small;
  const parts = [
    `The population holds ${formatCount(input.population.n)} ${words.units}${overall}.`,
    ` Of ${formatCount(segments)} segments, ${formatCount(input.familySize)} were tested against the rest on ${metric}, using ${ADJUSTMENT_NAMES[definition.adjustment]} at ${confidence} confidence:`,
    ` ${formatCount(counts.better)} do better, ${formatCount(counts.worse)} do worse, ${formatCount(counts.equivalent)} are equivalent to the rest within the equivalence margin and ${formatCount(counts.inconclusive)} are inconclusive;`,
    ` ${formatCount(counts.too_small)} ${counts.too_small === 1 ? 'has' : 'have'} fewer than ${formatCount(definition.min_n)} ${words.units} (or ${counts.too_small === 1 ? 'leaves' : 'leave'} fewer than that outside) and ${counts.too_small === 1 ? 'was' : 'were'} not tested.`,
  ];
  if (input.withheld !== undefined && input.withheld.segments > 0) {
    const threshold = formatCount(input.withheld.threshold);
    parts.push(
      ` Of the segments not tested, ${formatCount(input.withheld.segments)} are shown without figures: they describe fewer than ${threshold} ${words.units}, or their figures would let such a group be recovered by subtraction.`,
    );
  }
  if (input.top !== null && input.top.rank === 1) {
    const view = metricView(input.top, verdictMetric(definition), words);
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
  metric: VerdictMetric,
  minN: number,
): string {
  const level = metric === 'conversion_rate' ? formatPercent : formatMoney;
  const name = metric === 'conversion_rate' ? words.rateName : words.valueName;
  const dimension = reversal.dimension.replace(/_/g, ' ');
  const within = reversal.within.replace(/_/g, ' ');
  return `Overall, ${dimension} ${reversal.higher_overall} has a higher ${name} than ${dimension} ${reversal.lower_overall} (${level(reversal.higher_overall_metric)} against ${level(reversal.lower_overall_metric)}), but within each of the ${formatCount(reversal.levels_compared)} levels of ${within} where both have at least ${formatCount(minN)} ${words.units} it is the other way round. The overall order comes from how the two are spread over ${within} (Simpson's paradox): compare them within ${within}, not overall.`;
}

/**
 * The cautions of a snapshot: those every report shows, and one more when its value sums had
 * to be computed in floating point.
 */
export function snapshotCautions(arithmetic: 'exact' | 'floating'): string[] {
  const cautions = [...CAUTIONS];
  if (arithmetic === 'floating') {
    cautions.push('The value sums were too large for exact integer arithmetic and were computed in floating point; the last digits of value figures may differ between database engines.');
  }
  return cautions;
}

/**
 * What a snapshot's segments are compared with, in words.
 * @example
 * comparisonNote({ compared_with: null, previous_window: null, previous_snapshot_id: null });
 * // 'This is the first snapshot of the report: there is nothing earlier to compare with.'
 */
export function comparisonNote(basis: Omit<Comparison, 'note'>): string {
  const window = basis.previous_window;
  if (basis.compared_with === 'previous_window' && window !== null) {
    return `Each segment is compared with the same segment in the window of the same length just before this one (${window.from} to ${window.to}), each window over the customers known at its start; rank movement is against the previous snapshot.`;
  }
  if (basis.compared_with === 'previous_snapshot') {
    return 'A campaign report has no time window, so the change of each segment compares the contacts stored since the previous snapshot with those it had; a segment with no new contacts has no change.';
  }
  return 'This is the first snapshot of the report: there is nothing earlier to compare with.';
}
