/**
 * Dimensions a report can split the population by, and the age bands. The same band rule is
 * written twice: once as SQL for the aggregation and once in TypeScript (`ageBandOf`) so that
 * tests and labels agree with the database.
 */

/** Dimensions every customer has; any other name is an extra customer attribute. */
export const BUILT_IN_DIMENSIONS = ['age_band', 'region', 'channel', 'customer_type'] as const;

/** The value of a dimension that a unit lacks: no (plausible) age, or no such attribute. */
export const UNKNOWN = 'unknown';

/**
 * Ages outside 18–120 are treated as implausible and counted in the `unknown` band, never
 * dropped: younger people are not expected among customers, and older ages are far likelier
 * typing errors than customers. Common practice; 120 matches the ingest's own limit.
 */
export const MIN_PLAUSIBLE_AGE = 18;
export const MAX_PLAUSIBLE_AGE = 120;

const ATTRIBUTE_NAME = /^[a-z][a-z0-9_]{0,62}$/;

/** Whether `name` has the form of an extra customer attribute (as the customer upload stores them). */
export function isAttributeName(name: string): boolean {
  return ATTRIBUTE_NAME.test(name) && !(BUILT_IN_DIMENSIONS as readonly string[]).includes(name);
}

/** Whether `name` is a dimension every customer has (a column of the customers table, or the age band). */
export function isBuiltInDimension(name: string): name is (typeof BUILT_IN_DIMENSIONS)[number] {
  return (BUILT_IN_DIMENSIONS as readonly string[]).includes(name);
}

export interface AgeBand {
  label: string;
  /** inclusive */
  low: number;
  /** inclusive; `MAX_PLAUSIBLE_AGE` for the open top band */
  high: number;
}

/**
 * The bands for lower edges `edges` (increasing, within 18–120): `18-24`, `25-34`, … `65+`.
 * When the first edge is above 18, the plausible ages below it get their own band (`18-19`
 * for a first edge of 20) rather than being hidden in `unknown`. Labels use a plain hyphen
 * and start with a digit, so a spreadsheet reads them as text and never as a date or formula.
 * @example
 * ageBands([18, 25, 65]).map((band) => band.label); // ['18-24', '25-64', '65+']
 */
export function ageBands(edges: readonly number[]): AgeBand[] {
  const lows = (edges[0] ?? MIN_PLAUSIBLE_AGE) > MIN_PLAUSIBLE_AGE ? [MIN_PLAUSIBLE_AGE, ...edges] : [...edges];
  return lows.map((low, index) => {
    const next = lows[index + 1];
    if (next === undefined) return { label: low === MAX_PLAUSIBLE_AGE ? `${low}` : `${low}+`, low, high: MAX_PLAUSIBLE_AGE };
    return { label: next - 1 === low ? `${low}` : `${low}-${next - 1}`, low, high: next - 1 };
  });
}

/**
 * The band label of one age (`unknown` for a missing or implausible age); the TypeScript twin
 * of the SQL the aggregation runs.
 * @example
 * ageBandOf(30, [18, 25, 35]); // '25-34'
 * ageBandOf(16, [18, 25, 35]); // 'unknown'
 */
export function ageBandOf(age: number | null, edges: readonly number[]): string {
  if (age === null || age < MIN_PLAUSIBLE_AGE || age > MAX_PLAUSIBLE_AGE) return UNKNOWN;
  const band = ageBands(edges).find((candidate) => age >= candidate.low && age <= candidate.high);
  return band?.label ?? UNKNOWN;
}

/** Every label a dimension's values are ordered by when the dimension has a natural order (age). */
export function ageBandOrder(edges: readonly number[]): string[] {
  return [...ageBands(edges).map((band) => band.label), UNKNOWN];
}
