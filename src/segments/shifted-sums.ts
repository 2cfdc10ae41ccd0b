/**
 * The arithmetic of a report's sums, pure. Money is kept as exact integer sums of cents
 * (BigInt: Σv and Σv² of a million amounts at the per-row cap are far beyond 2^63). Ages are
 * kept as Σ(x − c) and Σ(x − c)² about a shift c, a rounded mean of the population, so that
 * every term is a small exact integer. Totals are summed in BigInt.
 */

/** Σv and Σv² of n amounts in cents, exactly. */
export interface MoneySums {
  n: number;
  sum: bigint;
  squares: bigint;
}

export const NO_MONEY: MoneySums = { n: 0, sum: 0n, squares: 0n };

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
 * `exact`: integer arithmetic, identical on both engines; money sums are always exact now.
 * `floating`: what earlier snapshots say when a sum of squares overflowed a 64-bit integer and
 * was summed in floating point instead.
 */
export type Arithmetic = 'exact' | 'floating';

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
  valueSum: bigint;
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
    const sum = group.valueSum;
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
