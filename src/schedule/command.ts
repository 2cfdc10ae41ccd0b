/**
 * `segrank refresh`: the weekly refresh run once from the command line, for operators who
 * schedule it externally (cron, a CI job, a cloud scheduler) instead of in the service.
 *
 *   segrank refresh                 every report with refresh: weekly (as the schedule does)
 *   segrank refresh --all           every saved report
 *   segrank refresh <report_id> …   the named reports
 *
 * It takes the same lock as the in-process schedule, so it never overlaps a scheduled run.
 * Exit status: 0 all refreshed, 1 some report failed, 75 (EX_TEMPFAIL) another run holds the lock.
 */
import type { Config } from '../config.js';
import { listReports } from '../report/store/index.js';
import { withReportDependencies } from '../report-command.js';
import { runWeeklyRefresh } from './weekly.js';

export const EXIT_LOCKED = 75;

/**
 * Runs `segrank refresh` with its arguments; returns the exit status.
 * @example
 * await runRefreshCommand(['--all'], loadConfig()); // 0 when every report was refreshed
 */
export async function runRefreshCommand(args: string[], config: Config): Promise<number> {
  const unknownOption = args.find((arg) => arg.startsWith('-') && arg !== '--all');
  if (unknownOption !== undefined) {
    console.error(`segrank refresh: unknown option ${unknownOption}\nusage: segrank refresh [--all | <report_id> …]`);
    return 64;
  }
  return withReportDependencies(config, async (deps) => {
    const reportIds = args.includes('--all') ? (await listReports(deps.db)).map((report) => report.report_id) : args.length > 0 ? args : undefined;
    const result = await runWeeklyRefresh(deps, { trigger: 'command', ...(reportIds === undefined ? {} : { reportIds }) });
    if (!result.ran) {
      console.error('segrank refresh: another refresh run holds the lock; nothing was done');
      return EXIT_LOCKED;
    }
    for (const { reportId, snapshotId } of result.refreshed) console.log(`refreshed ${reportId} -> snapshot ${snapshotId}`);
    for (const { reportId, error } of result.failed) console.error(`failed ${reportId}: ${error}`);
    console.log(`${result.refreshed.length} refreshed, ${result.failed.length} failed`);
    return result.failed.length > 0 ? 1 : 0;
  });
}
