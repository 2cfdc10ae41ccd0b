/** The upload settings: their defaults and the values refused at start-up. */
import os from 'node:os';
import { describe, expect, it } from 'vitest';
import { ConfigError, loadConfig } from '../../src/config.js';

describe('upload settings', () => {
  it('default to a 30 s idle timeout and the system temporary folder', () => {
    const config = loadConfig({});
    expect(config.uploadIdleTimeoutMs).toBe(30_000);
    expect(config.uploadSpoolDir).toBe(os.tmpdir());
  });

  it('read UPLOAD_IDLE_TIMEOUT_MS and UPLOAD_SPOOL_DIR', () => {
    const config = loadConfig({ UPLOAD_IDLE_TIMEOUT_MS: '5000', UPLOAD_SPOOL_DIR: '/var/spool/segrank' });
    expect(config.uploadIdleTimeoutMs).toBe(5000);
    expect(config.uploadSpoolDir).toBe('/var/spool/segrank');
  });

  it.each(['soon', '50', '3600001'])('refuse UPLOAD_IDLE_TIMEOUT_MS=%s by name', (value) => {
    expect(() => loadConfig({ UPLOAD_IDLE_TIMEOUT_MS: value })).toThrow(ConfigError);
    expect(() => loadConfig({ UPLOAD_IDLE_TIMEOUT_MS: value })).toThrow(/UPLOAD_IDLE_TIMEOUT_MS/);
  });
});
