import { describe, expect, test } from 'vitest';
import type { CellAggregate } from '../../src/segments/index.js';
import { cellStats, rollUp, subtractGroup } from '../../src/segments/rollup.js';
import { summarize } from '../../src/stats/index.js';

interface Unit {
  region: string;
  channel: string;
  converted: 0 | 1;
  cents: number;
  age: number;
}

const UNITS: Unit[] = [
  { region: 'N', channel: 'web', converted: 1, cents: 1050, age: 30 },
  { region: 'N', channel: 'web', converted: 0, cents: 0, age: 41 },
  { region: 'N', channel: 'shop', converted: 1, cents: 2599, age: 55 },
  { region: 'S', channel: 'web', converted: 1, cents: 99, age: 23 },
  { region: 'S', channel: 'shop', converted: 0, cents: 0, age: 67 },
  { region: 'S', channel: 'shop', converted: 1, cents: 100000, age: 38 },
  { region: 'S', channel: 'shop', converted: 0, cents: 0, age: 49 },
];
const SHIFTS = { unitValue: 1000, convertedValue: 20000, age: 40 };

/** The finest cells as the database would return them, summed here from the units. */
function cellsOf(units: Unit[]): Array<{ labels: string[]; stats: ReturnType<typeof cellStats> }> {
  const groups = new Map<string, Unit[]>();
  for (const unit of units) groups.set(`${unit.region}|${unit.channel}`, [...(groups.get(`${unit.region}|${unit.channel}`) ?? []), unit]);
  return [...groups.entries()].map(([key, members]) => {
    const converted = members.filter((unit) => unit.converted === 1);
    const sum = (values: number[]) => values.reduce((total, value) => total + value, 0);
    const cell: CellAggregate = {
      labels: key.split('|'),
      n: members.length,
      conversions: converted.length,
      unitValue: { n: members.length, sum: BigInt(sum(members.map((unit) => unit.cents))), squares: BigInt(sum(members.map((unit) => unit.cents ** 2))) },
      convertedValue: { n: converted.length, sum: BigInt(sum(converted.map((unit) => unit.cents))), squares: BigInt(sum(converted.map((unit) => unit.cents ** 2))) },
      age: { n: members.length, sumOfShifted: sum(members.map((unit) => unit.age - 40)), sumOfSquaredShifted: sum(members.map((unit) => (unit.age - 40) ** 2)) },
      ageValue: { n: 0, ageSum: 0, ageSquaredSum: 0, valueSum: 0, valueSquaredSum: 0, crossSum: 0 },
    };
    return { labels: cell.labels, stats: cellStats(cell, SHIFTS) };
  });
}

