import { describe, expect, it } from 'vitest';
import { StatsInputError, computed, notComputable, summarize, wilsonInterval } from '../../src/stats/index.js';

describe('StatsInputError', () => {
  it('is an Error named StatsInputError that carries the argument name', () => {
    const error = new StatsInputError('trials', 'trials must be a non-negative integer, got -1');
    expect(error).toBeInstanceOf(Error);
    expect(error.name).toBe('StatsInputError');
    expect(error.argument).toBe('trials');
    expect(error.message).toBe('trials must be a non-negative integer, got -1');
  });

  it('is what the statistics functions throw for invalid input', () => {
    expect(() => wilsonInterval(1, -1, 0.95)).toThrow(StatsInputError);
    expect(() => summarize([Number.NaN])).toThrow(StatsInputError);
  });
});

describe('Outcome', () => {
  it('wraps a computed value', () => {
    expect(computed(0.25)).toEqual({ ok: true, value: 0.25 });
  });

  it('carries null and a reason when a value cannot be computed', () => {
    expect(notComputable('The rate is undefined: the group has no trials (n = 0).')).toEqual({
      ok: false,
      value: null,
      reason: 'The rate is undefined: the group has no trials (n = 0).',
    });
  });

  it('never carries NaN for an undefined rate', () => {
    const outcome = wilsonInterval(0, 0, 0.95);
    expect(outcome.ok).toBe(false);
    expect(outcome.value).toBeNull();
    expect(JSON.stringify(outcome)).not.toMatch(/NaN/);
  });
});
