/**
 * The verdict of a segment, on the report's ranking metric (conversion rate or value).
 *
 * The rule, in order:
 * 1. `too_small`: the segment, or the rest, has fewer than `min_n` units; it is not tested.
 * 2. `better` / `worse`: the adjusted p-value (Benjamini–Hochberg, Holm or none, over every
 *    tested segment of the report for this metric) is below α = 1 − confidence; the sign of
 *    the observed difference decides which.
 * 3. `no_detectable_difference`: not significant, and the confidence interval of the
 *    difference lies strictly inside (−MDD↓, +MDD↑), where MDD is the minimum detectable
 *    difference at 80 % power in each direction. The data then rule out any difference the
 *    comparison was able to detect: a "no difference" that is earned, not assumed.
 * 4. `inconclusive`: every other untested-for or non-significant case: the interval still
 *    reaches differences at least as large as the MDD (a real difference may be hidden), or a
 *    figure needed for the rule could not be computed.
 * Absence of evidence is never reported as evidence of absence (Altman & Bland 1995, BMJ 311,
 * 485 — from memory); the MDD rule follows the power conventions of Cohen (1988).
 */
import type { ReportDefinition } from '../definition/index.js';
import type { SnapshotSegment, Verdict } from '../shapes/index.js';
import { valueOrNull } from './outcome.js';
import type { SegmentStatistics } from './segment-tests.js';

export interface VerdictInput {
  tested: boolean;
  /** the observed difference segment − rest and its interval, or null when not computable */
  difference: { estimate: number; low: number; high: number } | null;
  adjustedPValue: number | null;
  alpha: number;
  /** minimum detectable rise and fall; null when that direction is not detectable at all */
  mddIncrease: number | null;
  mddDecrease: number | null;
}

/**
 * Applies the verdict rule above.
 * @example
 * decideVerdict({ tested: true, difference: { estimate: 0.05, low: 0.02, high: 0.08 }, adjustedPValue: 0.001, alpha: 0.05, mddIncrease: 0.03, mddDecrease: 0.03 }); // 'better'
 * decideVerdict({ tested: true, difference: { estimate: 0.001, low: -0.01, high: 0.012 }, adjustedPValue: 0.8, alpha: 0.05, mddIncrease: 0.03, mddDecrease: 0.03 }); // 'no_detectable_difference'
 */
export function decideVerdict(input: VerdictInput): Verdict {
  if (!input.tested) return 'too_small';
  if (input.adjustedPValue === null || input.difference === null) return 'inconclusive';
  if (input.adjustedPValue < input.alpha) {
    if (input.difference.estimate > 0) return 'better';
    if (input.difference.estimate < 0) return 'worse';
    return 'inconclusive';
  }
  if (input.mddIncrease === null || input.mddDecrease === null) return 'inconclusive';
  if (input.difference.low > -input.mddDecrease && input.difference.high < input.mddIncrease) return 'no_detectable_difference';
  return 'inconclusive';
}

/**
 * The verdict of one segment on the report's ranking metric, from its adjusted p-value and
 * the minimum detectable differences of that metric.
 */
export function segmentVerdict(segment: SnapshotSegment, statistics: SegmentStatistics, definition: ReportDefinition): Verdict {
  const alpha = 1 - definition.confidence;
  if (definition.rank_by === 'conversion_rate') {
    return decideVerdict({
      tested: segment.tested,
      difference:
        segment.rate_diff === null || segment.rate_diff_ci_low === null || segment.rate_diff_ci_high === null
          ? null
          : { estimate: segment.rate_diff, low: segment.rate_diff_ci_low, high: segment.rate_diff_ci_high },
      adjustedPValue: segment.rate_p_adjusted,
      alpha,
      mddIncrease: valueOrNull(statistics.rateMdd.increase),
      mddDecrease: valueOrNull(statistics.rateMdd.decrease),
    });
  }
  const mdd = valueOrNull(statistics.valueMdd);
  return decideVerdict({
    tested: segment.tested,
    difference:
      segment.value_diff === null || segment.value_diff_ci_low === null || segment.value_diff_ci_high === null
        ? null
        : { estimate: segment.value_diff, low: segment.value_diff_ci_low, high: segment.value_diff_ci_high },
    adjustedPValue: segment.value_p_adjusted,
    alpha,
    mddIncrease: mdd,
    mddDecrease: mdd,
  });
}
