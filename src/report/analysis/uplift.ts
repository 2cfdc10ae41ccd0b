/**
 * What the campaign added in one segment, measured against its holdout: the uplift (contacted
 * rate − holdout rate) with Newcombe's hybrid score interval and the rate test, the segment's
 * uplift against the rest's (Altman & Bland), the incremental value per contact (Welch) and,
 * with the definition's economics, the incremental profit per contact; then the advice.
 * Pure: group sums in, figures out. The p-values are adjusted by the caller over the uplift
 * tests of the report, a family of their own.
 */
import { incrementalProfit, newcombeDifferenceInterval, upliftDifference, welchTTest } from '../../stats/index.js';
import type { Interval } from '../../stats/index.js';
import type { GroupStats } from '../../segments/index.js';
import { rateTest } from './segment-tests.js';

/** Money kept and spent per contact, from the definition's `economics`. */
export interface Economics {
  /** fraction of revenue kept as profit, in [0, 1] */
  margin: number;
  /** money per contacted customer, major currency units */
  cost_per_contact: number;
}

export type Advice = 'contact' | 'hold_back' | 'undecided';

/** The holdout fields appended to a segment's row, in the row's order. */
export interface HoldoutFigures {
  holdout_n: number;
  /** null when the arm is too small to publish */
  holdout_conversions: number | null;
  holdout_rate: number | null;
  uplift: number | null;
  uplift_ci_low: number | null;
  uplift_ci_high: number | null;
  uplift_p_value: number | null;
  uplift_p_adjusted: number | null;
  uplift_vs_rest: number | null;
  uplift_vs_rest_ci_low: number | null;
  uplift_vs_rest_ci_high: number | null;
  uplift_vs_rest_p_value: number | null;
  incremental_value_per_contact: number | null;
  incremental_value_ci_low: number | null;
  incremental_value_ci_high: number | null;
  incremental_profit_per_contact: number | null;
  incremental_profit_ci_low: number | null;
  incremental_profit_ci_high: number | null;
  advice: Advice | null;
}

/** The two arms of a segment and of its rest. */
export interface HoldoutArms {
  segment: { contacted: GroupStats; holdout: GroupStats };
  rest: { contacted: GroupStats; holdout: GroupStats };
}

export interface HoldoutSettings {
  confidence: number;
  /** both arms of the segment need at least this many customers */
  minN: number;
  economics: Economics | null;
}

/** The figures of one segment, before adjustment and advice, with why any are missing. */
export interface HoldoutAnalysis {
  figures: HoldoutFigures;
  notes: string[];
}

/**
 * The holdout figures of one segment at the report's confidence; `uplift_p_adjusted` and
 * `advice` are left null for `adviseSegments`, which sees the whole family.
 * @example
 * analyzeHoldout(arms, { confidence: 0.95, minN: 30, economics: { margin: 0.3, cost_per_contact: 0.5 } });
 */
