import pino from 'pino';
import { afterAll, afterEach, beforeAll, beforeEach, describe, expect, test, vi } from 'vitest';
import { createReport as saveReport, createSnapshotBuilder, type ReportDependencies } from '../../src/report/snapshot/index.js';
import { listSnapshots } from '../../src/report/store/index.js';
import { acquireLock, lastRunAt, releaseLock } from '../../src/schedule/lock.js';
import {
  WEEKLY_REFRESH_JOB,
  checkSchedule,
  isRunMissed,
  mostRecentScheduledTime,
  runWeeklyRefresh,
  startRefreshSchedule,
  type RefreshRunResult,
  type RefreshSchedule,
} from '../../src/schedule/weekly.js';
import { TEST_DIALECTS, createTestDatabase, type TestDatabase } from '../support/database.js';

const WEEKLY = '0 6 * * 1'; // Mondays at 06:00
const MONDAY_0559 = new Date('2026-06-15T05:59:00.000Z');
const MINUTE = 60_000;

describe('when the schedule was last due', () => {
  test('the most recent Monday 06:00 before a Wednesday is that week\'s Monday', () => {
    expect(mostRecentScheduledTime(WEEKLY, 'UTC', new Date('2026-06-17T12:00:00Z'))?.toISOString()).toBe('2026-06-15T06:00:00.000Z');
  });

  test('a run due exactly now counts as due', () => {
    expect(mostRecentScheduledTime(WEEKLY, 'UTC', new Date('2026-06-15T06:00:00Z'))?.toISOString()).toBe('2026-06-15T06:00:00.000Z');
  });

  test('the expression is read in the configured time zone', () => {
    // 06:00 in Berlin in June (summer time, UTC+2) is 04:00 UTC.
    expect(mostRecentScheduledTime(WEEKLY, 'Europe/Berlin', new Date('2026-06-17T12:00:00Z'))?.toISOString()).toBe('2026-06-15T04:00:00.000Z');
  });

  test('a run is missed when the schedule came round after the last completed run', () => {
    const due = new Date('2026-06-15T06:00:00Z');
    expect(isRunMissed(null, due)).toBe(true);
    expect(isRunMissed('2026-06-08T06:00:01.000Z', due)).toBe(true);
    expect(isRunMissed('2026-06-15T06:00:05.000Z', due)).toBe(false);
    expect(isRunMissed(null, null)).toBe(false);
  });

  test('an invalid cron expression is refused with the setting named', () => {
    expect(() => checkSchedule('every monday', 'UTC')).toThrow(/REFRESH_CRON "every monday" is not a valid cron expression/);
  });
});

