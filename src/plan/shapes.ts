/**
 * The declarations of a campaign plan: the request of `POST /v1/plans`, its answer, and the
 * per-segment plan of a report (TypeBox; validation, types and OpenAPI come from them).
 */
import { Type, type Static, type TSchema } from 'typebox';

const nullable = <T extends TSchema>(schema: T, options: { description?: string } = {}) => Type.Union([schema, Type.Null()], options);

/** Bounds shared by the request body and the report plan's query string. */
export const PLAN_BOUNDS = {
  min_uplift: { exclusiveMinimum: 0, maximum: 1, description: 'the smallest rise of the conversion rate worth detecting, as a fraction (0.01 = one percentage point)' },
  holdout_share: { exclusiveMinimum: 0, exclusiveMaximum: 1, default: 0.2, description: 'share of each segment kept out of the campaign' },
  segments: { minimum: 1, maximum: 100000, default: 1, description: 'how many segments will be compared; α is split evenly over them (Bonferroni)' },
  confidence: { exclusiveMinimum: 0, exclusiveMaximum: 1, default: 0.95, description: '1 − the familywise significance level' },
  power: { exclusiveMinimum: 0, exclusiveMaximum: 1, default: 0.8, description: 'chance of detecting an uplift of min_uplift in a segment' },
} as const;

export const PlanRequest = Type.Object(
  {
    baseline_rate: Type.Number({ minimum: 0, exclusiveMaximum: 1, description: 'conversion rate without the campaign, as a fraction' }),
    min_uplift: Type.Number(PLAN_BOUNDS.min_uplift),
    holdout_share: Type.Optional(Type.Number(PLAN_BOUNDS.holdout_share)),
    segments: Type.Optional(Type.Integer(PLAN_BOUNDS.segments)),
    confidence: Type.Optional(Type.Number(PLAN_BOUNDS.confidence)),
    power: Type.Optional(Type.Number(PLAN_BOUNDS.power)),
  },
  { additionalProperties: false },
);
export type PlanRequest = Static<typeof PlanRequest>;

const planSizes = {
  holdout_per_segment: Type.Integer({ description: 'customers to keep out of the campaign in each segment (rounded up)' }),
  treated_per_segment: Type.Integer({ description: 'customers to contact in each segment (rounded up)' }),
  contacts_per_segment: Type.Integer({ description: 'holdout_per_segment + treated_per_segment: the customers on the campaign list per segment, held-back ones included' }),
};

export const Plan = Type.Object({
  baseline_rate: Type.Number(),
  min_uplift: Type.Number(),
  holdout_share: Type.Number(),
  segments: Type.Integer(),
  confidence: Type.Number(),
  power: Type.Number(),
  ...planSizes,
  total_contacts: Type.Integer({ description: 'contacts_per_segment × segments' }),
  alpha_per_test: Type.Number({ description: '(1 − confidence) / segments, two-sided' }),
  sentence: Type.String(),
});
export type Plan = Static<typeof Plan>;

export const SegmentPlan = Type.Object({
  segment: Type.String(),
  baseline_rate: nullable(Type.Number(), {
    description: 'the rate the plan starts from: the segment’s holdout rate when the snapshot holds holdout figures, else the rate of the rest of the population (everyone outside the segment); null when withheld or unknown',
  }),
  baseline_source: Type.Unsafe<'holdout' | 'rest' | null>({ type: ['string', 'null'], enum: ['holdout', 'rest', null] }),
  holdout_per_segment: nullable(Type.Integer()),
  treated_per_segment: nullable(Type.Integer()),
  contacts_per_segment: nullable(Type.Integer()),
  last_treated: nullable(Type.Integer({ description: 'contacted customers of the segment in the latest snapshot (its n); null when withheld' })),
  last_holdout: nullable(Type.Integer({ description: 'held-back customers of the segment in the latest snapshot; null when the snapshot holds no holdout figures' })),
  last_had_enough: nullable(Type.Boolean(), {
    description: 'whether the latest snapshot reached the plan in both arms; without holdout figures, whether its customers reach contacts_per_segment (no uplift can be measured without a holdout, whatever the count); null when not planned',
  }),
  note: nullable(Type.String(), { description: 'why the segment could not be planned' }),
});
export type SegmentPlan = Static<typeof SegmentPlan>;

export const ReportPlan = Type.Object({
  report_id: Type.String(),
  snapshot_id: Type.String(),
  min_uplift: Type.Number(),
  holdout_share: Type.Number(),
  segments_compared: Type.Integer({ description: 'segments α is split over: the `segments` parameter, else the segments of the snapshot (a yes/no mirror counted once)' }),
  confidence: Type.Number({ description: 'the `confidence` parameter, else the report definition’s confidence' }),
  power: Type.Number(),
  alpha_per_test: Type.Number(),
  total_contacts: Type.Integer({ description: 'sum of contacts_per_segment over the segments that could be planned' }),
  segments: Type.Array(SegmentPlan),
});
export type ReportPlan = Static<typeof ReportPlan>;

export const ReportPlanQuery = Type.Object(
  {
    min_uplift: Type.Number(PLAN_BOUNDS.min_uplift),
    holdout_share: Type.Optional(Type.Number(PLAN_BOUNDS.holdout_share)),
    segments: Type.Optional(Type.Integer({ minimum: 1, maximum: 100000, description: PLAN_BOUNDS.segments.description })),
    confidence: Type.Optional(Type.Number({ exclusiveMinimum: 0, exclusiveMaximum: 1, description: PLAN_BOUNDS.confidence.description })),
    power: Type.Optional(Type.Number(PLAN_BOUNDS.power)),
  },
  { additionalProperties: false },
);
export type ReportPlanQuery = Static<typeof ReportPlanQuery>;
