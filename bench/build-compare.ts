/**
 * The snapshot build of this checkout against another checkout's (an earlier commit, unpacked
 * with `git archive COMMIT | tar -x -C DIR` and its node_modules linked), in one process,
 * alternating, on the same inputs (bench/build-input.ts): CPU milliseconds of `buildSnapshot` +
 * `JSON.stringify` per build, medians, and whether both wrote the same text. Alternating
 * keeps a shared machine's load from favouring either side.
 *
 *   npx tsx bench/build-compare.ts --other /tmp/earlier [--runs 9] [--cases bench-100000,bench-1000000,wide-100000-40]
 *
 * A case is bench-CONTACTS (the benchmark's report) or wide-CONTACTS-LABELS (two crossed dimensions of LABELS labels).
 */
import path from 'node:path';
import { parseArgs } from 'node:util';
import { pathToFileURL } from 'node:url';
import { buildSnapshot, type SnapshotInput } from '../src/report/snapshot/index.js';
import { benchReportInput, wideReportInput } from './build-input.js';
import { median } from './process-readings.js';

const { values: options } = parseArgs({
  options: {
    other: { type: 'string' },
    runs: { type: 'string', default: '9' },
    cases: { type: 'string', default: 'bench-100000,bench-1000000,wide-100000-40' },
  },
});
if (options.other === undefined) throw new Error('--other: the directory of the checkout to compare with is required');
const otherModule = pathToFileURL(path.resolve(options.other, 'src/report/snapshot/index.ts')).href;
const other = (await import(otherModule)) as { buildSnapshot: typeof buildSnapshot };
const runs = Math.max(1, Number(options.runs));

function inputOf(name: string): SnapshotInput {
  const [kind, contacts, labels] = name.split('-');
  if (kind === 'bench') return benchReportInput(Number(contacts));
  if (kind === 'wide') return wideReportInput(Number(contacts), Number(labels ?? 100));
  throw new Error(`--cases: unknown case "${name}"; expected bench-CONTACTS or wide-CONTACTS-LABELS`);
}

const summary = (values: number[]) => `${median(values).toFixed(1)} ms (min ${Math.min(...values).toFixed(1)})`;
console.log(`node ${process.version}, ${runs} alternating runs each; CPU ms of buildSnapshot + JSON.stringify, medians`);
for (const name of options.cases.split(',')) {
  const input = inputOf(name.trim());
  const previousSnapshot = JSON.parse(JSON.stringify(buildSnapshot(input))) as SnapshotInput['previousSnapshot'];
  const sides = [
    { label: 'other', build: other.buildSnapshot, times: [] as number[], text: '' },
    { label: 'this', build: buildSnapshot, times: [] as number[], text: '' },
  ];
  for (let run = 0; run < runs; run++) {
    for (const side of sides) {
      const started = process.cpuUsage();
      side.text = JSON.stringify(side.build({ ...input, identity: { ...input.identity, sequence: 2 }, previousSnapshot }));
      const used = process.cpuUsage(started);
      side.times.push((used.user + used.system) / 1000);
    }
  }
  const [earlier, current] = sides as [(typeof sides)[number], (typeof sides)[number]];
  console.log(`${name}: other ${summary(earlier.times)}, this ${summary(current.times)}; same text: ${earlier.text === current.text}`);
}
