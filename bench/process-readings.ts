/**
 * What the benchmarks read of the service's child process from Linux's /proc, and the median
 * they quote.
 */
import fs from 'node:fs';
import type { RunningService } from '../test/support/service-process.js';

// Linux reports a process's CPU time in clock ticks of 1/100 s (getconf CLK_TCK).
const CLOCK_TICKS_PER_SECOND = 100;

/** User plus system CPU seconds the service has used so far, from /proc/<pid>/stat. */
export function cpuSeconds(service: RunningService): number {
  const stat = fs.readFileSync(`/proc/${service.child.pid}/stat`, 'utf8');
  // The command name in parentheses may hold spaces; the fields after it are space-separated.
  const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
  return (Number(fields[11]) + Number(fields[12])) / CLOCK_TICKS_PER_SECOND;
}

/** The service's resident memory now (VmRSS), in MiB. */
export function residentMiB(service: RunningService): number {
  const status = fs.readFileSync(`/proc/${service.child.pid}/status`, 'utf8');
  return Number(/VmRSS:\s+(\d+) kB/.exec(status)?.[1] ?? Number.NaN) / 1024;
}

export function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  const middle = Math.floor(sorted.length / 2);
  return sorted.length % 2 === 1 ? (sorted[middle] as number) : ((sorted[middle - 1] as number) + (sorted[middle] as number)) / 2;
}
