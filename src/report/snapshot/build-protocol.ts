/**
 * What the snapshot build pool and its workers say to each other: a task, its result, or its
 * error in a form that crosses the thread boundary and is rebuilt as the same class.
 */
import { StatsInputError } from '../../stats/index.js';
import { renumberedBody, runSnapshotBuild, type BuiltSnapshot, type SnapshotBuildJob } from './build-task.js';

export type WorkerTask = { kind: 'build'; job: SnapshotBuildJob } | { kind: 'renumber'; body: string; sequence: number };

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
}

export type WorkerReply = { id: number; ok: true; result: BuiltSnapshot | string } | { id: number; ok: false; error: SerializedError };

/** A worker's answer to one request: the task's result, or the error it threw. */
export function answer(request: WorkerRequest): WorkerReply {
  try {
    const { task } = request;
    return { id: request.id, ok: true, result: task.kind === 'build' ? runSnapshotBuild(task.job) : renumberedBody(task.body, task.sequence) };
  } catch (error) {
    return { id: request.id, ok: false, error: serializeError(error) };
  }
}

function serializeError(error: unknown): SerializedError {
  if (!(error instanceof Error)) return { name: 'Error', message: String(error), stack: undefined, argument: undefined };
  return { name: error.name, message: error.message, stack: error.stack, argument: error instanceof StatsInputError ? error.argument : undefined };
}

/**
 * The error a worker threw, as the class the main thread would have seen had it built the
 * snapshot itself (structured clone keeps only the built-in error classes).
 */
export function deserializeError(serialized: SerializedError): Error {
  const error = serialized.name === 'StatsInputError' ? new StatsInputError(serialized.argument ?? '', serialized.message) : new Error(serialized.message);
  error.name = serialized.name;
  if (serialized.stack !== undefined) error.stack = serialized.stack;
  return error;
}