describe.each(TEST_DIALECTS)('the weekly refresh (%s)', (dialect) => {
  let database: TestDatabase;
  let deps: ReportDependencies;
  let weeklyReportId: string;
  const schedules: RefreshSchedule[] = [];
  // The snapshots are built on a worker thread, as the service builds them.
  const snapshots = createSnapshotBuilder({ workers: 1, timeoutMs: 60_000, logger: pino({ level: 'silent' }) });

  beforeAll(async () => {
    database = await createTestDatabase(dialect);
    deps = { dialect, db: database.handle.db, readDb: database.handle.readDb, logger: pino({ level: 'silent' }), now: () => new Date(), publicationThreshold: 10, maxLabelsPerDimension: 100, snapshots };
    const db = database.handle.db;
    const now = '2026-06-01T00:00:00.000Z';
    await db
      .insertInto('customers')
      .values(Array.from({ length: 40 }, (_unused, index) => ({ customer_id: `w${index}`, birth_date: '1980-01-01', region: index % 2 ? 'North' : 'South', channel: 'web', customer_type: 'individual' as const, created_at: now, updated_at: now, last_ingest_id: null })))
      .execute();
    await db.insertInto('campaigns').values({ campaign_id: 'weekly', created_at: now }).execute();
    await db
      .insertInto('campaign_contacts')
      .values(Array.from({ length: 40 }, (_unused, index) => ({ campaign_id: 'weekly', customer_id: `w${index}`, contacted_at: '2026-05-01', converted: index % 3 === 0 ? 1 : 0, revenue_cents: index % 3 === 0 ? 1500 : 0, age_at_contact: 46, region: index % 2 ? 'North' : 'South', channel: 'web', customer_type: 'individual' as const, holdout: 0, last_ingest_id: null })))
      .execute();
    weeklyReportId = (await saveReport(deps, { name: 'Weekly', source: { campaign_ids: ['weekly'] }, dimensions: ['region'], refresh: 'weekly', min_n: 5 })).report_id;
    await saveReport(deps, { name: 'Manual', source: { campaign_ids: ['weekly'] }, dimensions: ['region'], refresh: 'manual', min_n: 5 });
  });

  afterAll(async () => {
    await snapshots.close();
    await database.destroy();
  });

  beforeEach(async () => {
    vi.useFakeTimers({ toFake: ['setTimeout', 'clearTimeout', 'setInterval', 'clearInterval', 'Date'] });
    vi.setSystemTime(MONDAY_0559);
    await database.handle.db.deleteFrom('scheduled_jobs').execute();
  });

  afterEach(async () => {
    while (schedules.length > 0) await schedules.pop()?.stop();
    vi.useRealTimers();
  });

  async function setLastRun(at: string | null): Promise<void> {
    await acquireLock(database.handle.db, WEEKLY_REFRESH_JOB, 'setup', new Date('2026-01-01T00:00:00Z'), MINUTE);
    await releaseLock(database.handle.db, WEEKLY_REFRESH_JOB, 'setup', at);
  }

  async function snapshotCount(reportId: string): Promise<number> {
    return (await listSnapshots(database.handle.db, reportId, { limit: 1000, offset: 0 })).length;
  }

  function nextRun(): { promise: Promise<RefreshRunResult | null>; resolve: (value: RefreshRunResult | null) => void } {
    let resolve!: (value: RefreshRunResult | null) => void;
    const promise = new Promise<RefreshRunResult | null>((done) => {
      resolve = done;
    });
    return { promise, resolve };
  }

  test('the job fires at the scheduled time and refreshes every weekly report, and only those', async () => {
    await setLastRun('2026-06-08T06:00:00.000Z');
    const before = await snapshotCount(weeklyReportId);
    const finished = nextRun();
    const schedule = startRefreshSchedule(deps, { cron: WEEKLY, timeZone: 'UTC', onRunFinished: (result) => finished.resolve(result) });
    schedules.push(schedule);
    expect(await schedule.caughtUp).toBeNull();
    expect(schedule.nextRun()?.toISOString()).toBe('2026-06-15T06:00:00.000Z');
    await vi.advanceTimersByTimeAsync(59 * 1000);
    expect(await snapshotCount(weeklyReportId)).toBe(before);
    await vi.advanceTimersByTimeAsync(2 * 1000);
    const result = await finished.promise;
    expect(result).toMatchObject({ ran: true, failed: [] });
    expect(result?.refreshed.map((entry) => entry.reportId)).toEqual([weeklyReportId]);
    expect(await snapshotCount(weeklyReportId)).toBe(before + 1);
    const latest = (await listSnapshots(database.handle.db, weeklyReportId, { limit: 1, offset: 0 }))[0];
    expect(latest?.trigger).toBe('schedule');
    expect(await lastRunAt(database.handle.db, WEEKLY_REFRESH_JOB)).toBe('2026-06-15T06:00:00.000Z');
  });

  test('a run still going when the next one is due makes that one skip: runs never overlap', async () => {
    // Every five minutes, last run just before now, so nothing is made up at start.
    await setLastRun('2026-06-15T05:58:00.000Z');
    let release!: () => void;
    const gate = new Promise<void>((done) => {
      release = done;
    });
    let started = 0;
    let concurrent = 0;
    let mostConcurrent = 0;
    const skipped: string[] = [];
    const finished = nextRun();
    const schedule = startRefreshSchedule(deps, {
      cron: '*/5 * * * *',
      timeZone: 'UTC',
      run: async () => {
        started += 1;
        concurrent += 1;
        mostConcurrent = Math.max(mostConcurrent, concurrent);
        await gate;
        concurrent -= 1;
        return { ran: true, skipped: null, startedAt: new Date().toISOString(), refreshed: [], failed: [] };
      },
      onRunSkipped: (why) => skipped.push(why),
      onRunFinished: (result) => finished.resolve(result),
    });
    schedules.push(schedule);
    try {
      await schedule.caughtUp;
      await vi.advanceTimersByTimeAsync(2 * MINUTE); // 06:01: the 06:00 run starts and hangs
      expect(started).toBe(1);
      await vi.advanceTimersByTimeAsync(10 * MINUTE); // 06:05 and 06:10 come round while it hangs
      expect(started).toBe(1);
      expect(skipped).toEqual(['scheduled', 'scheduled']);
    } finally {
      release();
    }
    expect(await finished.promise).toMatchObject({ ran: true });
    await vi.advanceTimersByTimeAsync(5 * MINUTE); // 06:15: free again
    expect(started).toBe(2);
    expect(mostConcurrent).toBe(1);
  });

  test('two instances sharing the database run the job once: the lock row lets one through', async () => {
    await setLastRun('2026-06-08T06:00:00.000Z');
    const before = await snapshotCount(weeklyReportId);
    const results: Array<RefreshRunResult | null> = [];
    const bothDone = nextRun();
    const record = (result: RefreshRunResult | null) => {
      results.push(result);
      if (results.length === 2) bothDone.resolve(result);
    };
    schedules.push(startRefreshSchedule(deps, { cron: WEEKLY, timeZone: 'UTC', onRunFinished: record }));
    schedules.push(startRefreshSchedule(deps, { cron: WEEKLY, timeZone: 'UTC', onRunFinished: record }));
    await vi.advanceTimersByTimeAsync(2 * MINUTE);
    await bothDone.promise;
    expect(results.map((result) => result?.ran).sort()).toEqual([false, true]);
    expect(results.map((result) => result?.skipped).filter((reason) => reason !== null)).toHaveLength(1);
    expect(await snapshotCount(weeklyReportId)).toBe(before + 1);
  });

  test('a run missed while the service was down is made up at start-up', async () => {
    vi.setSystemTime(new Date('2026-06-16T09:00:00.000Z')); // Tuesday; last run two Mondays ago
    await setLastRun('2026-06-08T06:00:00.000Z');
    const before = await snapshotCount(weeklyReportId);
    const schedule = startRefreshSchedule(deps, { cron: WEEKLY, timeZone: 'UTC' });
    schedules.push(schedule);
    const result = await schedule.caughtUp;
    expect(result).toMatchObject({ ran: true, startedAt: '2026-06-16T09:00:00.000Z' });
    expect(await snapshotCount(weeklyReportId)).toBe(before + 1);
    expect(await lastRunAt(database.handle.db, WEEKLY_REFRESH_JOB)).toBe('2026-06-16T09:00:00.000Z');
    // The made-up run counts: starting again the same day does not run it twice.
    const again = startRefreshSchedule(deps, { cron: WEEKLY, timeZone: 'UTC' });
    schedules.push(again);
    expect(await again.caughtUp).toBeNull();
    expect(await snapshotCount(weeklyReportId)).toBe(before + 1);
  });

  test('a start-up after an on-time run does not run again', async () => {
    vi.setSystemTime(new Date('2026-06-16T09:00:00.000Z'));
    await setLastRun('2026-06-15T06:00:02.000Z');
    const schedule = startRefreshSchedule(deps, { cron: WEEKLY, timeZone: 'UTC' });
    schedules.push(schedule);
    expect(await schedule.caughtUp).toBeNull();
  });

  test('a run for named reports refreshes them without counting as the weekly run', async () => {
    await setLastRun('2026-06-08T06:00:00.000Z');
    const result = await runWeeklyRefresh(deps, { trigger: 'command', reportIds: [weeklyReportId, 'no-such-report'] });
    expect(result.refreshed.map((entry) => entry.reportId)).toEqual([weeklyReportId]);
    expect(result.failed).toEqual([{ reportId: 'no-such-report', error: 'no report with id no-such-report' }]);
    expect(await lastRunAt(database.handle.db, WEEKLY_REFRESH_JOB)).toBe('2026-06-08T06:00:00.000Z');
  });
});
