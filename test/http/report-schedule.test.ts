import pino from 'pino';
import { describe, expect, test, vi } from 'vitest';
import { buildApp } from '../../src/app.js';
import { loadConfig } from '../../src/config.js';
import { lastRunAt } from '../../src/schedule/lock.js';
import { WEEKLY_REFRESH_JOB } from '../../src/schedule/weekly.js';
import { TEST_DIALECTS, createTestDatabase } from '../support/database.js';
import { createTestApp } from '../support/app.js';
import { REPORT_TEST_SETTINGS } from '../support/report-data.js';

describe.each(TEST_DIALECTS)('the schedule inside the service (%s)', (dialect) => {
  test('an invalid cron expression stops the service at start-up with the setting named', async () => {
    const database = await createTestDatabase(dialect);
    try {
      const config = { ...loadConfig({}), database: database.settings, authMode: 'open' as const, scheduleEnabled: true, refreshCron: 'sometimes' };
      const app = await buildApp({ config, database: database.handle, logger: pino({ level: 'silent' }) });
      await expect(app.ready()).rejects.toThrow(/REFRESH_CRON "sometimes"/);
    } finally {
      await database.destroy();
    }
  });

  test('with the schedule enabled, a first start makes up the never-run refresh and closing stops it', async () => {
    const context = await createTestApp(dialect, { ...REPORT_TEST_SETTINGS, scheduleEnabled: true, refreshCron: '0 6 * * 1', refreshTimeZone: 'UTC' });
    try {
      await vi.waitFor(async () => expect(await lastRunAt(context.database.handle.db, WEEKLY_REFRESH_JOB)).not.toBeNull(), { timeout: 10_000, interval: 50 });
    } finally {
      await context.close();
    }
  });
});
