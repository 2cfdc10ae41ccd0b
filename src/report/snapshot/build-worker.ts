/**
 * The snapshot build worker's entry: answers each task the pool posts with its result or its
 * error (name, message, stack and the fields the main thread needs to rebuild it).
 */
import { parentPort } from 'node:worker_threads';
import { answer, type WorkerRequest } from './build-protocol.js';

if (parentPort === null) throw new Error('build-worker.ts runs as a worker thread of the snapshot build pool');
const port = parentPort;
port.on('message', (request: WorkerRequest) => void answer(request).then((reply) => port.postMessage(reply)));
