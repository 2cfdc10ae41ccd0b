/** Campaign planning: how many customers to hold back and contact per segment. */
export { planCampaign, planForReport } from './service.js';
export { Plan, PlanRequest, ReportPlan, ReportPlanQuery, SegmentPlan } from './shapes.js';
