/**
 * The weekly refresh: every report with `refresh: weekly` gets a new snapshot when the cron
 * expression (config.refreshCron, read in config.refreshTimeZone) comes round.
 *
 * - Runs never overlap: in this process a run that is still going makes the next one skip,
 *   and across processes sharing one database the lock row (`lock.ts`) lets one run at a time.
 * - A run missed while the service was down is made up at start-up: when the most recent
 *   scheduled time before now is later than the last completed run, a run starts at once.
 * - `segrank refresh` runs the same function from the command line for external schedulers.
 */
import { randomUUID } from 'node:crypto';
import { Cron } from 'croner';
import { listReportIdsByRefresh } from '../report/store/index.js';
import { refreshReportText, type ReportDependencies } from '../report/snapshot/index.js';
import type { SnapshotTrigger } from '../db/tables.js';
import { acquireLock, lastRunAt, releaseLock, renewLock } from './lock.js';

export const WEEKLY_REFRESH_JOB = 'weekly-refresh';

/**
 * How long a run may hold the lock without renewing it. It is renewed before each report, so
 * only a single report refresh taking longer than this could let a second instance in.
 */
const LOCK_TTL_MS = 30 * 60_000;

export interface RefreshRunResult {
  /** false when another run held the lock, or the due run had already been done */
  ran: boolean;
  /** why the run did not happen */
  skipped: 'locked' | 'already_done' | null;
  startedAt: string;
  refreshed: Array<{ reportId: string; snapshotId: string }>;
  failed: Array<{ reportId: string; error: string }>;
}

export interface RefreshRunOptions {
  trigger: SnapshotTrigger;
  /** specific reports; default every report with `refresh: weekly` */
  reportIds?: string[];
  /** defaults to a fresh id per run */
  holder?: string;
  /**
   * The scheduled time this run answers. When the last completed run is at or after it,
   * another instance has already done it and this run does nothing.
   */
  due?: Date;
}

/**
 * One refresh run: takes the lock, refreshes each report in turn (a failure is logged and
 * the others still run), records the run time (only for the full weekly set) and frees the lock.
 * @example
 * const result = await runWeeklyRefresh(deps, { trigger: 'schedule' });
 * // { ran: true, refreshed: [{ reportId, snapshotId }, …], failed: [] }
 */
export async function runWeeklyRefresh(deps: ReportDependencies, options: RefreshRunOptions): Promise<RefreshRunResult> {
  const holder = options.holder ?? randomUUID();
  const started = deps.now();
  const result: RefreshRunResult = { ran: false, skipped: null, startedAt: started.toISOString(), refreshed: [], failed: [] };
  if (!(await acquireLock(deps.db, WEEKLY_REFRESH_JOB, holder, started, LOCK_TTL_MS))) {
    deps.logger.info({ job: WEEKLY_REFRESH_JOB }, 'refresh skipped: another run holds the lock');
    return { ...result, skipped: 'locked' };
  }
  if (options.due !== undefined && !isRunMissed(await lastRunAt(deps.db, WEEKLY_REFRESH_JOB), options.due)) {
    await releaseLock(deps.db, WEEKLY_REFRESH_JOB, holder, null);
    deps.logger.info({ job: WEEKLY_REFRESH_JOB, due: options.due.toISOString() }, 'refresh skipped: this scheduled run has already been done');
    return { ...result, skipped: 'already_done' };
  }
  result.ran = true;
  let completed = false;
  try {
    const reportIds = options.reportIds ?? (await listReportIdsByRefresh(deps.db, 'weekly'));
    deps.logger.info({ job: WEEKLY_REFRESH_JOB, reports: reportIds.length, trigger: options.trigger }, 'refresh run started');
    for (const reportId of reportIds) {
      if (!(await renewLock(deps.db, WEEKLY_REFRESH_JOB, holder, deps.now(), LOCK_TTL_MS))) {
        deps.logger.error({ job: WEEKLY_REFRESH_JOB }, 'refresh run lost its lock; stopping so that runs do not overlap');
        return result;
      }
      try {
        const refreshed = await refreshReportText(deps, reportId, options.trigger);
        result.refreshed.push({ reportId, snapshotId: refreshed.snapshotId });
      } catch (error) {
        deps.logger.error({ err: error, reportId }, 'report refresh failed');
        result.failed.push({ reportId, error: error instanceof Error ? error.message : String(error) });
      }
    }
    completed = true;
  } finally {
    await releaseLock(deps.db, WEEKLY_REFRESH_JOB, holder, completed && options.reportIds === undefined ? result.startedAt : null);
  }
  deps.logger.info({ job: WEEKLY_REFRESH_JOB, refreshed: result.refreshed.length, failed: result.failed.length }, 'refresh run finished');
  return result;
}

