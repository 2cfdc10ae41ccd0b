/**
 * A snapshot build worker that fails on demand, for the pool's recovery tests: a report named
 * CRASHING_REPORT ends the worker thread, one named HANGING_REPORT never answers; every other
 * task is answered as the real worker answers it, so a replacement worker builds normally.
 */
import { parentPort } from 'node:worker_threads';
import { answer, type WorkerRequest } from '../../src/report/snapshot/build-protocol.js';
import { CRASHING_REPORT, HANGING_REPORT } from './failing-build-names.js';

const port = parentPort;
port?.on('message', (request: WorkerRequest) => {
  const name = request.task.kind === 'renumber' ? null : request.task.job.input.identity.reportName;
  if (name === CRASHING_REPORT) process.exit(70);
  if (name === HANGING_REPORT) for (;;);
  void answer(request).then((reply) => port.postMessage(reply));
});
