/**
 * Campaign plans: the sizes of the holdout and the contacted arm per segment for a stated
 * baseline (`planCampaign`), and the same for every segment of a report's latest snapshot,
 * with whether the last campaign reached them (`planForReport`).
 */
import { snapshotInContext, type ReportDependencies } from '../report/snapshot/index.js';
import type { Snapshot, SnapshotSegment } from '../report/shapes/index.js';
import { formatCount, formatPercent, formatPointsMagnitude } from '../report/wording/format.js';
import { planHoldoutCampaign, type HoldoutCampaignPlan } from '../stats/index.js';
import type { Outcome } from '../stats/result.js';
import { PLAN_BOUNDS, type Plan, type PlanRequest, type ReportPlan, type ReportPlanQuery, type SegmentPlan } from './shapes.js';

function percentOf(fraction: number): string {
  return `${Math.round(fraction * 1000) / 10}%`;
}

/** The plan in words, with the figures it rests on. */
function planSentence(request: Required<PlanRequest>, plan: HoldoutCampaignPlan): string {
  const across =
    request.segments === 1
      ? `at ${percentOf(request.confidence)} confidence (two-sided α = ${plan.alphaPerTest})`
      : `at ${percentOf(request.confidence)} confidence over ${formatCount(request.segments)} segments (two-sided α = ${Number(plan.alphaPerTest.toPrecision(4))} per segment)`;
  const total = request.segments === 1 ? '' : `; ${formatCount(plan.totalContacts)} customers over the ${formatCount(request.segments)} segments`;
  return (
    `To detect a rise of ${formatPointsMagnitude(request.min_uplift)} percentage points from ${formatPercent(request.baseline_rate)} to ${formatPercent(request.baseline_rate + request.min_uplift)} ` +
    `with ${percentOf(request.power)} power ${across}, each segment needs ${formatCount(plan.holdoutPerSegment)} customers held back and ` +
    `${formatCount(plan.treatedPerSegment)} contacted (${formatCount(plan.contactsPerSegment)} in all, ${percentOf(request.holdout_share)} held back)${total}.`
  );
}

function withDefaults(request: PlanRequest): Required<PlanRequest> {
  return {
    baseline_rate: request.baseline_rate,
    min_uplift: request.min_uplift,
    holdout_share: request.holdout_share ?? PLAN_BOUNDS.holdout_share.default,
    segments: request.segments ?? PLAN_BOUNDS.segments.default,
    confidence: request.confidence ?? PLAN_BOUNDS.confidence.default,
    power: request.power ?? PLAN_BOUNDS.power.default,
  };
}

function sizesFor(request: Required<PlanRequest>): Outcome<HoldoutCampaignPlan> {
  return planHoldoutCampaign({
    baselineRate: request.baseline_rate,
    minUplift: request.min_uplift,
    holdoutShare: request.holdout_share,
    segments: request.segments,
    confidence: request.confidence,
    power: request.power,
  });
}

/**
 * The plan for one baseline rate; not computable (with the reason) when baseline + min_uplift
 * passes 1. The request has been validated against `PlanRequest`.
 */
export function planCampaign(request: PlanRequest): Outcome<Plan> {
  const complete = withDefaults(request);
  const sizes = sizesFor(complete);
  if (!sizes.ok) return sizes;
  return {
    ok: true,
    value: {
      ...complete,
      holdout_per_segment: sizes.value.holdoutPerSegment,
      treated_per_segment: sizes.value.treatedPerSegment,
      contacts_per_segment: sizes.value.contactsPerSegment,
      total_contacts: sizes.value.totalContacts,
      alpha_per_test: sizes.value.alphaPerTest,
      sentence: planSentence(complete, sizes.value),
    },
  };
}

/**
 * Holdout figures of a segment when the snapshot holds them (campaign reports with a holdout
 * add `holdout_n` and `holdout_rate` to the row); read by name so snapshots without them, and
 * those stored before they existed, plan from the rest's rate.
 */