describe('rolling cells up to segments', () => {
  const cells = cellsOf(UNITS);
  const { total, segments } = rollUp(cells, ['region', 'channel'], [['region', 'channel']]);

  test('one-way segments come first in dimension order, then the cross cells', () => {
    expect(segments.map((segment) => `${segment.dimensions.join('×')}:${segment.labels.join('/')}`)).toEqual([
      'region:N',
      'region:S',
      'channel:shop',
      'channel:web',
      'region×channel:N/shop',
      'region×channel:N/web',
      'region×channel:S/shop',
      'region×channel:S/web',
    ]);
  });

  test('merged summaries equal the summary of the raw values, in major units', () => {
    const south = segments.find((segment) => segment.dimensions.length === 1 && segment.labels[0] === 'S');
    const southValues = UNITS.filter((unit) => unit.region === 'S').map((unit) => unit.cents / 100);
    const direct = summarize(southValues);
    expect(south?.stats.n).toBe(4);
    expect(south?.stats.conversions).toBe(2);
    expect(south?.stats.unitValue.mean).toBeCloseTo(direct.mean, 12);
    expect(south?.stats.unitValue.sumSquaredDeviations).toBeCloseTo(direct.sumSquaredDeviations, 8);
    const convertedDirect = summarize(UNITS.filter((unit) => unit.region === 'S' && unit.converted).map((unit) => unit.cents / 100));
    expect(south?.stats.convertedValue.mean).toBeCloseTo(convertedDirect.mean, 12);
    expect(south?.stats.convertedValue.sumSquaredDeviations).toBeCloseTo(convertedDirect.sumSquaredDeviations, 8);
  });

  test('the rest of a segment is the total minus the segment, equal to the summary of everyone else', () => {
    const web = segments.find((segment) => segment.dimensions[0] === 'channel' && segment.labels[0] === 'web');
    const rest = subtractGroup(total, web!.stats);
    const others = UNITS.filter((unit) => unit.channel !== 'web');
    const direct = summarize(others.map((unit) => unit.cents / 100));
    expect(rest.n).toBe(others.length);
    expect(rest.conversions).toBe(others.filter((unit) => unit.converted).length);
    expect(rest.unitValue.mean).toBeCloseTo(direct.mean, 10);
    expect(rest.unitValue.sumSquaredDeviations).toBeCloseTo(direct.sumSquaredDeviations, 6);
    expect(rest.age.mean).toBeCloseTo(others.reduce((sum, unit) => sum + unit.age, 0) / others.length, 12);
  });

  test('the total holds every unit', () => {
    expect(total.n).toBe(UNITS.length);
    expect(total.unitValue.mean).toBeCloseTo(UNITS.reduce((sum, unit) => sum + unit.cents, 0) / 100 / UNITS.length, 12);
  });

  test('a cross naming an unknown dimension is a programming error', () => {
    expect(() => rollUp(cells, ['region', 'channel'], [['region', 'age_band']])).toThrow(/does not have/);
  });

  test('money at the per-row cap many times over: sums stay exact, and a rest of zeros has mean and spread exactly 0', () => {
    // 93,000 units at 99,999,999,999,999 cents (the per-row cap) in one cell, 1,000 units worth 0 in another.
    const cap = 99_999_999_999_999n;
    const big = 93_000;
    const cell = (labels: string[], n: number, cents: bigint): CellAggregate => ({
      labels,
      n,
      conversions: cents === 0n ? 0 : n,
      unitValue: { n, sum: BigInt(n) * cents, squares: BigInt(n) * cents * cents },
      convertedValue: cents === 0n ? { n: 0, sum: 0n, squares: 0n } : { n, sum: BigInt(n) * cents, squares: BigInt(n) * cents * cents },
      age: { n: 0, sumOfShifted: 0, sumOfSquaredShifted: 0 },
      ageValue: { n: 0, ageSum: 0, ageSquaredSum: 0, valueSum: 0, valueSquaredSum: 0, crossSum: 0 },
    });
    const atCap = { labels: ['Fennwick'], stats: cellStats(cell(['Fennwick'], big, cap), SHIFTS) };
    const zeros = { labels: ['Saltmere'], stats: cellStats(cell(['Saltmere'], 1000, 0n), SHIFTS) };
    const { total, segments } = rollUp([atCap, zeros], ['region'], []);
    // Σv = 93,000 × 99,999,999,999,999 = 9,299,999,999,999,907,000 cents, beyond 2^63 − 1 (by hand).
    expect(total.unitValueCents.sum).toBe(9_299_999_999_999_907_000n);
    const rest = subtractGroup(total, segments.find((segment) => segment.labels[0] === 'Fennwick')!.stats);
    expect(rest.unitValue).toEqual({ n: 1000, mean: 0, sumSquaredDeviations: 0 });
    const capped = subtractGroup(total, zeros.stats).unitValue;
    // All 93,000 values equal: mean 999,999,999,999.99 to double precision, spread exactly 0.
    expect(capped.mean).toBe(999_999_999_999.99);
    expect(capped.sumSquaredDeviations).toBe(0);
  });
});
