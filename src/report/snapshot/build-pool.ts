/**
 * Where snapshots are built: on a small pool of worker threads, so building and serialising a
 * snapshot of a million units (a tenth of a second or more) does not hold the event loop that
 * answers every other request; or, with no workers configured, on the main thread.
 *
 * A worker that crashes, exits or takes longer than the timeout fails the task it was running
 * (SnapshotBuildFailedError, answered as a 500 problem), is logged and replaced by a new one
 * on the next task, so one bad build never stops later refreshes.
 */
// A limit on another thread's work, in wall-clock time: not the global timers a test may fake.
import { clearTimeout, setTimeout } from 'node:timers';
import { Worker } from 'node:worker_threads';
import type { Logger } from '../../logger.js';
import { deserializeError, type WorkerReply, type WorkerTask } from './build-protocol.js';
import { renumberedBody, runSnapshotBuild, type BuiltSnapshot, type SnapshotBuildJob } from './build-task.js';
import type { ReadAndBuiltSnapshot, SnapshotReadJob } from './read-build.js';

export interface SnapshotBuilder {
  /** @throws StatsInputError as `buildSnapshot`; SnapshotBuildFailedError when a worker fails */
  build(job: SnapshotBuildJob): Promise<BuiltSnapshot>;
  /**
   * Reads a report's aggregates from a SQLite file and builds the snapshot, all off the calling
   * thread; absent when snapshots are built on the calling thread (which then reads them itself).
   * @throws as `build`, and TooManyLabelsError or SpendBeyondLimitError as the read refuses the refresh
   */
  readAndBuild?(job: SnapshotReadJob): Promise<ReadAndBuiltSnapshot>;
  /** The stored text with another sequence number. */
  renumber(body: string, sequence: number): Promise<string>;
  /** Stops the workers; tasks still waiting are refused. */
  close(): Promise<void>;
}

/** A worker failed while it ran a task: it crashed, exited or hung past the timeout. */
export class SnapshotBuildFailedError extends Error {
  override name = 'SnapshotBuildFailedError';
}

export interface SnapshotBuilderOptions {
  /** Worker threads; 0 builds on the calling thread. */
  workers: number;
  /** Longest one task may run in a worker before the worker is replaced. */
  timeoutMs: number;
  /** How long a worker may wait for its next task before it is stopped (and its memory freed); 0 or absent keeps it. */
  idleTimeoutMs?: number;
  logger: Logger;
  /** The worker's module; the build worker unless a test swaps in one that fails. */
  workerEntry?: URL;
}

export function createSnapshotBuilder(options: SnapshotBuilderOptions): SnapshotBuilder {
  return options.workers === 0 ? inProcessBuilder() : new WorkerPool(options);
}

function inProcessBuilder(): SnapshotBuilder {
  return {
    build: async (job) => runSnapshotBuild(job),
    renumber: async (body, sequence) => renumberedBody(body, sequence),
    close: async () => undefined,
  };
}

// Run from source, the worker is TypeScript and is started through a small loader; compiled, it is plain JavaScript.
const RUNS_FROM_SOURCE = import.meta.url.endsWith('.ts');
const BUILD_WORKER = new URL(RUNS_FROM_SOURCE ? './build-worker.ts' : './build-worker.js', import.meta.url);
const TSX_BOOTSTRAP = new URL('./build-worker-tsx.mjs', import.meta.url);

function startWorker(entry: URL): Worker {
  if (!entry.pathname.endsWith('.ts')) return new Worker(entry);
  return new Worker(TSX_BOOTSTRAP, { workerData: { entry: entry.href } });
}

interface QueuedTask {
  task: WorkerTask;
  resolve(result: unknown): void;
  reject(error: Error): void;
}

interface Slot {
  worker: Worker;
  running: { id: number; queued: QueuedTask; timer: NodeJS.Timeout } | null;
  idleTimer: NodeJS.Timeout | null;
}

class WorkerPool implements SnapshotBuilder {
  private readonly slots = new Set<Slot>();
  private readonly queue: QueuedTask[] = [];
  private nextId = 1;
  private closed = false;
  private readonly entry: URL;

  constructor(private readonly options: SnapshotBuilderOptions) {
    this.entry = options.workerEntry ?? BUILD_WORKER;
  }

  build(job: SnapshotBuildJob): Promise<BuiltSnapshot> {
    return this.run({ kind: 'build', job }) as Promise<BuiltSnapshot>;
  }

  readAndBuild(job: SnapshotReadJob): Promise<ReadAndBuiltSnapshot> {
    return this.run({ kind: 'readAndBuild', job }) as Promise<ReadAndBuiltSnapshot>;
  }