export function analyzeHoldout(arms: HoldoutArms, settings: HoldoutSettings): HoldoutAnalysis {
  const { contacted, holdout } = arms.segment;
  const figures = emptyFigures(holdout);
  const notes: string[] = [];
  if (contacted.n < settings.minN || holdout.n < settings.minN) {
    notes.push(
      `The uplift was not measured: it needs at least ${settings.minN} contacted and ${settings.minN} held-out customers in the segment, and it has ${contacted.n} and ${holdout.n}.`,
    );
    return { figures, notes };
  }
  const uplift = newcombeDifferenceInterval(contacted.conversions, contacted.n, holdout.conversions, holdout.n, settings.confidence);
  if (uplift.ok) {
    figures.uplift = uplift.value.estimate;
    figures.uplift_ci_low = uplift.value.interval.low;
    figures.uplift_ci_high = uplift.value.interval.high;
  } else notes.push(uplift.reason);
  const test = rateTest(contacted.conversions, contacted.n, holdout.conversions, holdout.n);
  if (test.ok) figures.uplift_p_value = test.value.pValue;
  else notes.push(test.reason);

  const { rest } = arms;
  if (rest.contacted.n >= settings.minN && rest.holdout.n >= settings.minN) {
    const versusRest = upliftDifference(armCounts(contacted, holdout), armCounts(rest.contacted, rest.holdout), settings.confidence);
    if (versusRest.ok) {
      figures.uplift_vs_rest = versusRest.value.estimate;
      figures.uplift_vs_rest_ci_low = versusRest.value.interval.low;
      figures.uplift_vs_rest_ci_high = versusRest.value.interval.high;
      figures.uplift_vs_rest_p_value = versusRest.value.pValue;
    } else notes.push(versusRest.reason);
  } else {
    notes.push(`The uplift was not compared with the rest's: the rest has ${rest.contacted.n} contacted and ${rest.holdout.n} held-out customers, fewer than ${settings.minN} in an arm.`);
  }

  const value = welchTTest(contacted.unitValue, holdout.unitValue, settings.confidence);
  if (value.ok) {
    figures.incremental_value_per_contact = value.value.difference;
    figures.incremental_value_ci_low = value.value.interval.low;
    figures.incremental_value_ci_high = value.value.interval.high;
    if (settings.economics !== null) {
      const profit = incrementalProfit({ estimate: value.value.difference, interval: value.value.interval }, settings.economics.margin, settings.economics.cost_per_contact);
      figures.incremental_profit_per_contact = profit.estimate;
      figures.incremental_profit_ci_low = profit.interval.low;
      figures.incremental_profit_ci_high = profit.interval.high;
    }
  } else notes.push(`The incremental value was not measured: ${value.reason}`);
  return { figures, notes };
}

/**
 * The interval the advice reads, at the confidence the family adjustment asks for
 * (`adviceConfidence`, e.g. 1 − α/m under Bonferroni-type adjustments): incremental profit
 * with economics, else uplift. Null when the segment's figures were not computed.
 */
export function adviceInterval(arms: HoldoutArms, settings: HoldoutSettings, adviceConfidence: number): Interval | null {
  const { contacted, holdout } = arms.segment;
  if (contacted.n < settings.minN || holdout.n < settings.minN) return null;
  if (settings.economics === null) {
    const uplift = newcombeDifferenceInterval(contacted.conversions, contacted.n, holdout.conversions, holdout.n, adviceConfidence);
    return uplift.ok ? uplift.value.interval : null;
  }
  const value = welchTTest(contacted.unitValue, holdout.unitValue, adviceConfidence);
  if (!value.ok) return null;
  return incrementalProfit({ estimate: value.value.difference, interval: value.value.interval }, settings.economics.margin, settings.economics.cost_per_contact).interval;
}

/**
 * `contact` when the whole interval is above zero, `hold_back` when it is below, else
 * `undecided`; null without an interval.
 * @example
 * adviceOf({ low: 0.01, high: 0.4 }); // 'contact'
 */
export function adviceOf(interval: Interval | null): Advice | null {
  if (interval === null) return null;
  if (interval.low > 0) return 'contact';
  if (interval.high < 0) return 'hold_back';
  return 'undecided';
}

/** The holdout fields of a report without holdout customers: every one null. */
export function withoutHoldout(): { [Field in keyof HoldoutFigures]: null } {
  return {
    holdout_n: null,
    holdout_conversions: null,
    holdout_rate: null,
    uplift: null,
    uplift_ci_low: null,
    uplift_ci_high: null,
    uplift_p_value: null,
    uplift_p_adjusted: null,
    uplift_vs_rest: null,
    uplift_vs_rest_ci_low: null,
    uplift_vs_rest_ci_high: null,
    uplift_vs_rest_p_value: null,
    incremental_value_per_contact: null,
    incremental_value_ci_low: null,
    incremental_value_ci_high: null,
    incremental_profit_per_contact: null,
    incremental_profit_ci_low: null,
    incremental_profit_ci_high: null,
    advice: null,
  };
}

function armCounts(contacted: GroupStats, holdout: GroupStats) {
  return { contactedConversions: contacted.conversions, contactedN: contacted.n, holdoutConversions: holdout.conversions, holdoutN: holdout.n };
}

function emptyFigures(holdout: GroupStats): HoldoutFigures {
  return {
    ...withoutHoldout(),
    holdout_n: holdout.n,
    holdout_conversions: holdout.conversions,
    holdout_rate: holdout.n > 0 ? holdout.conversions / holdout.n : null,
  };
}
