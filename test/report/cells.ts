/** Cell aggregates built in code from unit lists, as the database would return them. */
import type { CellAggregate, Shifts } from '../../src/segments/index.js';

export interface TestUnit {
  labels: string[];
  converted: 0 | 1;
  cents: number;
  age: number | null;
}

export const ZERO_SHIFTS: Shifts = { unitValue: 0, convertedValue: 0, age: 0 };

export function cellsFromUnits(units: readonly TestUnit[], basis: 'per_unit' | 'per_conversion' = 'per_unit'): CellAggregate[] {
  const groups = new Map<string, TestUnit[]>();
  for (const unit of units) {
    const key = JSON.stringify(unit.labels);
    groups.set(key, [...(groups.get(key) ?? []), unit]);
  }
  const sum = (values: number[]) => values.reduce((total, value) => total + value, 0);
  return [...groups.values()].map((members) => {
    const converted = members.filter((unit) => unit.converted === 1);
    const aged = members.filter((unit) => unit.age !== null);
    const paired = basis === 'per_unit' ? aged : aged.filter((unit) => unit.converted === 1);
    return {
      labels: members[0]!.labels,
      n: members.length,
      conversions: converted.length,
      unitValue: { n: members.length, sum: BigInt(sum(members.map((unit) => unit.cents))), squares: BigInt(sum(members.map((unit) => unit.cents ** 2))) },
      convertedValue: { n: converted.length, sum: BigInt(sum(converted.map((unit) => unit.cents))), squares: BigInt(sum(converted.map((unit) => unit.cents ** 2))) },
      age: { n: aged.length, sumOfShifted: sum(aged.map((unit) => unit.age as number)), sumOfSquaredShifted: sum(aged.map((unit) => (unit.age as number) ** 2)) },
      ageValue: {
        n: paired.length,
        ageSum: sum(paired.map((unit) => unit.age as number)),
        ageSquaredSum: sum(paired.map((unit) => (unit.age as number) ** 2)),
        valueSum: sum(paired.map((unit) => unit.cents)),
        valueSquaredSum: sum(paired.map((unit) => unit.cents ** 2)),
        crossSum: sum(paired.map((unit) => (unit.age as number) * unit.cents)),
      },
    };
  });
}

/** `n` units with `conversions` converted (revenue `cents` each) in the cell `values`. */
export function block(values: string[], n: number, conversions: number, cents = 1000, age: number | null = 40): TestUnit[] {
  return Array.from({ length: n }, (_unused, index) => ({ labels: values, converted: index < conversions ? 1 : 0, cents: index < conversions ? cents + (index % 5) * 10 : 0, age: age === null ? null : age + (index % 20) }));
}

/** The grouped counts the distribution queries would return for these units. */
export function countsFromUnits(units: readonly TestUnit[], basis: 'per_unit' | 'per_conversion' = 'per_unit') {
  const ages = new Map<string, { labels: string[]; age: number | null; count: number }>();
  const values = new Map<string, { labels: string[]; valueCents: number; count: number }>();
  for (const unit of units) {
    const ageKey = JSON.stringify([unit.labels, unit.age]);
    const ageEntry = ages.get(ageKey) ?? { labels: unit.labels, age: unit.age, count: 0 };
    ageEntry.count += 1;
    ages.set(ageKey, ageEntry);
    if (basis === 'per_conversion' && unit.converted === 0) continue;
    const valueKey = JSON.stringify([unit.labels, unit.cents]);
    const valueEntry = values.get(valueKey) ?? { labels: unit.labels, valueCents: unit.cents, count: 0 };
    valueEntry.count += 1;
    values.set(valueKey, valueEntry);
  }
  return { ageCounts: [...ages.values()], valueCounts: [...values.values()] };
}
