// The snapshot build worker's start: milliseconds until it answers its first task (a renumber,
// which loads the build modules but not the database drivers) and the process's resident set
// before, with it and after it is stopped.
//   node bench/worker-start-cost.mjs $PWD/src/report/snapshot/build-worker.ts $PWD/src/report/snapshot/build-worker-tsx.mjs
//   node bench/worker-start-cost.mjs <compiled output>/src/report/snapshot/build-worker.js
import { performance } from 'node:perf_hooks';
import { Worker } from 'node:worker_threads';

const [entry, bootstrap] = process.argv.slice(2);
const rss = () => (process.memoryUsage().rss / 1048576).toFixed(0);
await new Promise((r) => setTimeout(r, 500));
const before = rss();
const started = performance.now();
const worker = bootstrap ? new Worker(new URL(bootstrap, 'file://'), { workerData: { entry: new URL(entry, 'file://').href } }) : new Worker(new URL(entry, 'file://'));
// a renumber task answers once the worker's modules are loaded
const reply = new Promise((r) => worker.once('message', r));
worker.postMessage({ id: 1, task: { kind: 'renumber', body: '{"sequence":1}', sequence: 2 } });
await reply;
const ready = performance.now() - started;
await new Promise((r) => setTimeout(r, 1000));
console.log(`worker ready in ${ready.toFixed(0)} ms; RSS ${before} → ${rss()} MiB`);
await worker.terminate();
await new Promise((r) => setTimeout(r, 500));
console.log(`after terminate: ${rss()} MiB`);
