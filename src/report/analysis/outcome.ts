import type { Outcome } from '../../stats/index.js';

/** The value of an outcome, or null when the statistics core could not compute it. */
export function valueOrNull<T>(outcome: Outcome<T>): T | null {
  return outcome.ok ? outcome.value : null;
}
