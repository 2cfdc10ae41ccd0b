/**
 * Axis scales chosen here rather than by the charting library, so a chart's scale is known
 * exactly (a test can check where a value lands), always includes the reference value, and
 * its ticks fall on round numbers at both ends.
 */

export interface NiceScale {
  domain: [number, number];
  /** distance between two ticks */
  step: number;
  /** tick values from the low end to the high end of the domain */
  ticks: number[];
}

/**
 * The smallest domain that holds every value and `include`, widened to multiples of a round
 * step (1, 2 or 5 times a power of ten) chosen to give at most about `targetTicks` intervals —
 * the "nice numbers" of Heckbert (1990, Graphics Gems) — from memory. A degenerate range
 * becomes one step either side of its value.
 * @throws Error when a value is not finite
 * @example
 * niceScale([-2.3, 7.9], 0); // { domain: [-4, 8], step: 2, ticks: [-4, -2, 0, 2, 4, 6, 8] }
 * niceScale([], 0); // { domain: [-1, 1], step: 0.5, ticks: [-1, -0.5, 0, 0.5, 1] }
 */
export function niceScale(values: readonly number[], include: number, targetTicks = 6): NiceScale {
  for (const value of values) if (!Number.isFinite(value)) throw new Error(`niceScale: ${value} is not a finite number`);
  let low = Math.min(include, ...values);
  let high = Math.max(include, ...values);
  if (low === high) {
    const magnitude = low === 0 ? 1 : 10 ** Math.floor(Math.log10(Math.abs(low)));
    low -= magnitude;
    high += magnitude;
  }
  const rough = (high - low) / targetTicks;
  const power = 10 ** Math.floor(Math.log10(rough));
  const step = [1, 2, 5, 10].map((factor) => factor * power).find((candidate) => candidate >= rough * (1 - 1e-9)) ?? 10 * power;
  // Remove floating-point dust such as 0.30000000000000004 from every tick.
  const digits = Math.max(0, -Math.floor(Math.log10(step)) + 1);
  const clean = (value: number) => Number(value.toFixed(digits)) || 0;
  // The tolerance keeps a value that is a whole number of steps (up to rounding) from adding a step.
  const firstTick = Math.floor(low / step + 1e-9);
  const lastTick = Math.ceil(high / step - 1e-9);
  const ticks: number[] = [];
  for (let index = firstTick; index <= lastTick; index += 1) ticks.push(clean(index * step));
  return { domain: [ticks[0] as number, ticks[ticks.length - 1] as number], step: clean(step), ticks };
}
