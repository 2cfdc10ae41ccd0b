// Starts the TypeScript build worker through tsx. The service runs from source (npm start,
// vitest, the segrank commands), and a worker thread does not inherit a test runner's loader.
import { workerData } from 'node:worker_threads';
import { register } from 'tsx/esm/api';

register();
await import(workerData.entry);
