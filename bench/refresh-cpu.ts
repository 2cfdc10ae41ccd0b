/**
 * CPU time of a whole SQLite refresh but its write (the build worker's read, build and
 * serialisation, `readAndBuild`) on a kept database, for this checkout and optionally another
 * one (an earlier commit unpacked with `git archive COMMIT | tar -x -C DIR`, node_modules
 * linked). Each refresh series runs in a fresh process of its checkout with one build worker and
 * the service's heap growth limit; the process's CPU time (user + system: the worker, its
 * garbage collection threads, an idle main thread) is taken around each refresh. The checkouts
 * alternate process by process, so a shared machine's load favours neither; medians over all
 * refreshes after each process's first, and whether both wrote the same snapshots (ids and
 * times aside). The database is one `bench/event-loop.ts --database FILE` kept; its first
 * report is refreshed.
 *
 *   npx tsx bench/refresh-cpu.ts FILE [--other DIR] [--rounds 5] [--refreshes 4]
 */
import { execFileSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { parseArgs } from 'node:util';
import { median } from './process-readings.js';
import { DEFAULT_SQLITE_READ_CACHE_MIB } from '../src/config.js';

const { values: options, positionals } = parseArgs({
  options: {
    other: { type: 'string' },
    rounds: { type: 'string', default: '5' },
    refreshes: { type: 'string', default: '4' },
    child: { type: 'string' },
  },
  allowPositionals: true,
});
const file: string | undefined = positionals[0];
if (file === undefined) throw new Error('usage: npx tsx bench/refresh-cpu.ts FILE [--other DIR] [--rounds 5] [--refreshes 4]');

interface Series {
  cpuMs: number[];
  digest: string;
}

/** In a child process: `refreshes` refreshes of the first report with the checkout at `root`. */
async function runSeries(file: string, root: string, refreshes: number): Promise<Series> {
  const load = async <T>(module: string) => (await import(pathToFileURL(path.join(root, module)).href)) as T;
  const { limitHeapGrowth } = await load<typeof import('../src/heap-growth.js')>('src/heap-growth.ts');
  const { loadConfig } = await load<typeof import('../src/config.js')>('src/config.ts');
  const { createSnapshotBuilder } = await load<typeof import('../src/report/snapshot/build-pool.js')>('src/report/snapshot/build-pool.ts');
  const { openDatabase } = await load<typeof import('../src/db/connect.js')>('src/db/connect.ts');
  const { sql } = await import('kysely');
  // The service's settings from the environment (HEAP_GROWING_PERCENT among them), as the service reads them.
  const config = loadConfig(process.env);
  limitHeapGrowth(config.heapGrowingPercent);
  const handle = await openDatabase({ dialect: 'sqlite', file });
  const report = (await sql<{ report_id: string; name: string; definition: string }>`select report_id, name, definition from reports order by created_at limit 1`.execute(handle.readDb)).rows[0];
  await handle.close();
  if (report === undefined) throw new Error(`${file} holds no report`);
  const silent = { info: () => undefined, warn: () => undefined, error: () => undefined, debug: () => undefined, trace: () => undefined, child: () => silent } as never;
  const builder = createSnapshotBuilder({ workers: 1, timeoutMs: 600_000, logger: silent });
  const readAndBuild = builder.readAndBuild;
  if (readAndBuild === undefined) throw new Error('the builder reads nothing itself');
  const cpuMs: number[] = [];
  const hash = createHash('sha256');
  try {
    for (let refresh = 0; refresh < refreshes; refresh++) {
      const identity = { snapshotId: '00000000-0000-4000-8000-000000000000', reportId: report.report_id, reportName: report.name, sequence: 1, createdAt: '2026-01-01T00:00:00.000Z', trigger: 'manual' as const };
      const before = process.cpuUsage();
      const built = await readAndBuild.call(builder, {
        databaseFile: file,
        input: { identity, definition: JSON.parse(report.definition) as never, publicationThreshold: config.publicationThreshold },
        maxLabelsPerDimension: config.maxLabelsPerDimension,
        // An earlier checkout's config has no read cache setting; this checkout's default stands in.
        readCacheMiB: (config.database as { readCacheMiB?: number }).readCacheMiB ?? DEFAULT_SQLITE_READ_CACHE_MIB,
        elapsedBeforeReadMs: 0,
      });
      const used = process.cpuUsage(before);
      cpuMs.push((used.user + used.system) / 1000);
      if (refresh === 0) hash.update(built.body.replace(/"duration_ms":\d+/g, ''));
    }
  } finally {
    await builder.close();
  }
  return { cpuMs, digest: hash.digest('hex').slice(0, 16) };
}

if (options.child !== undefined) {
  console.log(JSON.stringify(await runSeries(file, options.child, Number(options.refreshes))));
} else {
  const here = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
  const sides = [{ name: 'this checkout', root: here }, ...(options.other === undefined ? [] : [{ name: path.resolve(options.other), root: path.resolve(options.other) }])];
  const results = sides.map(() => ({ cpuMs: [] as number[], digests: new Set<string>() }));
  for (let round = 0; round < Number(options.rounds); round++) {
    sides.forEach((side, index) => {
      const output = execFileSync(process.execPath, [...process.execArgv, fileURLToPath(import.meta.url), file, '--child', side.root, '--refreshes', options.refreshes], { encoding: 'utf8' });
      const series = JSON.parse(output.trim().split('\n').at(-1) as string) as Series;
      // The first refresh of a process starts the worker and warms its code and page cache.
      (results[index] as (typeof results)[number]).cpuMs.push(...series.cpuMs.slice(1));
      (results[index] as (typeof results)[number]).digests.add(series.digest);
    });
  }
  sides.forEach((side, index) => {
    const result = results[index] as (typeof results)[number];
    console.log(`${side.name}: CPU per refresh median ${median(result.cpuMs).toFixed(0)} ms (${result.cpuMs.length} refreshes), snapshot digests ${[...result.digests].join(', ')}`);
  });
}