  renumber(body: string, sequence: number): Promise<string> {
    return this.run({ kind: 'renumber', body, sequence }) as Promise<string>;
  }

  async close(): Promise<void> {
    this.closed = true;
    for (const queued of this.queue.splice(0)) queued.reject(new SnapshotBuildFailedError('the service is stopping; the snapshot was not built'));
    const slots = [...this.slots];
    this.slots.clear();
    for (const slot of slots) {
      if (slot.idleTimer !== null) clearTimeout(slot.idleTimer);
      if (slot.running) {
        clearTimeout(slot.running.timer);
        slot.running.queued.reject(new SnapshotBuildFailedError('the service is stopping; the snapshot was not built'));
      }
    }
    await Promise.all(slots.map((slot) => slot.worker.terminate()));
  }

  private run(task: WorkerTask): Promise<unknown> {
    if (this.closed) return Promise.reject(new SnapshotBuildFailedError('the snapshot build pool is closed'));
    return new Promise((resolve, reject) => {
      this.queue.push({ task, resolve, reject });
      this.dispatch();
    });
  }

  private dispatch(): void {
    while (this.queue.length > 0 && !this.closed) {
      let slot = [...this.slots].find((candidate) => candidate.running === null);
      if (slot === undefined) {
        if (this.slots.size >= this.options.workers) return;
        slot = this.spawn();
      }
      const queued = this.queue.shift() as QueuedTask;
      const id = this.nextId++;
      const idle = slot;
      if (idle.idleTimer !== null) clearTimeout(idle.idleTimer);
      idle.idleTimer = null;
      idle.running = { id, queued, timer: setTimeout(() => this.retire(idle, `took longer than ${this.options.timeoutMs} ms`), this.options.timeoutMs) };
      // A busy worker keeps the process alive (a `segrank refresh` waits for it); an idle one does not.
      idle.worker.ref();
      try {
        idle.worker.postMessage({ id, task: queued.task });
      } catch (error) {
        // The task could not be copied to the worker (DataCloneError): its own failure, not the worker's.
        clearTimeout(idle.running.timer);
        idle.running = null;
        idle.worker.unref();
        queued.reject(error instanceof Error ? error : new Error(String(error)));
      }
    }
  }

  private spawn(): Slot {
    const slot: Slot = { worker: startWorker(this.entry), running: null, idleTimer: null };
    slot.worker.unref();
    slot.worker.on('message', (reply: WorkerReply) => this.settle(slot, reply));
    slot.worker.on('error', (error) => this.retire(slot, `crashed: ${error.message}`));
    slot.worker.on('exit', (code) => this.retire(slot, `exited with code ${code}`));
    this.slots.add(slot);
    return slot;
  }

  private settle(slot: Slot, reply: WorkerReply): void {
    const running = slot.running;
    if (running === null || running.id !== reply.id) return;
    clearTimeout(running.timer);
    slot.running = null;
    slot.worker.unref();
    if (reply.ok) running.queued.resolve(reply.result);
    else running.queued.reject(deserializeError(reply.error));
    this.dispatch();
    if (slot.running === null && (this.options.idleTimeoutMs ?? 0) > 0) {
      slot.idleTimer = setTimeout(() => this.stopIdle(slot), this.options.idleTimeoutMs);
      slot.idleTimer.unref();
    }
  }

  /**
   * Stops a worker that waited too long for a task: its heap, its compiled modules and its
   * SQLite connection are held outside the main heap (about 140 MiB after a refresh of a
   * million contacts, run from source), and the next task starts a new worker.
   */
  private stopIdle(slot: Slot): void {
    slot.idleTimer = null;
    if (slot.running !== null || !this.slots.delete(slot)) return;
    void slot.worker.terminate();
  }

  /** Takes a failed worker out of the pool, fails the task it was running, and lets the next task start a new one. */
  private retire(slot: Slot, reason: string): void {
    if (!this.slots.delete(slot)) return;
    if (slot.idleTimer !== null) clearTimeout(slot.idleTimer);
    const running = slot.running;
    slot.running = null;
    if (running) {
      clearTimeout(running.timer);
      this.options.logger.error({ reason }, 'snapshot build worker failed during a build; it is replaced');
      running.queued.reject(new SnapshotBuildFailedError(`the snapshot build worker ${reason}; the refresh was not stored`));
    } else {
      this.options.logger.warn({ reason }, 'idle snapshot build worker stopped; it is replaced');
    }
    void slot.worker.terminate();
    this.dispatch();
  }
}
