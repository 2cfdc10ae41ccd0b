/**
 * `segrank plan`: the campaign planner on the command line.
 *
 *   segrank plan --baseline-rate 0.04 --min-uplift 0.01 [--holdout-share 0.2] [--segments 1]
 *                [--confidence 0.95] [--power 0.8] [--json]
 *   segrank plan --report <report_id> --min-uplift 0.01 [--holdout-share …] [--segments …]
 *                [--confidence …] [--power …] [--json]
 *
 * The first needs no database; the second plans every segment of the report's latest snapshot.
 * Exit status: 0 planned, 64 (EX_USAGE) bad arguments, 65 (EX_DATAERR) nothing to plan from.
 */
import { parseArgs } from 'node:util';
import type { Config } from '../config.js';
import { ReportNotFoundError, SnapshotNotFoundError } from '../report/snapshot/index.js';
import { withReportDependencies } from '../report-command.js';
import { formatPercent } from '../report/wording/format.js';
import { StatsInputError } from '../stats/index.js';
import { planCampaign, planForReport } from './service.js';
import type { PlanRequest, ReportPlan } from './shapes.js';

const EXIT_USAGE = 64;
const EXIT_DATA = 65;

const USAGE =
  'usage: segrank plan --baseline-rate RATE --min-uplift RISE [--holdout-share 0.2] [--segments 1] [--confidence 0.95] [--power 0.8] [--json]\n' +
  '       segrank plan --report REPORT_ID --min-uplift RISE [--holdout-share …] [--segments …] [--confidence …] [--power …] [--json]';

/** The statistics core's argument names as the options that carry them. */
const OPTION_OF: Record<string, string> = {
  baselineRate: '--baseline-rate',
  minUplift: '--min-uplift',
  holdoutShare: '--holdout-share',
  segments: '--segments',
  confidence: '--confidence',
  power: '--power',
};

class UsageError extends Error {}

function numberOption(name: string, text: string | undefined): number | undefined {
  if (text === undefined) return undefined;
  const value = Number(text);
  if (text.trim() === '' || !Number.isFinite(value)) throw new UsageError(`--${name} must be a number, got "${text}"`);
  return value;
}

function optional<K extends string>(key: K, value: number | undefined): Partial<Record<K, number>> {
  return value === undefined ? {} : ({ [key]: value } as Record<K, number>);
}

function reportPlanText(plan: ReportPlan): string {
  const header = `plan for report ${plan.report_id} (snapshot ${plan.snapshot_id}): rise of ${plan.min_uplift} at ${plan.confidence} confidence over ${plan.segments_compared} segments (α = ${plan.alpha_per_test} each), power ${plan.power}, ${plan.holdout_share} held back`;
  const rows = plan.segments.map((segment) =>
    segment.contacts_per_segment === null
      ? `  ${segment.segment}: not planned (${segment.note ?? 'no reason given'})`
      : `  ${segment.segment}: baseline ${formatPercent(segment.baseline_rate ?? 0)} (${segment.baseline_source}), hold back ${segment.holdout_per_segment}, contact ${segment.treated_per_segment}, ${segment.contacts_per_segment} in all; last campaign ${segment.last_treated}${segment.last_holdout === null ? '' : ` + ${segment.last_holdout} held back`}: ${segment.last_had_enough ? 'enough' : 'not enough'}`,
  );
  return [header, ...rows, `total: ${plan.total_contacts} customers`].join('\n');
}

async function planFromReport(reportId: string, query: Parameters<typeof planForReport>[2], config: Config): Promise<ReportPlan> {
  return withReportDependencies(config, (deps) => planForReport(deps, reportId, query));
}

/**
 * Runs `segrank plan` with its arguments; returns the exit status.
 * @example
 * await runPlanCommand(['--baseline-rate', '0.04', '--min-uplift', '0.01'], loadConfig()); // prints the plan, 0
 */
export async function runPlanCommand(args: string[], config: Config): Promise<number> {
  try {
    const { values } = parseArgs({
      args,
      strict: true,
      options: {
        'baseline-rate': { type: 'string' },
        'min-uplift': { type: 'string' },
        'holdout-share': { type: 'string' },
        segments: { type: 'string' },
        confidence: { type: 'string' },
        power: { type: 'string' },
        report: { type: 'string' },
        json: { type: 'boolean', default: false },
      },
    });
    const minUplift = numberOption('min-uplift', values['min-uplift']);
    if (minUplift === undefined) throw new UsageError('--min-uplift is required');
    const shared = {
      min_uplift: minUplift,
      ...optional('holdout_share', numberOption('holdout-share', values['holdout-share'])),
      ...optional('segments', numberOption('segments', values.segments)),
      ...optional('confidence', numberOption('confidence', values.confidence)),
      ...optional('power', numberOption('power', values.power)),
    };
    if (values.report !== undefined) {
      if (values['baseline-rate'] !== undefined) throw new UsageError('give --report or --baseline-rate, not both: a report plans from its own rates');
      const plan = await planFromReport(values.report, shared, config);
      console.log(values.json ? JSON.stringify(plan, null, 2) : reportPlanText(plan));
      return 0;
    }
    const baselineRate = numberOption('baseline-rate', values['baseline-rate']);
    if (baselineRate === undefined) throw new UsageError('--baseline-rate (or --report) is required');
    const request: PlanRequest = { baseline_rate: baselineRate, ...shared };
    const plan = planCampaign(request);
    if (!plan.ok) {
      console.error(`segrank plan: ${plan.reason}`);
      return EXIT_DATA;
    }
    console.log(values.json ? JSON.stringify(plan.value, null, 2) : plan.value.sentence);
    return 0;
  } catch (error) {
    if (error instanceof StatsInputError) {
      const option = OPTION_OF[error.argument] ?? error.argument;
      console.error(`segrank plan: ${option}: ${error.message}\n${USAGE}`);
      return EXIT_USAGE;
    }
    if (error instanceof UsageError || String((error as { code?: unknown }).code).startsWith('ERR_PARSE_ARGS')) {
      console.error(`segrank plan: ${(error as Error).message}\n${USAGE}`);
      return EXIT_USAGE;
    }
    if (error instanceof ReportNotFoundError || error instanceof SnapshotNotFoundError) {
      console.error(`segrank plan: ${error.message}`);
      return EXIT_DATA;
    }
    throw error;
  }
}
