/**
 * The verdict of a segment, on the report's ranking metric (conversion rate or value).
 *
 * The rule, in order:
 * 1. `too_small`: the segment, or the rest, has fewer than `min_n` units; it is not tested.
 * 2. `better` / `worse`: the adjusted p-value (Benjamini–Hochberg, Holm or none, over every
 *    tested segment of the report for this metric) is below α = 1 − confidence; the sign of
 *    the observed difference decides which.
 * 3. `equivalent`: the two one-sided tests (Schuirmann 1987) show that the difference lies
 *    within ± the report's equivalence margin: their p-value, adjusted over the equivalence
 *    tests of the report (their own family, with the report's adjustment), is below α. The
 *    margin is the analyst's statement of a difference too small to matter; without one (value
 *    metric, `value_equivalence_margin` null) no segment is called equivalent.
 * 4. `inconclusive`: everything else — a real difference may be hidden, or one the size of
 *    the margin cannot be ruled out, or a figure needed for the rule could not be computed.
 * Absence of evidence is never reported as evidence of absence (Altman & Bland 1995, BMJ 311,
 * 485 — from memory): only a test against a stated margin earns "treat it like the rest".
 */
import { type ReportDefinition, verdictMetric } from '../definition/index.js';
import type { SnapshotSegment, Verdict } from '../shapes/index.js';

export interface VerdictInput {
  tested: boolean;
  /** the observed difference segment − rest, or null when not computable */
  difference: number | null;
  adjustedPValue: number | null;
  /** the adjusted TOST p-value, or null when there is no margin or it could not be computed */
  adjustedEquivalencePValue: number | null;
  alpha: number;
}

/**
 * Applies the verdict rule above.
 * @example
 * decideVerdict({ tested: true, difference: 0.05, adjustedPValue: 0.001, adjustedEquivalencePValue: 0.9, alpha: 0.05 }); // 'better'
 * decideVerdict({ tested: true, difference: 0.001, adjustedPValue: 0.8, adjustedEquivalencePValue: 0.01, alpha: 0.05 }); // 'equivalent'
 */
export function decideVerdict(input: VerdictInput): Verdict {
  if (!input.tested) return 'too_small';
  if (input.adjustedPValue !== null && input.difference !== null && input.adjustedPValue < input.alpha) {
    if (input.difference > 0) return 'better';
    if (input.difference < 0) return 'worse';
  }
  if (input.adjustedEquivalencePValue !== null && input.adjustedEquivalencePValue < input.alpha) return 'equivalent';
  return 'inconclusive';
}

/** The verdict of one segment on the report's ranking metric, from its adjusted p-values. */
export function segmentVerdict(segment: SnapshotSegment, definition: ReportDefinition): Verdict {
  const alpha = 1 - definition.confidence;
  const byRate = verdictMetric(definition) === 'conversion_rate';
  return decideVerdict({
    tested: segment.tested,
    difference: byRate ? segment.rate_diff : segment.value_diff,
    adjustedPValue: byRate ? segment.rate_p_adjusted : segment.value_p_adjusted,
    adjustedEquivalencePValue: (byRate ? segment.equivalence.conversion_rate : segment.equivalence.value)?.p_adjusted ?? null,
    alpha,
  });
}
