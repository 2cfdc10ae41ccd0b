/**
 * What the snapshot build pool and its workers say to each other: a task, its result, or its
 * error in a form that crosses the thread boundary and is rebuilt as the same class.
 */
import { SpendBeyondLimitError } from '../../segments/index.js';
import { StatsInputError } from '../../stats/index.js';
import { renumberedBody, runSnapshotBuild, type BuiltSnapshot, type SnapshotBuildJob } from './build-task.js';
import { TooManyLabelsError } from './label-limit.js';
import type { ReadAndBuiltSnapshot, SnapshotReadJob } from './read-build.js';

export type WorkerTask = { kind: 'build'; job: SnapshotBuildJob } | { kind: 'readAndBuild'; job: SnapshotReadJob } | { kind: 'renumber'; body: string; sequence: number };

export interface WorkerRequest {
  id: number;
  task: WorkerTask;
}

interface SerializedError {
  name: string;
  message: string;
  stack: string | undefined;
  /** StatsInputError's argument */
  argument: string | undefined;
  /** The fields of the errors a read refuses a refresh with (TooManyLabelsError, SpendBeyondLimitError), to rebuild them */
  refusal: TooManyLabelsFields | SpendBeyondLimitFields | undefined;
}

type TooManyLabelsFields = Pick<TooManyLabelsError, 'reportId' | 'dimensions' | 'limit'>;
type SpendBeyondLimitFields = Pick<SpendBeyondLimitError, 'window' | 'customers'>;

export type WorkerReply = { id: number; ok: true; result: BuiltSnapshot | ReadAndBuiltSnapshot | string } | { id: number; ok: false; error: SerializedError };

async function run(task: WorkerTask): Promise<BuiltSnapshot | ReadAndBuiltSnapshot | string> {
  if (task.kind === 'build') return runSnapshotBuild(task.job);
  // Loaded on the first read: a worker that only builds starts without the database drivers.
  if (task.kind === 'readAndBuild') return (await import('./read-build.js')).runSnapshotReadAndBuild(task.job);
  return renumberedBody(task.body, task.sequence);
}

/** A worker's answer to one request: the task's result, or the error it threw. */
export async function answer(request: WorkerRequest): Promise<WorkerReply> {
  try {
    return { id: request.id, ok: true, result: await run(request.task) };
  } catch (error) {
    return { id: request.id, ok: false, error: serializeError(error) };
  }
}

function refusalOf(error: Error): SerializedError['refusal'] {
  if (error instanceof TooManyLabelsError) return { reportId: error.reportId, dimensions: error.dimensions, limit: error.limit };
  if (error instanceof SpendBeyondLimitError) return { window: error.window, customers: error.customers };
  return undefined;
}

function serializeError(error: unknown): SerializedError {
  if (!(error instanceof Error)) return { name: 'Error', message: String(error), stack: undefined, argument: undefined, refusal: undefined };
  return { name: error.name, message: error.message, stack: error.stack, argument: error instanceof StatsInputError ? error.argument : undefined, refusal: refusalOf(error) };
}

function rebuiltError(serialized: SerializedError): Error {
  const refusal = serialized.refusal;
  if (serialized.name === 'StatsInputError') return new StatsInputError(serialized.argument ?? '', serialized.message);
  if (serialized.name === 'TooManyLabelsError' && refusal !== undefined && 'limit' in refusal) return new TooManyLabelsError(refusal.reportId, refusal.dimensions, refusal.limit);
  if (serialized.name === 'SpendBeyondLimitError' && refusal !== undefined && 'window' in refusal) return new SpendBeyondLimitError(refusal.window, refusal.customers);
  return new Error(serialized.message);
}

/**
 * The error a worker threw, as the class the main thread would have seen had it built the
 * snapshot itself (structured clone keeps only the built-in error classes).
 */
export function deserializeError(serialized: SerializedError): Error {
  const error = rebuiltError(serialized);
  error.name = serialized.name;
  if (serialized.stack !== undefined) error.stack = serialized.stack;
  return error;
}
