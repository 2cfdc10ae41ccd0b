import pino from 'pino';
import { afterAll, afterEach, beforeAll, describe, expect, test, vi } from 'vitest';
import { loadConfig, type Config } from '../../src/config.js';
import { listSnapshots } from '../../src/report/store/index.js';
import { createReport, createSnapshotBuilder, type ReportDependencies } from '../../src/report/snapshot/index.js';
import { EXIT_LOCKED, runRefreshCommand } from '../../src/schedule/command.js';
import { acquireLock, lastRunAt, releaseLock } from '../../src/schedule/lock.js';
import { WEEKLY_REFRESH_JOB } from '../../src/schedule/weekly.js';
import { TEST_DIALECTS, createTestDatabase, type TestDatabase } from '../support/database.js';

describe.each(TEST_DIALECTS)('segrank refresh (%s)', (dialect) => {
  let database: TestDatabase;
  let config: Config;
  let weekly: string;
  let manual: string;

  beforeAll(async () => {
    database = await createTestDatabase(dialect);
    config = { ...loadConfig({}), database: database.settings, logLevel: 'silent' };
    const deps: ReportDependencies = { dialect, db: database.handle.db, readDb: database.handle.readDb, logger: pino({ level: 'silent' }), now: () => new Date(), publicationThreshold: 10, maxLabelsPerDimension: 100, snapshots: createSnapshotBuilder({ workers: 0, timeoutMs: 60_000, logger: pino({ level: 'silent' }) }) };
    const now = new Date().toISOString();
    await database.handle.db.insertInto('campaigns').values({ campaign_id: 'cli', created_at: now }).execute();
    weekly = (await createReport(deps, { name: 'Weekly', source: { campaign_ids: ['cli'] }, refresh: 'weekly' })).report_id;
    manual = (await createReport(deps, { name: 'Manual', source: { campaign_ids: ['cli'] } })).report_id;
  });
  afterAll(async () => {
    await database.destroy();
  });
  afterEach(() => {
    vi.restoreAllMocks();
  });

  async function count(reportId: string): Promise<number> {
    return (await listSnapshots(database.handle.db, reportId, { limit: 100, offset: 0 })).length;
  }

  test('without arguments it refreshes the weekly reports, records the run and exits 0', async () => {
    const printed: string[] = [];
    vi.spyOn(console, 'log').mockImplementation((line: string) => printed.push(line));
    expect(await runRefreshCommand([], config)).toBe(0);
    expect(await count(weekly)).toBe(1);
    expect(await count(manual)).toBe(0);
    expect(printed.at(-1)).toBe('1 refreshed, 0 failed');
    expect(await lastRunAt(database.handle.db, WEEKLY_REFRESH_JOB)).not.toBeNull();
    const latest = (await listSnapshots(database.handle.db, weekly, { limit: 1, offset: 0 }))[0];
    expect(latest?.trigger).toBe('command');
  });

  test('--all refreshes every report and named ids refresh just those', async () => {
    vi.spyOn(console, 'log').mockImplementation(() => undefined);
    expect(await runRefreshCommand(['--all'], config)).toBe(0);
    expect([await count(weekly), await count(manual)]).toEqual([2, 1]);
    expect(await runRefreshCommand([manual], config)).toBe(0);
    expect([await count(weekly), await count(manual)]).toEqual([2, 2]);
  });

  test('an unknown report id fails the command with status 1', async () => {
    vi.spyOn(console, 'log').mockImplementation(() => undefined);
    const errors: string[] = [];
    vi.spyOn(console, 'error').mockImplementation((line: string) => errors.push(line));
    expect(await runRefreshCommand(['missing'], config)).toBe(1);
    expect(errors).toEqual(['failed missing: no report with id missing']);
  });

  test('while another run holds the lock it does nothing and exits 75', async () => {
    vi.spyOn(console, 'error').mockImplementation(() => undefined);
    expect(await acquireLock(database.handle.db, WEEKLY_REFRESH_JOB, 'scheduled-run', new Date(), 60_000)).toBe(true);
    try {
      expect(await runRefreshCommand([], config)).toBe(EXIT_LOCKED);
      expect(await count(weekly)).toBe(2);
    } finally {
      await releaseLock(database.handle.db, WEEKLY_REFRESH_JOB, 'scheduled-run', null);
    }
  });

  test('an unknown option is a usage error', async () => {
    vi.spyOn(console, 'error').mockImplementation(() => undefined);
    expect(await runRefreshCommand(['--everything'], config)).toBe(64);
  });
});
