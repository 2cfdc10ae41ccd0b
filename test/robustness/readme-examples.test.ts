/**
 * The README as a new user meets it: `npm run demo` (through npm, as printed) ends with the
 * export lines; with them every fenced `sh` block of the README that talks to the service runs
 * as printed (only the port is the test's own) and succeeds; every query option the README
 * names is one the contract declares; and stopping the npm process stops the service, for
 * `npm run demo` and `npm start` alike.
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { parse as parseYaml } from 'yaml';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const README = fs.readFileSync(path.join(ROOT, 'README.md'), 'utf8');
const PRINTED_BASE = 'http://127.0.0.1:3000';

interface NpmProcess {
  child: ChildProcess;
  base: string;
  output(): string;
  exited: Promise<number | null>;
}

function freePort(): number {
  return 20_000 + Math.floor(Math.random() * 20_000);
}

/** `npm <args>` in the repository, on its own port, its output collected. */
function runNpm(args: string[], env: Record<string, string>): NpmProcess {
  const port = freePort();
  const child = spawn('npm', args, {
    cwd: ROOT,
    env: { ...process.env, SCHEDULE_ENABLED: 'false', ...env, PORT: String(port), HOST: '127.0.0.1' },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let output = '';
  child.stdout?.on('data', (chunk: Buffer) => (output += chunk.toString()));
  child.stderr?.on('data', (chunk: Buffer) => (output += chunk.toString()));
  const exited = new Promise<number | null>((resolve) => child.once('exit', (code) => resolve(code)));
  return { child, base: `http://127.0.0.1:${port}`, output: () => output, exited };
}

async function waitFor(condition: () => boolean | Promise<boolean>, what: string, npm: NpmProcess, timeoutMs = 120_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!(await condition())) {
    if (npm.child.exitCode !== null) throw new Error(`npm exited while waiting for ${what}:\n${npm.output()}`);
    if (Date.now() > deadline) throw new Error(`no ${what} within ${timeoutMs} ms:\n${npm.output()}`);
    await new Promise((resolve) => setTimeout(resolve, 200));
  }
}

async function answers(base: string): Promise<boolean> {
  try {
    return (await fetch(`${base}/healthz`)).ok;
  } catch {
    return false;
  }
}

/** SIGTERM to the npm process alone; resolves with whether the service stopped answering and npm exited. */
async function stopNpm(npm: NpmProcess): Promise<{ exited: boolean; stillAnswers: boolean }> {
  npm.child.kill('SIGTERM');
  const exited = await Promise.race([npm.exited.then(() => true), new Promise<boolean>((resolve) => setTimeout(() => resolve(false), 20_000))]);
  await new Promise((resolve) => setTimeout(resolve, 500));
  return { exited, stillAnswers: await answers(npm.base) };
}

/** The `export NAME=value` lines the demo printed, as an environment. */
function exportedVariables(output: string): Record<string, string> {
  const variables: Record<string, string> = {};
  for (const line of output.split('\n').filter((text) => text.startsWith('export '))) {
    for (const match of line.slice('export '.length).matchAll(/([A-Z_]+)=('([^']*)'|\S+)/g)) {
      variables[match[1] as string] = match[3] ?? (match[2] as string);
    }
  }
  return variables;
}

/** The README's fenced `sh` blocks that talk to the service (the npm set-up lines are the demo itself). */
function serviceBlocks(): string[] {
  return [...README.matchAll(/```sh\n([\s\S]*?)```/g)].map((match) => match[1] as string).filter((block) => /\bcurl\b|npx segrank/.test(block));
}

describe('the README against `npm run demo`', () => {
  let demo: NpmProcess;
  let workDirectory: string;
  let exported: Record<string, string>;

  beforeAll(async () => {
    workDirectory = fs.mkdtempSync(path.join(os.tmpdir(), 'segrank-readme-'));
    // A database of the test's own, so the repository's data/ is left alone.
    demo = runNpm(['run', 'demo'], { DATABASE_URL: path.join(workDirectory, 'demo.sqlite') });
    await waitFor(() => /^export ADMIN_KEY=/m.test(demo.output()), 'export lines', demo, 180_000);
    exported = exportedVariables(demo.output());
  }, 200_000);
  afterAll(async () => {
    if (demo.child.exitCode === null) demo.child.kill('SIGKILL');
    fs.rmSync(workDirectory, { recursive: true, force: true });
  });

  test('the demo ends with the export lines, after a quiet log', () => {
    const lines = demo.output().trimEnd().split('\n');
    expect(lines.at(-1)).toMatch(/^export ADMIN_KEY=sgr_\S+ INGEST_KEY=sgr_\S+ READ_KEY=sgr_\S+$/);
    expect(Object.keys(exported).sort()).toEqual(['ADMIN_KEY', 'DATABASE_URL', 'HOLDOUT_REPORT_ID', 'INGEST_KEY', 'READ_KEY', 'REPORT_ID']);
    expect(exported['DATABASE_URL']).toBe(path.join(workDirectory, 'demo.sqlite'));
    // The autumn campaign's holdout report is defined and refreshed, and gives advice per segment.
    expect(exported['HOLDOUT_REPORT_ID']).not.toBe(exported['REPORT_ID']);
    expect(demo.output()).toMatch(/^report "Autumn bulb offer 2026: what the mailing added" \(with a holdout; [^)]*\): \d+ segments tested; advice \w+ \d+/m);
    // no JSON log lines at the default level
    expect(lines.filter((line) => line.startsWith('{"level"'))).toEqual([]);
  });

  test('every README shell block that talks to the service runs as printed and succeeds', () => {
    const blocks = serviceBlocks();
    expect(blocks.length).toBeGreaterThanOrEqual(4);
    for (const block of blocks) {
      const script = [
        'set -euo pipefail',
        // A 4xx or 5xx answer fails the block, with the problem detail shown.
        'curl() { command curl -sS --fail-with-body "$@"; echo; }',
        `npx() { if [ "$1" = segrank ]; then shift; node ${JSON.stringify(path.join(ROOT, 'bin/segrank.js'))} "$@"; else command npx "$@"; fi; }`,
        block.replaceAll(PRINTED_BASE, demo.base),
      ].join('\n');
      const result = spawnSync('bash', ['-c', script], { cwd: workDirectory, env: { ...process.env, ...exported }, encoding: 'utf8', timeout: 60_000 });
      expect(result.status, `${block}\n--- stdout\n${result.stdout}\n--- stderr\n${result.stderr}`).toBe(0);
      if (block.includes('/contacts')) {
        // The receipts the README prints: two new customers, two new contacts.
        expect(result.stdout.match(/"inserted":2/g)).toHaveLength(2);
      }
    }
  }, 120_000);

  test('every query option the README names is declared in the contract', () => {
    const contract = parseYaml(fs.readFileSync(path.join(ROOT, 'openapi.yaml'), 'utf8')) as {
      paths: Record<string, Record<string, { parameters?: Array<{ name: string; in: string; $ref?: string }> }>>;
      components?: { parameters?: Record<string, { name: string; in: string }> };
    };
    const declared = new Set<string>();
    for (const operations of Object.values(contract.paths)) {
      for (const operation of Object.values(operations)) {
        for (const parameter of operation.parameters ?? []) {
          const resolved = parameter.$ref ? contract.components?.parameters?.[parameter.$ref.split('/').at(-1) as string] : parameter;
          if (resolved?.in === 'query') declared.add(resolved.name);
        }
      }
    }
    const named = new Set([...README.matchAll(/[?&]([a-z_]+)=/g)].map((match) => match[1] as string));
    expect(named.size).toBeGreaterThan(3);
    for (const option of named) expect(declared, `?${option}=`).toContain(option);
  });

  test('SIGTERM to the npm process stops the demo service', async () => {
    expect(await answers(demo.base)).toBe(true);
    expect(await stopNpm(demo)).toEqual({ exited: true, stillAnswers: false });
  }, 30_000);
});

describe('npm start', () => {
  test('serves, and SIGTERM to the npm process stops the service', async () => {
    const directory = fs.mkdtempSync(path.join(os.tmpdir(), 'segrank-start-'));
    const service = runNpm(['start'], { DATABASE_URL: path.join(directory, 'start.sqlite'), AUTH_MODE: 'open', LOG_LEVEL: 'warn' });
    try {
      await waitFor(() => answers(service.base), 'answer on /healthz', service, 60_000);
      expect(await stopNpm(service)).toEqual({ exited: true, stillAnswers: false });
    } finally {
      if (service.child.exitCode === null) service.child.kill('SIGKILL');
      fs.rmSync(directory, { recursive: true, force: true });
    }
  }, 90_000);
});
