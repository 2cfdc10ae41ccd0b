/**
 * The shared result shape of the statistics core. A quantity that the data leave undefined
 * (a rate with no trials, a variance from one value, a log ratio with zero successes) is
 * returned as `{ ok: false, value: null, reason }` so the caller can show the reason in
 * plain words; it is never NaN, never 0 standing in for "missing", and never an exception.
 */

/** A computed value, or `null` with the human-readable reason it could not be computed. */
export type Outcome<T> =
  | { readonly ok: true; readonly value: T }
  | { readonly ok: false; readonly value: null; readonly reason: string };

/** A two-sided confidence interval, `low <= high`. */
export interface Interval {
  readonly low: number;
  readonly high: number;
}

/** A point estimate together with its confidence interval. */
export interface EstimateWithInterval {
  readonly estimate: number;
  readonly interval: Interval;
}

/**
 * Wraps a value that was computed. Common practice (a tagged union), no published source.
 * @example
 * computed(0.25); // { ok: true, value: 0.25 }
 */
export function computed<T>(value: T): Outcome<T> {
  return { ok: true, value };
}

/**
 * Reports that a quantity is undefined for these data, with the reason in plain words.
 * Common practice (a tagged union), no published source.
 * @example
 * notComputable('The rate is undefined: the group has no trials (n = 0).');
 * // { ok: false, value: null, reason: 'The rate is undefined: …' }
 */
export function notComputable(reason: string): Outcome<never> {
  return { ok: false, value: null, reason };
}
