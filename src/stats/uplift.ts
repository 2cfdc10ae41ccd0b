/**
 * What a campaign added, measured against a random holdout: the difference of two uplifts
 * (a segment's against the rest's) as the difference of two independent estimates, and the
 * incremental profit per contact as a linear transform of the incremental value. The uplift
 * of one group itself is a difference of two rates (`newcombeDifferenceInterval` with the
 * rate test), and the incremental value a difference of two means (`welchTTest`); neither
 * needs a function of its own.
 */
import { standardNormalTwoSidedPValue, twoSidedCriticalZ } from './distributions.js';
import { StatsInputError } from './errors.js';
import { computed, notComputable } from './result.js';
import type { EstimateWithInterval, Interval, Outcome } from './result.js';
import { requireClosedUnitInterval, requireFiniteNumber, requireSuccessesWithinTrials } from './validate.js';

/** The two arms of one group: x of n converted among the contacted, and among the holdout. */
export interface ArmCounts {
  readonly contactedConversions: number;
  readonly contactedN: number;
  readonly holdoutConversions: number;
  readonly holdoutN: number;
}

/** The difference of two uplifts with its normal interval and two-sided test of no difference. */
export interface UpliftDifferenceResult extends EstimateWithInterval {
  readonly standardError: number;
  readonly z: number;
  /** two-sided */
  readonly pValue: number;
}

function requireArms(name: string, arms: ArmCounts): void {
  requireSuccessesWithinTrials(`${name}.contactedConversions`, arms.contactedConversions, `${name}.contactedN`, arms.contactedN);
  requireSuccessesWithinTrials(`${name}.holdoutConversions`, arms.holdoutConversions, `${name}.holdoutN`, arms.holdoutN);
}

/** Unpooled (Wald) variance of one estimated rate, p̂(1 − p̂)/n. */
function rateVariance(conversions: number, n: number): number {
  const rate = conversions / n;
  return (rate * (1 - rate)) / n;
}

/**
 * The uplift of a segment minus the uplift of the rest, u₁ − u₂ with uᵢ = p̂ᵢ(contacted) −
 * p̂ᵢ(holdout), as the difference between two independent estimates: SE = √(SE₁² + SE₂²),
 * each SEᵢ² the sum of the unpooled Wald variances p̂(1 − p̂)/n of its two arms, so
 * SE = √(Σ p̂(1 − p̂)/n) over the four groups; the interval is (u₁ − u₂) ± z·SE and the
 * p-value 2Φ(−|u₁ − u₂|/SE). Source: Altman, D. G. & Bland, J. M. (2003). Interaction
 * revisited: the difference between two estimates. BMJ 326, 219. Undefined (with a reason)
 * when an arm is empty, or when every arm converted all or none of its customers (SE = 0).
 * @throws StatsInputError for invalid counts or a confidence outside (0, 1)
 * @example
 * upliftDifference(
 *   { contactedConversions: 120, contactedN: 800, holdoutConversions: 15, holdoutN: 200 },
 *   { contactedConversions: 300, contactedN: 3200, holdoutConversions: 60, holdoutN: 800 },
 * );
 * // { ok: true, value: { estimate: 0.05625, standardError: 0.024890…, z: 2.25993…, pValue: 0.023825…, … } }
 */
export function upliftDifference(segment: ArmCounts, rest: ArmCounts, confidence = 0.95): Outcome<UpliftDifferenceResult> {
  requireArms('segment', segment);
  requireArms('rest', rest);
  const criticalZ = twoSidedCriticalZ(confidence);
  const arms: Array<[string, number, number]> = [
    ["the segment's contacted customers", segment.contactedConversions, segment.contactedN],
    ["the segment's holdout", segment.holdoutConversions, segment.holdoutN],
    ["the rest's contacted customers", rest.contactedConversions, rest.contactedN],
    ["the rest's holdout", rest.holdoutConversions, rest.holdoutN],
  ];
  const empty = arms.find(([, , n]) => n === 0);
  if (empty) return notComputable(`The difference of uplifts is undefined: ${empty[0]} are none (n = 0).`);
  const variance = arms.reduce((sum, [, conversions, n]) => sum + rateVariance(conversions, n), 0);
  if (variance === 0) {
    return notComputable('The difference of uplifts is undefined: every group converted all or none of its customers, so its standard error is 0.');
  }
  const upliftOf = (arms: ArmCounts) => arms.contactedConversions / arms.contactedN - arms.holdoutConversions / arms.holdoutN;
  const estimate = upliftOf(segment) - upliftOf(rest);
  const standardError = Math.sqrt(variance);
  const z = estimate / standardError;
  return computed({
    estimate,
    interval: { low: estimate - criticalZ * standardError, high: estimate + criticalZ * standardError },
    standardError,
    z,
    pValue: standardNormalTwoSidedPValue(z),
  });
}

/**
 * Incremental profit per contact from the incremental value (revenue) per contact:
 * margin × value − cost per contact, applied to the estimate and to both ends of its interval.
 * A map that is increasing (margin ≥ 0) keeps the coverage of the interval, since the profit
 * is inside the mapped interval exactly when the value is inside the original one. Source:
 * common practice (an interval of a monotone function of a parameter), no published source.
 * @param incrementalValue - the incremental value with its interval (Welch's, from `welchTTest`)
 * @param margin - the fraction of revenue kept as profit, in [0, 1]
 * @param costPerContact - money spent per contacted customer, finite and ≥ 0
 * @throws StatsInputError for a margin outside [0, 1] or a negative or non-finite cost
 * @example
 * incrementalProfit({ estimate: 4, interval: { low: 1, high: 7 } }, 0.3, 0.5);
 * // { estimate: 0.7, interval: { low: -0.2, high: 1.6 } }
 */
export function incrementalProfit(incrementalValue: EstimateWithInterval, margin: number, costPerContact: number): EstimateWithInterval {
  requireClosedUnitInterval('margin', margin);
  requireFiniteNumber('costPerContact', costPerContact);
  if (costPerContact < 0) throw new StatsInputError('costPerContact', `costPerContact must not be negative, got ${costPerContact}`);
  const profitOf = (value: number) => margin * value - costPerContact;
  const interval: Interval = { low: profitOf(incrementalValue.interval.low), high: profitOf(incrementalValue.interval.high) };
  return { estimate: profitOf(incrementalValue.estimate), interval };
}
