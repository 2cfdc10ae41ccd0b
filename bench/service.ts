/**
 * Runs the real service as a child process for benchmarks, on its own database, and reads its
 * peak memory from /proc (VmHWM: the resident set's high-water mark).
 */
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';

export interface RunningService {
  url: string;
  child: ChildProcess;
  peakRssMiB(): number;
  stop(): Promise<void>;
}

export async function startServiceProcess(env: Record<string, string>): Promise<RunningService> {
  // `node --import tsx` keeps the service in this one process, so its memory is what /proc shows.
  const tsx = createRequire(import.meta.url).resolve('tsx');
  const port = String(20_000 + Math.floor(Math.random() * 20_000));
  const child = spawn(process.execPath, ['--import', tsx, path.resolve('src/main.ts')], {
    env: { ...process.env, LOG_LEVEL: 'warn', SCHEDULE_ENABLED: 'false', ...env, PORT: port, HOST: '127.0.0.1' },
    stdio: ['ignore', 'inherit', 'inherit'],
  });
  const url = `http://127.0.0.1:${port}`;
  for (let attempt = 0; attempt < 200; attempt++) {
    try {
      const response = await fetch(`${url}/healthz`);
      if (response.ok) break;
    } catch {
      // not listening yet
    }
    await new Promise((resolve) => setTimeout(resolve, 100));
    if (attempt === 199) throw new Error('service did not start');
  }
  return {
    url,
    child,
    peakRssMiB() {
      const status = fs.readFileSync(`/proc/${child.pid}/status`, 'utf8');
      const match = /VmHWM:\s+(\d+) kB/.exec(status);
      return match ? Number(match[1]) / 1024 : Number.NaN;
    },
    async stop() {
      const exited = new Promise((resolve) => child.once('exit', resolve));
      child.kill('SIGTERM');
      await exited;
    },
  };
}

export async function postFile(url: string, file: string, contentType = 'text/csv'): Promise<{ status: number; body: string; seconds: number }> {
  const started = performance.now();
  const response = await fetch(url, {
    method: 'POST',
    headers: { 'content-type': contentType, 'content-length': String(fs.statSync(file).size) },
    body: fs.createReadStream(file) as unknown as ReadableStream,
    duplex: 'half',
  } as RequestInit);
  const body = await response.text();
  return { status: response.status, body, seconds: (performance.now() - started) / 1000 };
}
