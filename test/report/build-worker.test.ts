/**
 * Snapshots built on a worker thread: the same snapshot as on the main thread, the same errors,
 * an event loop left free for other requests meanwhile, and a crashed or hung worker replaced.
 */
import type { Worker } from 'node:worker_threads';
import pino from 'pino';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { buildApp } from '../../src/app.js';
import { loadConfig } from '../../src/config.js';
import { createSnapshotBuilder, refreshReport, reportDependencies, type ReportDependencies, type SnapshotBuilder } from '../../src/report/snapshot/index.js';
import type { SnapshotBuildJob } from '../../src/report/snapshot/build-task.js';
import { SnapshotBuildFailedError, TooManyLabelsError } from '../../src/report/snapshot/index.js';
import type { BuiltSnapshot } from '../../src/report/snapshot/build-task.js';
import type { ReadAndBuiltSnapshot } from '../../src/report/snapshot/read-build.js';
import { sqliteConnectionOf } from '../../src/db/connect.js';
import { StatsInputError } from '../../src/stats/index.js';
import { DEMO_HOLDOUT_REPORT, DEMO_REPORT } from '../../seed/demo.js';
import { DEFAULT_DEMO_OPTIONS, generateDemoData } from '../../seed/generate.js';
import { loadDemoData } from '../../seed/load.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { createTestDatabase } from '../support/database.js';
import { CRASHING_REPORT, HANGING_REPORT } from '../support/failing-build-names.js';
import { captureLogs, LEVELS } from '../support/log-capture.js';
import { createReport, REPORT_TEST_SETTINGS } from '../support/report-data.js';

const silent = pino({ level: 'silent' });
// The demo's sales run up to the day it is generated.
const today = () => new Date();
const FAILING_WORKER = new URL('../support/failing-build-worker.ts', import.meta.url);

/** The snapshot a body describes, without its timing (the one field two builds of the same input may differ in). */
function withoutTiming(body: string): Record<string, unknown> {
  const { duration_ms: _duration, ...rest } = JSON.parse(body) as Record<string, unknown>;
  return rest;
}

/** A builder that keeps every job it is given and builds it with `inner`. */
function recording(inner: SnapshotBuilder, jobs: SnapshotBuildJob[], onBuild?: (built: Promise<unknown>) => void): SnapshotBuilder {
  return {
    build: (job) => {
      jobs.push(job);
      const built = inner.build(job);
      onBuild?.(built);
      return built;
    },
    renumber: (body, sequence) => inner.renumber(body, sequence),
    close: () => inner.close(),
  };
}

function dependencies(testApp: TestApp, snapshots: SnapshotBuilder): ReportDependencies {
  return reportDependencies(testApp.database.handle, silent, today, { publicationThreshold: testApp.config.publicationThreshold, maxLabelsPerDimension: 100 }, snapshots);
}

/** The build job of a refresh of the demo report over the demo data, recorded on the main thread. */
async function demoBuildJob(testApp: TestApp): Promise<SnapshotBuildJob> {
  await loadDemoData(testApp.app, generateDemoData());
  const jobs: SnapshotBuildJob[] = [];
  await refreshReport(dependencies(testApp, recording(createSnapshotBuilder({ workers: 0, timeoutMs: 1000, logger: silent }), jobs)), (await createReport(testApp.app, DEMO_REPORT)).report_id, 'manual');
  return jobs[0] as SnapshotBuildJob;
}

