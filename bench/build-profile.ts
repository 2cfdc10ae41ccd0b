/**
 * CPU time of a refresh's build without a database: `buildSnapshot` and `JSON.stringify` of the
 * snapshot, on the benchmark's report (bench/run.ts: 4 campaigns, age band × region × channel
 * with every cross) made in code by bench/build-input.ts, and on a wide report (two dimensions
 * of 100 labels each, crossed). Each build compares with a previous snapshot of the same data,
 * as a repeated refresh does. Wall time and the process's CPU time (less disturbed on a shared machine). --labels sets the wide report's labels per dimension (default 100). Prints medians (and min, max) over --runs builds.
 *
 *   npx tsx bench/build-profile.ts [--contacts 100000,1000000] [--runs 5] [--cases bench,wide]
 *   npx tsx --cpu-prof --cpu-prof-dir /tmp/prof bench/build-profile.ts --contacts 1000000 --cases bench
 */
import { parseArgs } from 'node:util';
import { buildSnapshot, type SnapshotInput } from '../src/report/snapshot/index.js';
import { benchReportInput, wideReportInput } from './build-input.js';
import { median } from './process-readings.js';

const { values: options } = parseArgs({
  options: {
    contacts: { type: 'string', default: '100000,1000000' },
    runs: { type: 'string', default: '5' },
    cases: { type: 'string', default: 'bench,wide' },
    labels: { type: 'string', default: '100' },
  },
});
const sizes = options.contacts.split(',').map(Number);
const runs = Math.max(1, Number(options.runs));
const cases = options.cases.split(',').map((name) => name.trim());
const wideLabels = Number(options.labels);
const INPUTS: Record<string, (contacts: number) => SnapshotInput> = { bench: benchReportInput, wide: (contacts) => wideReportInput(contacts, wideLabels) };
for (const name of cases) if (!(name in INPUTS)) throw new Error(`--cases: unknown case "${name}"; expected some of ${Object.keys(INPUTS).join(', ')}`);

const ms = (value: number) => `${value.toFixed(1)} ms`;
const spread = (values: number[]) => `${ms(median(values))} (${ms(Math.min(...values))}–${ms(Math.max(...values))})`;

console.log(`node ${process.version}, ${runs} runs each; medians (min–max)`);
for (const name of cases) {
  for (const contacts of sizes) {
    const made = performance.now();
    const input = (INPUTS[name] as (contacts: number) => SnapshotInput)(contacts);
    const madeMs = performance.now() - made;
    const previousSnapshot = buildSnapshot(input);
    const builds: number[] = [];
    const cpu: number[] = [];
    const serialisations: number[] = [];
    let segments = 0;
    let bytes = 0;
    for (let run = 0; run < runs; run++) {
      const cpuStarted = process.cpuUsage();
      const started = performance.now();
      const snapshot = buildSnapshot({ ...input, identity: { ...input.identity, sequence: 2 }, previousSnapshot });
      const built = performance.now();
      const text = JSON.stringify(snapshot);
      builds.push(built - started);
      serialisations.push(performance.now() - built);
      const used = process.cpuUsage(cpuStarted);
      cpu.push((used.user + used.system) / 1000);
      segments = snapshot.segments.length;
      bytes = text.length;
    }
    const totals = builds.map((build, index) => build + (serialisations[index] as number));
    console.log(
      `${name} ${contacts.toLocaleString('en-US')} contacts: ${input.cells.length} cells, ${input.valueCounts.length} value counts, ${input.strata?.length ?? 0} strata, ${segments} segments, ${(bytes / 1024).toFixed(0)} KiB; ` +
        `input made in ${ms(madeMs)}\n  buildSnapshot ${spread(builds)}, JSON.stringify ${spread(serialisations)}, both ${spread(totals)}; CPU time of both ${spread(cpu)}`,
    );
  }
}
