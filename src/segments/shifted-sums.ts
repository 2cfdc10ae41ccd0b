/**
 * The arithmetic of shifted sums, pure: a report's sums are kept as Σ(x − c) and Σ(x − c)²
 * about shifts c, rounded means of the population, so that every term is a small exact
 * integer. Totals are summed in BigInt and re-centring moves sums between shifts exactly.
 */

/** Σ(x − shift) and Σ(x − shift)² over n values; the shift is recorded beside them. */
export interface ShiftedSums {
  n: number;
  sumOfShifted: number;
  sumOfSquaredShifted: number;
}

/** Units of the value metric with a known age: the sums from which their correlation follows. */
export interface PairedShiftedSums {
  n: number;
  ageSum: number;
  ageSquaredSum: number;
  valueSum: number;
  valueSquaredSum: number;
  crossSum: number;
}

/** The shifts c (integers: cents and years) that keep the shifted sums small and exact. */
export interface Shifts {
  unitValue: number;
  convertedValue: number;
  age: number;
}

export interface PopulationTotals {
  n: number;
  conversions: number;
  valueCents: number;
  convertedValueCents: number;
  agedUnits: number;
  ageTotal: number;
}

/**
 * `exact`: integer arithmetic, identical on both engines. `floating`: the fallback when a sum
 * of squares would overflow a 64-bit integer (SQLite raises "integer overflow", PostgreSQL
 * "bigint out of range"); then the last digits may differ between engines.
 */
export type Arithmetic = 'exact' | 'floating';

export const NO_SHIFTS: Shifts = { unitValue: 0, convertedValue: 0, age: 0 };

/** Rounded means: integers near the data, so every shifted term is an exact integer. */
export function shiftsFromTotals(totals: PopulationTotals): Shifts {
  const roundedMean = (total: number, count: number) => (count === 0 ? 0 : Math.round(total / count));
  return {
    unitValue: roundedMean(totals.valueCents, totals.n),
    convertedValue: roundedMean(totals.convertedValueCents, totals.conversions),
    age: roundedMean(totals.ageTotal, totals.agedUnits),
  };
}

/** One group of units with unshifted value sums: all converted or none, all of one age (null: unknown). */
export interface UnshiftedGroup {
  n: number;
  converted: boolean;
  valueSum: number;
  age: number | null;
}

/** The population totals summed exactly (BigInt) from groups whose sums are exact integers. */
export function exactTotals(groups: Iterable<UnshiftedGroup>): PopulationTotals {
  let n = 0n;
  let conversions = 0n;
  let valueCents = 0n;
  let convertedValueCents = 0n;
  let agedUnits = 0n;
  let ageTotal = 0n;
  for (const group of groups) {
    const count = BigInt(group.n);
    const sum = BigInt(group.valueSum);
    n += count;
    valueCents += sum;
    if (group.converted) {
      conversions += count;
      convertedValueCents += sum;
    }
    if (group.age !== null) {
      agedUnits += count;
      ageTotal += count * BigInt(group.age);
    }
  }
  return {
    n: Number(n),
    conversions: Number(conversions),
    valueCents: Number(valueCents),
    convertedValueCents: Number(convertedValueCents),
    agedUnits: Number(agedUnits),
    ageTotal: Number(ageTotal),
  };
}

/**
 * Moves Σ(v − from) and Σ(v − from)² over n values to the shift `to`:
 * Σ(v − to) = Σ(v − from) − n·d and Σ(v − to)² = Σ(v − from)² − 2d·Σ(v − from) + n·d², d = to − from.
 * Exact in integer arithmetic (BigInt) when the inputs are exact integers, else in floating point.
 */
export function recentre(n: number, sum: number, squares: number, from: number, to: number, arithmetic: Arithmetic): { sum: number; squares: number } {
  if (from === to) return { sum, squares };
  if (arithmetic === 'exact' && Number.isSafeInteger(sum) && Number.isSafeInteger(squares)) {
    const d = BigInt(to - from);
    const count = BigInt(n);
    const total = BigInt(sum);
    return { sum: Number(total - count * d), squares: Number(BigInt(squares) - 2n * d * total + count * d * d) };
  }
  const d = to - from;
  return { sum: sum - n * d, squares: squares - 2 * d * sum + n * d * d };
}