describe('snapshots built on a worker thread', () => {
  let testApp: TestApp;
  const reportIds: string[] = [];
  const onWorker = createSnapshotBuilder({ workers: 1, timeoutMs: 60_000, logger: silent });
  const onMainThread = createSnapshotBuilder({ workers: 0, timeoutMs: 60_000, logger: silent });

  beforeAll(async () => {
    // The demo's customers ten times over: a spring report with an extra attribute, and an autumn report with a holdout.
    testApp = await createTestApp('sqlite', REPORT_TEST_SETTINGS, today);
    await loadDemoData(testApp.app, generateDemoData({ ...DEFAULT_DEMO_OPTIONS, customers: 40_000 }));
    reportIds.push((await createReport(testApp.app, DEMO_REPORT)).report_id);
    reportIds.push((await createReport(testApp.app, DEMO_HOLDOUT_REPORT)).report_id);
  }, 180_000);
  afterAll(async () => {
    await onWorker.close();
    await testApp.close();
  });

  test('equal the snapshots built on the main thread from the same aggregates, with and without a previous snapshot and a holdout', async () => {
    const jobs: SnapshotBuildJob[] = [];
    const deps = dependencies(testApp, recording(onMainThread, jobs));
    for (const reportId of reportIds) {
      await refreshReport(deps, reportId, 'manual');
      await refreshReport(deps, reportId, 'manual');
    }
    expect(jobs).toHaveLength(4);
    expect(jobs.filter((job) => job.input.holdout)).toHaveLength(2);
    expect(jobs.filter((job) => job.previousBody !== null)).toHaveLength(2);
    for (const job of jobs) {
      const [worker, main] = await Promise.all([onWorker.build(job), onMainThread.build(job)]);
      expect(worker.body.length).toBeGreaterThan(10_000);
      expect(withoutTiming(worker.body)).toEqual(withoutTiming(main.body));
      expect({ ...worker.summary, duration_ms: 0 }).toEqual({ ...main.summary, duration_ms: 0 });
    }
    // The holdout report's comparison covers its holdout figures, not only empty fields.
    const holdoutJob = jobs.find((job) => job.input.holdout) as SnapshotBuildJob;
    const segments = (JSON.parse((await onWorker.build(holdoutJob)).body) as { segments: Array<{ holdout_n: number | null }> }).segments;
    expect(segments.filter((segment) => (segment.holdout_n ?? 0) > 0).length).toBeGreaterThan(10);
  });

  test('a refresh read and built on the worker (its own read connection) equals one read and built on the main thread, with and without a holdout', async () => {
    const databaseFile = sqliteConnectionOf(testApp.database.handle.readDb)?.name as string;
    const pairs: Array<{ main: BuiltSnapshot; worker: ReadAndBuiltSnapshot }> = [];
    // Both read before the main thread's snapshot is stored, so both compare with the same previous one.
    const bothThreads: SnapshotBuilder = {
      build: async (job) => {
        const [main, worker] = await Promise.all([
          onMainThread.build(job),
          (onWorker.readAndBuild as NonNullable<SnapshotBuilder['readAndBuild']>)({
            databaseFile,
            readCacheMiB: 2,
            input: { identity: job.input.identity, definition: job.input.definition, publicationThreshold: job.input.publicationThreshold as number },
            maxLabelsPerDimension: 100,
            elapsedBeforeReadMs: 0,
          }),
        ]);
        pairs.push({ main, worker });
        return main;
      },
      renumber: (body, sequence) => onMainThread.renumber(body, sequence),
      close: async () => undefined,
    };
    for (const reportId of reportIds) {
      await refreshReport(dependencies(testApp, bothThreads), reportId, 'manual');
      await refreshReport(dependencies(testApp, bothThreads), reportId, 'manual');
    }
    expect(pairs).toHaveLength(4);
    for (const { main, worker } of pairs) {
      expect(worker.body.length).toBeGreaterThan(10_000);
      expect(worker.readMs).toBeGreaterThan(0);
      expect(withoutTiming(worker.body)).toEqual(withoutTiming(main.body));
    }
    expect(pairs.filter(({ worker }) => (JSON.parse(worker.body) as { segments: Array<{ holdout_n: number | null }> }).segments.some((segment) => (segment.holdout_n ?? 0) > 0))).toHaveLength(2);
  });

  test('a refresh the worker reads is refused as on the main thread when a dimension is past the label limit', async () => {
    const deps = { ...dependencies(testApp, onWorker), maxLabelsPerDimension: 2 };
    await expect(refreshReport(deps, reportIds[1] as string, 'manual')).rejects.toBeInstanceOf(TooManyLabelsError);
    await expect(refreshReport({ ...deps, snapshots: onMainThread }, reportIds[1] as string, 'manual')).rejects.toBeInstanceOf(TooManyLabelsError);
  });

  test('a snapshot renumbered on the worker (another instance took its sequence number) differs in its sequence alone', async () => {
    const jobs: SnapshotBuildJob[] = [];
    await refreshReport(dependencies(testApp, recording(onMainThread, jobs)), reportIds[1] as string, 'manual');
    const built = await onWorker.build(jobs[0] as SnapshotBuildJob);
    const sequence = (jobs[0] as SnapshotBuildJob).input.identity.sequence + 5;
    const renumbered = JSON.parse(await onWorker.renumber(built.body, sequence)) as Record<string, unknown>;
    expect(renumbered['sequence']).toBe(sequence);
    expect({ ...renumbered, sequence: null }).toEqual({ ...(JSON.parse(built.body) as Record<string, unknown>), sequence: null });
  });

  test('an error of the statistics on the worker comes back as the StatsInputError the main thread throws', async () => {
    const jobs: SnapshotBuildJob[] = [];
    await refreshReport(dependencies(testApp, recording(onMainThread, jobs)), reportIds[0] as string, 'manual');
    const job = structuredClone(jobs[0] as SnapshotBuildJob);
    job.input.definition.confidence = 1.2; // no interval has a confidence above 1
    const onMain = await onMainThread.build(job).then(
      () => null,
      (error: unknown) => error,
    );
    const fromWorker = await onWorker.build(job).then(
      () => null,
      (error: unknown) => error,
    );
    expect(onMain).toBeInstanceOf(StatsInputError);
    expect(fromWorker).toBeInstanceOf(StatsInputError);
    expect((fromWorker as StatsInputError).message).toBe((onMain as StatsInputError).message);
    expect((fromWorker as StatsInputError).argument).toBe((onMain as StatsInputError).argument);
    // The worker is still there for the next build.
    await expect(onWorker.build(jobs[0] as SnapshotBuildJob)).resolves.toMatchObject({ summary: { row_counts: expect.any(Object) } });
  });

  test('a /healthz request sent while the snapshot is being built is answered before the build ends', async () => {
    const order: string[] = [];
    const jobs: SnapshotBuildJob[] = [];
    // A fresh pool: its first build also starts the worker.
    const fresh = createSnapshotBuilder({ workers: 1, timeoutMs: 60_000, logger: silent });
    const askHealth = (built: Promise<unknown>) => {
      void built.then(() => order.push('build done'));
      void testApp.app.inject({ method: 'GET', url: '/healthz' }).then((response) => order.push(`healthz ${response.statusCode}`));
    };
    try {
      await refreshReport(dependencies(testApp, recording(fresh, jobs, askHealth)), reportIds[1] as string, 'manual');
      await new Promise((resolve) => setImmediate(resolve));
      expect(order).toEqual(['healthz 200', 'build done']);

      // On the main thread the same request waits for the whole build: the order this test guards against.
      order.length = 0;
      await refreshReport(dependencies(testApp, recording(onMainThread, jobs, askHealth)), reportIds[1] as string, 'manual');
      await new Promise((resolve) => setTimeout(resolve, 50));
      expect(order).toEqual(['build done', 'healthz 200']);
    } finally {
      await fresh.close();
    }
  });
});

