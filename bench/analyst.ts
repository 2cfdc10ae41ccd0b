/**
 * Runs the analyst's script (bench/analyst/segment_table.py: pandas, SciPy, statsmodels) over
 * the files the bench uploads and times the whole run, interpreter start included. The script
 * and its Python modules are a benchmark reference only: when no interpreter with those modules
 * is found the comparison is skipped with the reason, and the bench goes on.
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { BenchFiles } from './data.js';

const SCRIPT = path.resolve('bench/analyst/segment_table.py');
const MODULES = 'pandas, scipy, statsmodels';

export type AnalystPython = { ok: true; python: string } | { ok: false; reason: string };

/**
 * The first interpreter among `preferred` (if given), `python3` on the PATH and /usr/bin/python3
 * that imports pandas, SciPy and statsmodels; or why none does.
 */
export function findAnalystPython(preferred: string | undefined): AnalystPython {
  const candidates = [...new Set([preferred, 'python3', '/usr/bin/python3'].filter((candidate): candidate is string => candidate !== undefined && candidate !== ''))];
  const reasons: string[] = [];
  for (const python of candidates) {
    const probe = spawnSync(python, ['-c', `import ${MODULES}`], { encoding: 'utf8' });
    if (probe.error) {
      reasons.push(`${python}: ${probe.error.message}`);
      continue;
    }
    if (probe.status === 0) return { ok: true, python };
    const lastLine = probe.stderr.trim().split('\n').at(-1) ?? `exit ${probe.status}`;
    reasons.push(`${python}: ${lastLine}`);
  }
  return { ok: false, reason: `no Python with ${MODULES} (${reasons.join('; ')}); install python3-pandas python3-scipy python3-statsmodels or pass --python` };
}

/** Seconds of one whole run of the script over `files`, or throws with its error output. */
export function analystScriptSeconds(python: string, files: BenchFiles): { seconds: number; segments: number } {
  const out = path.join(fs.mkdtempSync(path.join(os.tmpdir(), 'segrank-analyst-')), 'segments.csv');
  const args = [SCRIPT, '--customers', files.customersCsv, ...files.contactsCsvs.flatMap((campaign) => ['--contacts', `${campaign.campaignId}=${campaign.file}`]), '--out', out];
  const started = performance.now();
  const run = spawnSync(python, args, { encoding: 'utf8' });
  const seconds = (performance.now() - started) / 1000;
  try {
    if (run.error) throw run.error;
    if (run.status !== 0) throw new Error(`${python} ${SCRIPT} exited ${run.status}: ${run.stderr.trim()}`);
    const segments = fs.readFileSync(out, 'utf8').trim().split('\n').length - 1;
    return { seconds, segments };
  } finally {
    fs.rmSync(path.dirname(out), { recursive: true, force: true });
  }
}
