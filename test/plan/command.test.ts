import pino from 'pino';
import { afterAll, afterEach, beforeAll, describe, expect, test, vi } from 'vitest';
import { loadConfig, type Config } from '../../src/config.js';
import { runPlanCommand } from '../../src/plan/command.js';
import { createReport, createSnapshotBuilder, type ReportDependencies } from '../../src/report/snapshot/index.js';
import { TEST_DIALECTS, createTestDatabase, type TestDatabase } from '../support/database.js';

function capture(stream: 'log' | 'error'): string[] {
  const lines: string[] = [];
  vi.spyOn(console, stream).mockImplementation((line: string) => void lines.push(line));
  return lines;
}

describe('segrank plan from a stated baseline (no database)', () => {
  afterEach(() => {
    vi.restoreAllMocks();
  });
  const config = { ...loadConfig({}), logLevel: 'silent' } as Config;

  test('prints the sentence, or the plan as JSON, and exits 0', async () => {
    const printed = capture('log');
    expect(await runPlanCommand(['--baseline-rate', '0.1', '--min-uplift', '0.05', '--holdout-share', '0.5'], config)).toBe(0);
    // R 4.2.2: power.prop.test(p1 = 0.10, p2 = 0.15, power = 0.8, tol = 1e-12)$n → 685.596858325361 → 686 per group
    expect(printed[0]).toContain('686 customers held back and 686 contacted (1,372 in all, 50% held back)');
    expect(await runPlanCommand(['--baseline-rate', '0.04', '--min-uplift', '0.01', '--segments', '3', '--json'], config)).toBe(0);
    // python3 + scipy brentq (test/stats/campaign-plan.test.ts): n1 = 5789.158704427915, n2 = 23156.63481771166
    expect(JSON.parse(printed[1] as string)).toMatchObject({ holdout_per_segment: 5790, treated_per_segment: 23157, total_contacts: 86841 });
  });

  test('exits 64 naming the option for bad arguments, 65 when the rise passes a rate of 1', async () => {
    const errors = capture('error');
    expect(await runPlanCommand(['--baseline-rate', '0.1'], config)).toBe(64);
    expect(errors.at(-1)).toMatch(/--min-uplift is required/);
    expect(await runPlanCommand(['--baseline-rate', '0.1', '--min-uplift', 'lots'], config)).toBe(64);
    expect(errors.at(-1)).toMatch(/--min-uplift must be a number, got "lots"/);
    expect(await runPlanCommand(['--baseline-rate', '0.1', '--min-uplift', '0.01', '--power', '1'], config)).toBe(64);
    expect(errors.at(-1)).toMatch(/^segrank plan: --power: power must be strictly between 0 and 1/);
    expect(await runPlanCommand(['--baseline-rate', '0.1', '--min-uplift', '0.01', '--budget', '5'], config)).toBe(64);
    expect(await runPlanCommand(['--baseline-rate', '0.9', '--min-uplift', '0.2'], config)).toBe(65);
    expect(errors.at(-1)).toMatch(/above a rate of 1/);
  });
});

describe.each(TEST_DIALECTS)('segrank plan --report (%s)', (dialect) => {
  let database: TestDatabase;
  let config: Config;
  let reportId: string;

  beforeAll(async () => {
    database = await createTestDatabase(dialect);
    config = { ...loadConfig({}), database: database.settings, logLevel: 'silent' };
    const deps: ReportDependencies = { dialect, db: database.handle.db, readDb: database.handle.readDb, logger: pino({ level: 'silent' }), now: () => new Date(), publicationThreshold: 10, maxLabelsPerDimension: 100, snapshots: createSnapshotBuilder({ workers: 0, timeoutMs: 60_000, logger: pino({ level: 'silent' }) }) };
    await database.handle.db.insertInto('campaigns').values({ campaign_id: 'cli', created_at: new Date().toISOString() }).execute();
    reportId = (await createReport(deps, { name: 'Not run yet', source: { campaign_ids: ['cli'] } })).report_id;
  });
  afterAll(async () => {
    await database.destroy();
  });
  afterEach(() => {
    vi.restoreAllMocks();
  });

  test('exits 65 for a report without a snapshot or an unknown report, 64 with both --report and --baseline-rate', async () => {
    const errors = capture('error');
    expect(await runPlanCommand(['--report', reportId, '--min-uplift', '0.02'], config)).toBe(65);
    expect(errors.at(-1)).toMatch(/snapshot/i);
    expect(await runPlanCommand(['--report', 'no-such-report', '--min-uplift', '0.02'], config)).toBe(65);
    expect(await runPlanCommand(['--report', reportId, '--baseline-rate', '0.1', '--min-uplift', '0.02'], config)).toBe(64);
  });
});
