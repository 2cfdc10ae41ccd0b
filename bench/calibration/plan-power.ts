/**
 * Whether a campaign sized by `planHoldoutCampaign` reaches the power it promises: campaigns
 * are drawn at the planned sizes with the holdout at the baseline rate and the contacted
 * customers at baseline + min_uplift, and the pooled two-proportion z-test at α per test
 * counts detections (two-sided p below α and contacted above holdout). Drawn again with no
 * uplift, the share of (two-sided) rejections is the false-alarm rate, which should be α.
 */
import { planHoldoutCampaign, twoProportionZTest, type HoldoutCampaignPlanInput } from '../../src/stats/index.js';
import { draws, type Draws } from './units-and-cells.js';

export interface PlanPowerReading {
  readonly plan: HoldoutCampaignPlanInput;
  readonly holdout: number;
  readonly treated: number;
  readonly alpha: number;
  /** share of campaigns with the true uplift in which the rise was detected */
  readonly power: number;
  /** share of campaigns with no uplift in which the test rejected */
  readonly falseAlarms: number;
  readonly replicates: number;
}

function rejects(random: Draws, holdout: number, treated: number, baseline: number, treatedRate: number, alpha: number, rise: boolean): boolean {
  const test = twoProportionZTest(random.binomial(treated, treatedRate), treated, random.binomial(holdout, baseline), holdout);
  if (!test.ok) return false;
  return test.value.pValue < alpha && (!rise || test.value.difference > 0);
}

/** Achieved power and false-alarm rate of one plan over `replicates` simulated campaigns. */
export function simulatePlanPower(plan: HoldoutCampaignPlanInput, replicates: number, seed: number): PlanPowerReading {
  const sizes = planHoldoutCampaign(plan);
  if (!sizes.ok) throw new Error(sizes.reason);
  const { holdoutPerSegment: holdout, treatedPerSegment: treated, alphaPerTest: alpha } = sizes.value;
  const random = draws(seed);
  let detected = 0;
  let falseAlarms = 0;
  for (let replicate = 0; replicate < replicates; replicate += 1) {
    if (rejects(random, holdout, treated, plan.baselineRate, plan.baselineRate + plan.minUplift, alpha, true)) detected += 1;
    if (rejects(random, holdout, treated, plan.baselineRate, plan.baselineRate, alpha, false)) falseAlarms += 1;
  }
  return { plan, holdout, treated, alpha, power: detected / replicates, falseAlarms: falseAlarms / replicates, replicates };
}

/** The plans the bench script reads: common campaign rates, shares and family sizes. */
const PLAN_SCENARIOS: readonly HoldoutCampaignPlanInput[] = [
  { baselineRate: 0.1, minUplift: 0.05 },
  { baselineRate: 0.04, minUplift: 0.01, segments: 3 },
  { baselineRate: 0.02, minUplift: 0.01, holdoutShare: 0.1, segments: 6, power: 0.9 },
  { baselineRate: 0.3, minUplift: 0.05, holdoutShare: 0.5 },
  { baselineRate: 0.05, minUplift: 0.02, holdoutShare: 0.15, segments: 10, confidence: 0.9 },
];

const isMain = import.meta.url === `file://${process.argv[1]}`;
if (isMain) {
  const replicates = Number(process.argv[2] ?? 4000);
  const seed = Number(process.argv[3] ?? 12);
  console.log(`plan power: ${replicates} simulated campaigns per plan, seed ${seed}`);
  console.log('baseline | uplift | holdout share | segments | power target | holdout | treated | α per test | achieved power | false alarms');
  PLAN_SCENARIOS.forEach((plan, index) => {
    const reading = simulatePlanPower(plan, replicates, seed + index);
    console.log(
      [plan.baselineRate, plan.minUplift, plan.holdoutShare ?? 0.2, plan.segments ?? 1, plan.power ?? 0.8, reading.holdout, reading.treated, reading.alpha.toPrecision(4), reading.power.toFixed(3), reading.falseAlarms.toFixed(4)].join(' | '),
    );
  });
}
