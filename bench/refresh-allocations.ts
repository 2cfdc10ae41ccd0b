/**
 * Bytes a SQLite refresh allocates on the JavaScript heap (read, build and text, the build
 * worker's `runSnapshotReadAndBuild`, here on the main thread), by V8's sampling heap profiler
 * with the objects later collected included: the work the garbage collector is given, which a
 * loaded machine does not disturb as it does CPU time. Totals per refresh and the functions
 * that allocate most, for this checkout or another (`--root DIR`, e.g. an earlier commit unpacked
 * with `git archive`). The database is one `bench/event-loop.ts --database FILE` kept; its first
 * report is refreshed, twice to warm up, then `--refreshes` times sampled.
 *
 *   npx tsx bench/refresh-allocations.ts FILE [--root DIR] [--refreshes 4] [--top 15]
 */
import { Session } from 'node:inspector/promises';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { parseArgs } from 'node:util';
import { sql } from 'kysely';
import { DEFAULT_SQLITE_READ_CACHE_MIB } from '../src/config.js';

const { values: options, positionals } = parseArgs({
  options: { root: { type: 'string' }, refreshes: { type: 'string', default: '4' }, top: { type: 'string', default: '15' } },
  allowPositionals: true,
});
const file: string | undefined = positionals[0];
if (file === undefined) throw new Error('usage: npx tsx bench/refresh-allocations.ts FILE [--root DIR] [--refreshes 4] [--top 15]');
const root = path.resolve(options.root ?? path.join(path.dirname(fileURLToPath(import.meta.url)), '..'));

interface ProfileNode {
  callFrame: { functionName: string; url: string };
  selfSize: number;
  children: ProfileNode[];
}

async function main(databaseFile: string): Promise<void> {
  const load = async <T>(module: string) => (await import(pathToFileURL(path.join(root, module)).href)) as T;
  const { openDatabase } = await load<typeof import('../src/db/connect.js')>('src/db/connect.ts');
  const { runSnapshotReadAndBuild } = await load<typeof import('../src/report/snapshot/read-build.js')>('src/report/snapshot/read-build.ts');
  const handle = await openDatabase({ dialect: 'sqlite', file: databaseFile });
  const report = (await sql<{ report_id: string; name: string; definition: string }>`select report_id, name, definition from reports order by created_at limit 1`.execute(handle.readDb)).rows[0];
  await handle.close();
  if (report === undefined) throw new Error(`${databaseFile} holds no report`);
  const refresh = () =>
    runSnapshotReadAndBuild({
      databaseFile,
      input: {
        identity: { snapshotId: '00000000-0000-4000-8000-000000000000', reportId: report.report_id, reportName: report.name, sequence: 1, createdAt: '2026-01-01T00:00:00.000Z', trigger: 'manual' },
        definition: JSON.parse(report.definition) as never,
        publicationThreshold: 10,
      },
      maxLabelsPerDimension: 1000,
      readCacheMiB: DEFAULT_SQLITE_READ_CACHE_MIB,
      elapsedBeforeReadMs: 0,
    });
  await refresh();
  await refresh();
  const session = new Session();
  session.connect();
  // Collected objects included: what was allocated, not what is still alive.
  await session.post('HeapProfiler.startSampling', { samplingInterval: 4096, includeObjectsCollectedByMajorGC: true, includeObjectsCollectedByMinorGC: true } as never);
  const refreshes = Number(options.refreshes);
  for (let run = 0; run < refreshes; run++) await refresh();
  const { profile } = (await session.post('HeapProfiler.stopSampling')) as unknown as { profile: { head: ProfileNode } };
  session.disconnect();
  const byFunction = new Map<string, number>();
  let total = 0;
  const walk = (node: ProfileNode) => {
    const name = `${node.callFrame.functionName || '(anonymous)'} ${node.callFrame.url.split('/').at(-1) ?? ''}`;
    byFunction.set(name, (byFunction.get(name) ?? 0) + node.selfSize);
    total += node.selfSize;
    node.children.forEach(walk);
  };
  walk(profile.head);
  const mb = (bytes: number) => (bytes / refreshes / 1e6).toFixed(1);
  console.log(`${root}: ${mb(total)} MB allocated per refresh (${refreshes} refreshes sampled)`);
  for (const [name, bytes] of [...byFunction].sort((left, right) => right[1] - left[1]).slice(0, Number(options.top))) console.log(`  ${mb(bytes).padStart(6)} MB  ${name}`);
}

await main(file);
