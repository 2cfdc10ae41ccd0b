/**
 * Prints the calibration sections of the expected figures and the value test as markdown:
 * `npx tsx bench/calibration/run-sections.ts [replicates] [seed] [section…]`, sections
 * `shrinkage` and `value-test` (both when none is named).
 */
import { run as runShrinkage } from './shrinkage.js';
import { run as runValueTest } from './value-test.js';

const [replicatesArgument, seedArgument, ...names] = process.argv.slice(2);
const options = { replicates: Number(replicatesArgument ?? 200), seed: Number(seedArgument ?? 20261203) };
const sections: Record<string, (opts: typeof options) => string> = { shrinkage: runShrinkage, 'value-test': runValueTest };
for (const name of names.length > 0 ? names : Object.keys(sections)) {
  const section = sections[name];
  if (section === undefined) throw new Error(`unknown section ${name}; known: ${Object.keys(sections).join(', ')}`);
  const started = performance.now();
  process.stdout.write(`${section(options)}\n`);
  process.stderr.write(`${name}: ${((performance.now() - started) / 1000).toFixed(1)} s\n`);
}