describe('a snapshot build worker that fails', () => {
  // The worker started through tsx takes a second or more on a busy machine, so the hang limit is generous.
  test('a crash or a hang fails that build with SnapshotBuildFailedError, is logged, and the next build gets a new worker', { timeout: 120_000 }, async () => {
    const logs = captureLogs('warn');
    const pool = createSnapshotBuilder({ workers: 1, timeoutMs: 8000, logger: logs.logger, workerEntry: FAILING_WORKER });
    const testApp = await createTestApp('sqlite', REPORT_TEST_SETTINGS, today);
    try {
      const job = await demoBuildJob(testApp);
      const named = (reportName: string): SnapshotBuildJob => ({ ...job, input: { ...job.input, identity: { ...job.input.identity, reportName } } });

      await expect(pool.build(job)).resolves.toMatchObject({ summary: { snapshot_id: job.input.identity.snapshotId } });
      await expect(pool.build(named(CRASHING_REPORT))).rejects.toBeInstanceOf(SnapshotBuildFailedError);
      await expect(pool.build(job)).resolves.toMatchObject({ summary: { snapshot_id: job.input.identity.snapshotId } });
      await expect(pool.build(named(HANGING_REPORT))).rejects.toThrow(/took longer than 8000 ms/);
      await expect(pool.build(job)).resolves.toMatchObject({ summary: { snapshot_id: job.input.identity.snapshotId } });

      const failures = logs.lines.filter((line) => line.level === LEVELS.error && line.msg === 'snapshot build worker failed during a build; it is replaced');
      expect(failures.map((line) => line.reason)).toEqual(['exited with code 70', 'took longer than 8000 ms']);
    } finally {
      await pool.close();
      await testApp.close();
    }
  });

  test('a refresh whose worker crashes is answered 500 with a problem, stores nothing, and the next refresh succeeds', { timeout: 120_000 }, async () => {
    const logs = captureLogs('warn');
    const pool = createSnapshotBuilder({ workers: 1, timeoutMs: 30_000, logger: logs.logger, workerEntry: FAILING_WORKER });
    const database = await createTestDatabase('sqlite');
    const config = { ...loadConfig({}), ...REPORT_TEST_SETTINGS, database: database.settings, scheduleEnabled: false, authMode: 'open' as const };
    const app = await buildApp({ config, database: database.handle, logger: logs.logger, now: today, snapshots: pool });
    try {
      await loadDemoData(app, generateDemoData());
      const crashing = (await createReport(app, { ...DEMO_REPORT, name: CRASHING_REPORT })).report_id;
      const failed = await app.inject({ method: 'POST', url: `/v1/reports/${crashing}/refresh` });
      expect(failed.statusCode).toBe(500);
      expect(failed.headers['content-type']).toMatch(/^application\/problem\+json/);
      expect(failed.json()).toMatchObject({ status: 500, detail: expect.stringMatching(/could not be built and nothing was stored/) });
      expect((await app.inject({ method: 'GET', url: `/v1/reports/${crashing}/snapshots` })).json()).toMatchObject({ total: 0 });
      expect(logs.lines.some((line) => line.level === LEVELS.error && line.reason === 'exited with code 70')).toBe(true);

      const working = (await createReport(app, DEMO_REPORT)).report_id;
      expect((await app.inject({ method: 'POST', url: `/v1/reports/${working}/refresh` })).statusCode).toBe(201);
    } finally {
      await app.close();
      await pool.close();
      await database.destroy();
    }
  });
});

