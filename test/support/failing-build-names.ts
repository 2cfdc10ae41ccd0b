/** Report names that make test/support/failing-build-worker.ts fail. */
export const CRASHING_REPORT = 'a report whose build crashes its worker';
export const HANGING_REPORT = 'a report whose build never ends';
