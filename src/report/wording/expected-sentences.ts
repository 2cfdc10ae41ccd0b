/**
 * Sentences on a segment's expected (shrunk) figure and on a cross explained by a parent.
 * Numbers come from the segment's fields through `format.ts`.
 */
import type { SnapshotSegment } from '../shapes/index.js';
import { formatConfidence, formatMoney, formatPercent } from './format.js';
import type { SentenceContext } from './segment-sentences.js';
import { describeSegment } from './vocabulary.js';
import { verdictMetric } from '../definition/index.js';

/** 'channel=web' → 'channel web': a segment label in the words of `describeSegment`. */
function describeLabel(label: string): string {
  const values: Record<string, string> = {};
  for (const part of label.split(' & ')) {
    const at = part.indexOf('=');
    values[part.slice(0, at)] = part.slice(at + 1);
  }
  return describeSegment(values);
}

/** The expected figure of the ranking metric, its interval and what it was drawn toward. */
export function expectedSentence(segment: SnapshotSegment, context: SentenceContext): string {
  if (!segment.tested) return '';
  const byRate = verdictMetric(context.definition) === 'conversion_rate';
  const [estimate, low, high] = byRate
    ? [segment.rate_expected, segment.rate_expected_ci_low, segment.rate_expected_ci_high]
    : [segment.value_expected, segment.value_expected_ci_low, segment.value_expected_ci_high];
  if (estimate === null) return '';
  const level = byRate ? formatPercent : formatMoney;
  const name = byRate ? context.vocabulary.rateName : context.vocabulary.valueName;
  const interval = low !== null && high !== null ? ` (${formatConfidence(context.definition.confidence)} interval ${level(low)} to ${level(high)})` : '';
  const dimensions = Object.keys(segment.values);
  const toward =
    dimensions.length === 2
      ? `what ${dimensions.map((dimension) => describeSegment({ [dimension]: segment.values[dimension] as string })).join(' and ')} predict together`
      : `the whole population's ${name}`;
  return ` Allowing for chance, its expected ${name} is ${level(estimate)}${interval}, drawn toward ${toward} as far as the spread between segments warrants; the ranking uses this figure.`;
}

/** Why a cross is ranked after the parent that explains its verdict. */
export function explainedSentence(segment: SnapshotSegment, context: SentenceContext): string {
  if (segment.explained_by === null) return '';
  const parent = describeLabel(segment.explained_by);
  return ` Its difference from the rest disappears within ${parent}: against the other members of ${parent} it shows no difference at the ${formatConfidence(context.definition.confidence)} level, so ${parent} carries the effect and is ranked above it.`;
}