describe('an idle snapshot build worker', () => {
  test('is stopped after the idle time without a warning, and the next build starts a new one that builds the same snapshot', { timeout: 120_000 }, async () => {
    const logs = captureLogs('warn');
    const pool = createSnapshotBuilder({ workers: 1, timeoutMs: 60_000, idleTimeoutMs: 300, logger: logs.logger });
    const started: Worker[] = [];
    const onWorker = (worker: Worker) => started.push(worker);
    process.on('worker', onWorker);
    const testApp = await createTestApp('sqlite', REPORT_TEST_SETTINGS, today);
    try {
      const job = await demoBuildJob(testApp);

      const first = await pool.build(job);
      expect(started).toHaveLength(1);
      const firstWorker = started[0] as Worker;
      await new Promise((resolve) => firstWorker.once('exit', resolve));

      const second = await pool.build(job);
      expect(started).toHaveLength(2);
      expect(withoutTiming(second.body)).toEqual(withoutTiming(first.body));
      expect(logs.lines).toEqual([]);
    } finally {
      process.off('worker', onWorker);
      await pool.close();
      await testApp.close();
    }
  });

  test('is kept between builds when the idle time is 0', { timeout: 120_000 }, async () => {
    const pool = createSnapshotBuilder({ workers: 1, timeoutMs: 60_000, idleTimeoutMs: 0, logger: silent });
    const started: Worker[] = [];
    const onWorker = (worker: Worker) => started.push(worker);
    process.on('worker', onWorker);
    try {
      await pool.renumber('{"sequence":1}', 2);
      await new Promise((resolve) => setTimeout(resolve, 500));
      await pool.renumber('{"sequence":1}', 3);
      expect(started).toHaveLength(1);
    } finally {
      process.off('worker', onWorker);
      await pool.close();
    }
  });
});
