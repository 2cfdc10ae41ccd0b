/**
 * The calibration (`npm run calibrate`): seeded simulations with known truth that measure
 * each decision rule of a report — false discoveries, equivalence claims beyond the margin,
 * the value test's size, the coverage and error of the shrunk estimates — and print, per
 * rule, the figure, its target and whether it is met.
 *
 *   npm run calibrate                          every section, 200 replicates
 *   npm run calibrate -- --replicates 50       quicker, noisier
 *   npm run calibrate -- --sections verdicts   only the sections whose name contains the text
 *   npm run calibrate -- --write               also write bench/CALIBRATION.md
 *
 * Exit status 1 when a target is missed, so the run can gate a change.
 */
import fs from 'node:fs';
import path from 'node:path';
import { parseArgs } from 'node:util';
import { SECTIONS, type SectionResult } from './calibration/index.js';

const { values: options } = parseArgs({
  options: {
    replicates: { type: 'string', default: '200' },
    seed: { type: 'string', default: '20261203' },
    sections: { type: 'string', default: '' },
    write: { type: 'boolean', default: false },
  },
});
const replicates = Number(options.replicates);
const seed = Number(options.seed);
if (!Number.isInteger(replicates) || replicates < 1) throw new Error(`--replicates must be a whole number ≥ 1, got ${options.replicates}`);
if (!Number.isInteger(seed)) throw new Error(`--seed must be a whole number, got ${options.seed}`);
const wanted = options.sections.toLowerCase();
const chosen = SECTIONS.filter((section) => wanted === '' || section.name.toLowerCase().includes(wanted));

function markdownOf(name: string, result: SectionResult, seconds: number): string {
  const rows = result.figures.map((figure) => `| ${figure.rule} | ${figure.shown} | ${figure.target ?? '—'} | ${figure.met === undefined ? '—' : figure.met ? 'yes' : '**no**'} |`);
  return [
    `## ${name}`,
    '',
    ...result.notes.map((note) => `- ${note}`),
    '',
    '| rule | measured | target | met |',
    '| --- | --- | --- | --- |',
    ...rows,
    '',
    `(${seconds.toFixed(1)} s)`,
    '',
  ].join('\n');
}

const parts: string[] = [];
let missed = 0;
for (const section of chosen) {
  const started = performance.now();
  const result = section.run({ replicates, seed });
  const seconds = (performance.now() - started) / 1000;
  const markdown = markdownOf(section.name, result, seconds);
  missed += result.figures.filter((figure) => figure.met === false).length;
  console.log(markdown);
  parts.push(markdown);
}
console.log(missed === 0 ? 'Every target met.' : `${missed} target(s) missed.`);

if (options.write) {
  const header = [
    '# Calibration of the decision rules',
    '',
    'Written by `npm run calibrate -- --write` (bench/calibrate.ts); do not edit by hand.',
    `Replicates per scenario: ${replicates}; seed ${seed}; Node ${process.version}.`,
    '',
  ].join('\n');
  const file = path.join(import.meta.dirname, 'CALIBRATION.md');
  fs.writeFileSync(file, `${header}\n${parts.join('\n')}`);
  console.log(`wrote ${path.relative(process.cwd(), file)}`);
}
process.exitCode = missed === 0 ? 0 : 1;
