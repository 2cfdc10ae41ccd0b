/**
 * Runs the real service as a child process (for crash tests and benchmarks), on the database
 * its environment names, and reads its peak memory from /proc (VmHWM: the resident set's
 * high-water mark). Its output is collected so a test can wait for a log line.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { Readable } from 'node:stream';

export interface RunningService {
  url: string;
  child: ChildProcess;
  /** Everything the service wrote to stdout so far. */
  output(): string;
  /** Resolves once the output written after character `since` (default: all of it) contains `pattern`. */
  waitForOutput(pattern: RegExp, timeoutMs?: number, since?: number): Promise<void>;
  peakRssMiB(): number;
  stop(): Promise<void>;
  kill(): Promise<void>;
}

export async function startServiceProcess(env: Record<string, string>): Promise<RunningService> {
  // `node --import tsx` keeps the service in this one process, so its memory is what /proc shows.
  const tsx = createRequire(import.meta.url).resolve('tsx');
  const port = String(20_000 + Math.floor(Math.random() * 20_000));
  const child = spawn(process.execPath, ['--import', tsx, path.resolve('src/main.ts')], {
    env: { ...process.env, LOG_LEVEL: 'warn', SCHEDULE_ENABLED: 'false', AUTH_MODE: 'open', ...env, PORT: port, HOST: '127.0.0.1' },
    stdio: ['ignore', 'pipe', 'inherit'],
  });
  let output = '';
  child.stdout?.on('data', (chunk: Buffer) => {
    output += chunk.toString();
    if (env['ECHO_SERVICE_OUTPUT'] === '1') process.stdout.write(chunk);
  });
  const exited = new Promise((resolve) => child.once('exit', resolve));
  const url = `http://127.0.0.1:${port}`;
  for (let attempt = 0; attempt < 200; attempt++) {
    try {
      const response = await fetch(`${url}/healthz`);
      if (response.ok) break;
    } catch {
      // not listening yet
    }
    if (child.exitCode !== null) throw new Error(`service exited with ${child.exitCode}:\n${output}`);
    await new Promise((resolve) => setTimeout(resolve, 100));
    if (attempt === 199) throw new Error(`service did not start:\n${output}`);
  }
  return {
    url,
    child,
    output: () => output,
    async waitForOutput(pattern, timeoutMs = 60_000, since = 0) {
      const deadline = Date.now() + timeoutMs;
      while (!pattern.test(output.slice(since))) {
        if (child.exitCode !== null) throw new Error(`service exited while waiting for ${pattern}`);
        if (Date.now() > deadline) throw new Error(`no output matching ${pattern} within ${timeoutMs} ms`);
        await new Promise((resolve) => setTimeout(resolve, 20));
      }
    },
    peakRssMiB() {
      const status = fs.readFileSync(`/proc/${child.pid}/status`, 'utf8');
      const match = /VmHWM:\s+(\d+) kB/.exec(status);
      return match ? Number(match[1]) / 1024 : Number.NaN;
    },
    async stop() {
      if (child.exitCode === null) child.kill('SIGTERM');
      await exited;
    },
    async kill() {
      if (child.exitCode === null) child.kill('SIGKILL');
      await exited;
    },
  };
}

export async function postStream(url: string, body: AsyncIterable<string | Uint8Array>, contentType = 'text/csv'): Promise<{ status: number; body: string }> {
  const response = await fetch(url, {
    method: 'POST',
    headers: { 'content-type': contentType },
    body: Readable.from(body) as unknown as ReadableStream,
    duplex: 'half',
  } as RequestInit);
  return { status: response.status, body: await response.text() };
}

export async function postFile(url: string, file: string, contentType = 'text/csv', headers: Record<string, string> = {}): Promise<{ status: number; body: string; seconds: number }> {
  const started = performance.now();
  const response = await fetch(url, {
    method: 'POST',
    headers: { ...headers, 'content-type': contentType, 'content-length': String(fs.statSync(file).size) },
    body: fs.createReadStream(file) as unknown as ReadableStream,
    duplex: 'half',
  } as RequestInit);
  const body = await response.text();
  return { status: response.status, body, seconds: (performance.now() - started) / 1000 };
}
