/** Reading the statistics core's outcomes in tests: a value that must be there, or a stated reason why not. */
import { expect } from 'vitest';
import type { Outcome } from '../../src/stats/index.js';

/** The outcome's value; throws with the core's reason when there is none. */
export function valueOf<T>(outcome: Outcome<T>): T {
  if (!outcome.ok) throw new Error(`expected a value, got: ${outcome.reason}`);
  return outcome.value;
}

/** Checks that the outcome has no value and that its reason matches. */
export function expectUndefined(outcome: Outcome<unknown>, reason: RegExp): void {
  expect(outcome.ok).toBe(false);
  expect(outcome.value).toBeNull();
  expect(outcome.ok ? '' : outcome.reason).toMatch(reason);
}