function holdoutFigures(segment: SnapshotSegment): { n: number; rate: number } | null {
  const row = segment as Record<string, unknown>;
  const n = row['holdout_n'];
  const rate = row['holdout_rate'];
  return typeof n === 'number' && typeof rate === 'number' ? { n, rate } : null;
}

function unplanned(segment: SnapshotSegment, baseline: number | null, source: SegmentPlan['baseline_source'], note: string): SegmentPlan {
  return {
    segment: segment.segment,
    baseline_rate: baseline,
    baseline_source: source,
    holdout_per_segment: null,
    treated_per_segment: null,
    contacts_per_segment: null,
    last_treated: segment.n,
    last_holdout: holdoutFigures(segment)?.n ?? null,
    last_had_enough: null,
    note,
  };
}

function planSegment(segment: SnapshotSegment, settings: Omit<Required<PlanRequest>, 'baseline_rate'>): SegmentPlan {
  if (segment.n === null || segment.rest === null) return unplanned(segment, null, null, 'withheld: the segment is below the publication threshold');
  const holdout = holdoutFigures(segment);
  const baseline = holdout !== null ? holdout.rate : segment.rest.conversion_rate;
  const source = holdout !== null ? 'holdout' : 'rest';
  if (baseline === null) return unplanned(segment, null, null, 'no baseline: the rest of the population has no customers');
  if (baseline >= 1) return unplanned(segment, baseline, source, 'the baseline rate is 1: no rise is possible');
  const sizes = sizesFor({ ...settings, baseline_rate: baseline });
  if (!sizes.ok) return unplanned(segment, baseline, source, sizes.reason);
  const hadEnough =
    holdout !== null
      ? holdout.n >= sizes.value.holdoutPerSegment && segment.n >= sizes.value.treatedPerSegment
      : segment.n >= sizes.value.contactsPerSegment;
  return {
    segment: segment.segment,
    baseline_rate: baseline,
    baseline_source: source,
    holdout_per_segment: sizes.value.holdoutPerSegment,
    treated_per_segment: sizes.value.treatedPerSegment,
    contacts_per_segment: sizes.value.contactsPerSegment,
    last_treated: segment.n,
    last_holdout: holdout?.n ?? null,
    last_had_enough: hadEnough,
    note: null,
  };
}

/** Segments α is split over by default: every segment of the snapshot, a yes/no mirror counted once. */
function comparedSegments(snapshot: Snapshot): number {
  return Math.max(1, snapshot.segments.filter((segment) => segment.mirror_of === null).length);
}

/**
 * The plan for every segment of the report's latest snapshot.
 * @throws ReportNotFoundError
 * @throws SnapshotNotFoundError when the report has no snapshot yet
 */
export async function planForReport(deps: ReportDependencies, reportId: string, query: ReportPlanQuery): Promise<ReportPlan> {
  const { shown: snapshot } = await snapshotInContext(deps, reportId, 'latest', { historyLength: 1, listingLimit: 1 });
  const settings = {
    min_uplift: query.min_uplift,
    holdout_share: query.holdout_share ?? PLAN_BOUNDS.holdout_share.default,
    segments: query.segments ?? comparedSegments(snapshot),
    confidence: query.confidence ?? snapshot.definition.confidence,
    power: query.power ?? PLAN_BOUNDS.power.default,
  };
  const segments = snapshot.segments.map((segment) => planSegment(segment, settings));
  return {
    report_id: reportId,
    snapshot_id: snapshot.snapshot_id,
    min_uplift: settings.min_uplift,
    holdout_share: settings.holdout_share,
    segments_compared: settings.segments,
    confidence: settings.confidence,
    power: settings.power,
    alpha_per_test: Number(((1 - settings.confidence) / settings.segments).toPrecision(15)),
    total_contacts: segments.reduce((sum, segment) => sum + (segment.contacts_per_segment ?? 0), 0),
    segments,
  };
}
