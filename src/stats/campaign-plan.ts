/**
 * Sizing a campaign with a random holdout: how many customers each segment needs, held back
 * and contacted, for the uplift test (contacted rate − holdout rate, pooled two-proportion
 * z-test) to detect a given rise with a given power when several segments are tested at once.
 */
import { StatsInputError } from './errors.js';
import { unequalTwoProportionSampleSize } from './power.js';
import { computed, notComputable } from './result.js';
import type { Outcome } from './result.js';
import { requireClosedUnitInterval, requireOpenUnitInterval } from './validate.js';

/** Inputs of `planHoldoutCampaign`. */
export interface HoldoutCampaignPlanInput {
  /** conversion rate without the campaign (the holdout's expected rate) */
  readonly baselineRate: number;
  /** the smallest rise of the rate worth detecting, in rate units (0.01 = one point) */
  readonly minUplift: number;
  /** share of each segment's customers held back, default 0.2 */
  readonly holdoutShare?: number;
  /** how many segments will be tested, each at α/segments (Bonferroni), default 1 */
  readonly segments?: number;
  /** 1 − familywise significance level, default 0.95 */
  readonly confidence?: number;
  /** default 0.8 */
  readonly power?: number;
}

/** A campaign plan: whole customers per segment and in all. */
export interface HoldoutCampaignPlan {
  readonly holdoutPerSegment: number;
  readonly treatedPerSegment: number;
  /** holdout + treated: the customers each segment's contact list must hold */
  readonly contactsPerSegment: number;
  readonly totalContacts: number;
  readonly alphaPerTest: number;
  /** r = treated / holdout the sizes were computed for */
  readonly ratio: number;
  /** the unrounded sizes, for checks against other software */
  readonly exactHoldout: number;
  readonly exactTreated: number;
}

/**
 * Floating-point noise can leave an exact whole size a hair above the integer (e.g.
 * 100.00000000000003); a relative slack far below any planning precision keeps it at 100.
 */
const ROUNDING_SLACK = 1e-10;

function roundUpToWhole(size: number): number {
  return Math.ceil(size * (1 - ROUNDING_SLACK));
}

/**
 * Sizes of the holdout and contacted arms in every segment. Two-sided test at
 * α per test = (1 − confidence)/segments, normal approximation without continuity
 * correction; unequal allocation r = (1 − holdoutShare)/holdoutShare by Fleiss, Levin & Paik
 * (2003) (see `unequalTwoProportionSampleSize`), the holdout at the baseline rate and the
 * contacted arm at baseline + minUplift; each arm rounded up to a whole customer. With
 * holdoutShare = 0.5 both arms equal R's `power.prop.test` n, rounded up.
 * Undefined (with a reason) when baseline + minUplift exceeds 1.
 * @throws StatsInputError when the baseline is outside [0, 1), minUplift ≤ 0, holdoutShare,
 * confidence or power outside (0, 1), or segments is not a positive whole number
 * @example
 * planHoldoutCampaign({ baselineRate: 0.1, minUplift: 0.05 });
 * // { ok: true, value: { holdoutPerSegment: 445, treatedPerSegment: 1779, contactsPerSegment: 2224, … } }
 */
export function planHoldoutCampaign(input: HoldoutCampaignPlanInput): Outcome<HoldoutCampaignPlan> {
  const { baselineRate, minUplift, holdoutShare = 0.2, segments = 1, confidence = 0.95, power = 0.8 } = input;
  requireClosedUnitInterval('baselineRate', baselineRate);
  if (baselineRate === 1) throw new StatsInputError('baselineRate', 'baselineRate must be below 1: no rise is possible from a rate of 1');
  if (typeof minUplift !== 'number' || !Number.isFinite(minUplift) || minUplift <= 0) {
    throw new StatsInputError('minUplift', `minUplift must be a number greater than 0, got ${String(minUplift)}`);
  }
  requireOpenUnitInterval('holdoutShare', holdoutShare);
  requireOpenUnitInterval('confidence', confidence);
  requireOpenUnitInterval('power', power);
  if (typeof segments !== 'number' || !Number.isSafeInteger(segments) || segments < 1) {
    throw new StatsInputError('segments', `segments must be a positive whole number, got ${String(segments)}`);
  }
  const treatedRate = baselineRate + minUplift;
  if (treatedRate > 1) {
    return notComputable(`No campaign can show this rise: ${baselineRate} + ${minUplift} is above a rate of 1.`);
  }
  // 1 − 0.95 is 0.050000000000000044 in binary; 15 significant digits give back the 0.05 meant.
  const alphaPerTest = Number(((1 - confidence) / segments).toPrecision(15));
  const ratio = (1 - holdoutShare) / holdoutShare;
  const sizes = unequalTwoProportionSampleSize({ p1: baselineRate, p2: treatedRate, ratio, power, alpha: alphaPerTest });
  if (!sizes.ok) return sizes;
  const holdoutPerSegment = roundUpToWhole(sizes.value.n1);
  const treatedPerSegment = roundUpToWhole(sizes.value.n2);
  const contactsPerSegment = holdoutPerSegment + treatedPerSegment;
  return computed({
    holdoutPerSegment,
    treatedPerSegment,
    contactsPerSegment,
    totalContacts: contactsPerSegment * segments,
    alphaPerTest,
    ratio,
    exactHoldout: sizes.value.n1,
    exactTreated: sizes.value.n2,
  });
}
