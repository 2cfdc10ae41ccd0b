/**
 * The snapshot build worker's entry: runs each task the pool posts and answers with its result
 * or its error (name, message, stack and the fields the main thread needs to rebuild it).
 */
import { parentPort } from 'node:worker_threads';
import { runWorkerTask, serializeError, type WorkerReply, type WorkerRequest } from './build-protocol.js';

if (parentPort === null) throw new Error('build-worker.ts runs as a worker thread of the snapshot build pool');
const port = parentPort;

port.on('message', (request: WorkerRequest) => {
  let reply: WorkerReply;
  try {
    reply = { id: request.id, ok: true, result: runWorkerTask(request.task) };
  } catch (error) {
    reply = { id: request.id, ok: false, error: serializeError(error) };
  }
  port.postMessage(reply);
});
