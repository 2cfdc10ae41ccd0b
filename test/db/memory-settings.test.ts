/** The settings that bound the service's memory: their defaults and the values refused at start-up. */
import { describe, expect, it } from 'vitest';
import { ConfigError, loadConfig } from '../../src/config.js';

describe('REFRESH_WORKER_IDLE_MS', () => {
  it('defaults to a minute and reads 0 (keep the worker) or another time', () => {
    expect(loadConfig({}).refreshWorkerIdleMs).toBe(60_000);
    expect(loadConfig({ REFRESH_WORKER_IDLE_MS: '0' }).refreshWorkerIdleMs).toBe(0);
    expect(loadConfig({ REFRESH_WORKER_IDLE_MS: '5000' }).refreshWorkerIdleMs).toBe(5000);
  });

  it.each(['-1', 'soon', '86400001'])('refuses %s by name', (value) => {
    expect(() => loadConfig({ REFRESH_WORKER_IDLE_MS: value })).toThrow(ConfigError);
    expect(() => loadConfig({ REFRESH_WORKER_IDLE_MS: value })).toThrow(/REFRESH_WORKER_IDLE_MS/);
  });
});
