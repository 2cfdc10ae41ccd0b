/** The heap growth setting: its default and the values refused at start-up. */
import { describe, expect, it } from 'vitest';
import { ConfigError, loadConfig } from '../../src/config.js';

describe('HEAP_GROWING_PERCENT', () => {
  it('defaults to 50 and reads 0 (V8 decides) or another percentage', () => {
    expect(loadConfig({}).heapGrowingPercent).toBe(50);
    expect(loadConfig({ HEAP_GROWING_PERCENT: '0' }).heapGrowingPercent).toBe(0);
    expect(loadConfig({ HEAP_GROWING_PERCENT: '25' }).heapGrowingPercent).toBe(25);
  });

  it.each(['-1', 'half', '1001'])('refuses %s by name', (value) => {
    expect(() => loadConfig({ HEAP_GROWING_PERCENT: value })).toThrow(ConfigError);
    expect(() => loadConfig({ HEAP_GROWING_PERCENT: value })).toThrow(/HEAP_GROWING_PERCENT/);
  });

});