/**
 * Checks a cron expression and time zone; croner's message is kept so the operator sees what is wrong.
 * @throws Error naming the setting when the expression cannot be read
 */
export function checkSchedule(cron: string, timeZone: string): void {
  try {
    new Cron(cron, { timezone: timeZone, paused: true }).stop();
  } catch (error) {
    throw new Error(`REFRESH_CRON "${cron}" is not a valid cron expression: ${error instanceof Error ? error.message : String(error)}`, { cause: error });
  }
}

/**
 * The most recent time the schedule was due at or before `now`, or null if it never was.
 * @example
 * mostRecentScheduledTime('0 6 * * 1', 'UTC', new Date('2026-06-17T12:00:00Z')); // 2026-06-15T06:00:00.000Z (a Monday)
 */
export function mostRecentScheduledTime(cron: string, timeZone: string, now: Date): Date | null {
  const job = new Cron(cron, { timezone: timeZone, paused: true });
  try {
    // previousRuns looks strictly before the reference; a run due exactly now counts as due.
    const [previous] = job.previousRuns(1, new Date(now.getTime() + 1));
    return previous ?? null;
  } finally {
    job.stop();
  }
}

/** Whether a run is due: the schedule came round after the last completed run (or there never was one). */
export function isRunMissed(lastRun: string | null, mostRecentDue: Date | null): boolean {
  if (mostRecentDue === null) return false;
  return lastRun === null || Date.parse(lastRun) < mostRecentDue.getTime();
}

export interface RefreshSchedule {
  /** resolves when the start-up catch-up (if any) has finished */
  readonly caughtUp: Promise<RefreshRunResult | null>;
  nextRun(): Date | null;
  /** stops the timer and waits for a run in progress */
  stop(): Promise<void>;
}

export interface ScheduleSettings {
  cron: string;
  timeZone: string;
  /** the run itself; `runWeeklyRefresh` unless a test replaces it */
  run?: (deps: ReportDependencies, options: RefreshRunOptions) => Promise<RefreshRunResult>;
  /** called after every run, with its result (or null when it failed) */
  onRunFinished?: (result: RefreshRunResult | null, why: 'scheduled' | 'catch-up') => void;
  /** called when a run is due while the previous one is still going */
  onRunSkipped?: (why: 'scheduled' | 'catch-up') => void;
}

/**
 * Starts the in-process schedule and the catch-up of a missed run.
 * @throws Error when the cron expression is invalid
 */
export function startRefreshSchedule(deps: ReportDependencies, settings: ScheduleSettings): RefreshSchedule {
  checkSchedule(settings.cron, settings.timeZone);
  const run = settings.run ?? runWeeklyRefresh;
  let running: Promise<RefreshRunResult> | null = null;
  const runOnce = (why: 'scheduled' | 'catch-up'): Promise<RefreshRunResult> | null => {
    if (running) {
      deps.logger.warn({ job: WEEKLY_REFRESH_JOB, why }, 'refresh not started: the previous run is still going');
      settings.onRunSkipped?.(why);
      return null;
    }
    const due = mostRecentScheduledTime(settings.cron, settings.timeZone, deps.now());
    const current = run(deps, { trigger: 'schedule', ...(due === null ? {} : { due }) });
    running = current;
    current.then(
      (result) => {
        if (running === current) running = null;
        settings.onRunFinished?.(result, why);
      },
      (error: unknown) => {
        if (running === current) running = null;
        deps.logger.error({ err: error, job: WEEKLY_REFRESH_JOB }, 'refresh run failed');
        settings.onRunFinished?.(null, why);
      },
    );
    return current;
  };

  const job = new Cron(settings.cron, { timezone: settings.timeZone }, () => {
    // runOnce logs a failed run itself; the timer has nobody to hand the promise to.
    void runOnce('scheduled');
  });

  const caughtUp = (async () => {
    const lastRun = await lastRunAt(deps.db, WEEKLY_REFRESH_JOB);
    const due = mostRecentScheduledTime(settings.cron, settings.timeZone, deps.now());
    if (!isRunMissed(lastRun, due)) return null;
    deps.logger.info({ job: WEEKLY_REFRESH_JOB, lastRun, due: due?.toISOString() }, 'a scheduled refresh was missed; running it now');
    return (await runOnce('catch-up')?.catch(() => null)) ?? null;
  })().catch((error: unknown) => {
    deps.logger.error({ err: error, job: WEEKLY_REFRESH_JOB }, 'catch-up refresh failed');
    return null;
  });

  deps.logger.info({ job: WEEKLY_REFRESH_JOB, cron: settings.cron, timeZone: settings.timeZone, next: job.nextRun()?.toISOString() ?? null }, 'refresh schedule started');
  return {
    caughtUp,
    nextRun: () => job.nextRun(),
    async stop() {
      job.stop();
      await caughtUp;
      if (running) await running.catch(() => undefined);
    },
  };
}
