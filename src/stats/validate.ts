/**
 * Argument checks shared by the statistics modules. Each throws `StatsInputError` with a
 * message that names the argument, so a bad call fails at the boundary rather than as a NaN
 * deep inside a formula. Not part of the public API.
 */
import { StatsInputError } from './errors.js';

function describe(value: unknown): string {
  return typeof value === 'number' ? String(value) : `${typeof value} ${JSON.stringify(value)}`;
}

/** Throws unless `value` is a finite number. Example: `requireFiniteNumber('shift', 2)` passes. */
export function requireFiniteNumber(name: string, value: number): void {
  if (typeof value !== 'number' || !Number.isFinite(value)) {
    throw new StatsInputError(name, `${name} must be a finite number, got ${describe(value)}`);
  }
}

/** Throws unless `value` is a non-negative safe integer. Example: `requireCount('trials', 10)` passes. */
export function requireCount(name: string, value: number): void {
  if (typeof value !== 'number' || !Number.isSafeInteger(value) || value < 0) {
    throw new StatsInputError(name, `${name} must be a non-negative integer, got ${describe(value)}`);
  }
}

/** Throws unless both are counts and successes ≤ trials. Example: `requireSuccessesWithinTrials('x1', 3, 'n1', 10)` passes. */
export function requireSuccessesWithinTrials(
  successesName: string,
  successes: number,
  trialsName: string,
  trials: number,
): void {
  requireCount(successesName, successes);
  requireCount(trialsName, trials);
  if (successes > trials) {
    throw new StatsInputError(
      successesName,
      `${successesName} (${successes}) must not exceed ${trialsName} (${trials})`,
    );
  }
}

/**
 * Throws unless `value` is strictly between 0 and 1: a confidence level, a significance level,
 * a power. Example: `requireOpenUnitInterval('confidence', 0.95)` passes, `1` throws.
 */
export function requireOpenUnitInterval(name: string, value: number): void {
  if (typeof value !== 'number' || !Number.isFinite(value) || value <= 0 || value >= 1) {
    throw new StatsInputError(name, `${name} must be strictly between 0 and 1, got ${describe(value)}`);
  }
}

/** Throws unless `value` is in [0, 1]: a proportion or p-value. Example: `requireClosedUnitInterval('p1', 0)` passes. */
export function requireClosedUnitInterval(name: string, value: number): void {
  if (typeof value !== 'number' || !Number.isFinite(value) || value < 0 || value > 1) {
    throw new StatsInputError(name, `${name} must be between 0 and 1 inclusive, got ${describe(value)}`);
  }
}

/** Throws, naming the position, unless every entry is a finite number. Example: `requireFiniteValues('values', [1, NaN])` throws about `values[1]`. */
export function requireFiniteValues(name: string, values: ReadonlyArray<number>): void {
  if (!Array.isArray(values)) {
    throw new StatsInputError(name, `${name} must be an array of finite numbers`);
  }
  for (let index = 0; index < values.length; index += 1) {
    const value = values[index];
    if (typeof value !== 'number' || !Number.isFinite(value)) {
      throw new StatsInputError(
        name,
        `${name}[${index}] must be a finite number, got ${describe(value)}`,
      );
    }
  }
}

/** Throws unless both lists have the same length. Example: `requireSameLength('xs', [1], 'ys', [2])` passes. */
export function requireSameLength(
  firstName: string,
  first: ReadonlyArray<number>,
  secondName: string,
  second: ReadonlyArray<number>,
): void {
  if (first.length !== second.length) {
    throw new StatsInputError(
      secondName,
      `${firstName} and ${secondName} must have the same length, got ${first.length} and ${second.length}`,
    );
  }
}
