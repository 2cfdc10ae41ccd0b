/**
 * The binned distributions a snapshot carries for its charts: the histograms of age and value
 * and the age × value grid, read by SQL on both engines from a small invented dataset whose
 * bins are worked out by hand below.
 */
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import type { Snapshot } from '../../src/report/shapes/index.js';
import { ageValueGridAxes, ageValueGridCells, populationHistograms } from '../../src/report/snapshot/index.js';
import { distributionCharts, distributionFallback } from '../../src/view/distributions.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { TEST_DIALECTS } from '../support/database.js';
import { createReport, refresh, uploadRows, ARITHMETIC_TEST_SETTINGS } from '../support/report-data.js';

/**
 * Twelve customers of known age (born 15 January, contacted 1 March 2026, so the age is
 * 2026 − birth year) and one without a birth date; revenue in major units, 0 when not converted.
 */
const PEOPLE: Array<{ age: number | null; revenue: number }> = [
  { age: 20, revenue: 0 },
  { age: 22, revenue: 10 },
  { age: 25, revenue: 0 },
  { age: 30, revenue: 25 },
  { age: 31, revenue: 0 },
  { age: 35, revenue: 40 },
  { age: 40, revenue: 0 },
  { age: 44, revenue: 55 },
  { age: 50, revenue: 0 },
  { age: 58, revenue: 70 },
  { age: 63, revenue: 0 },
  { age: 70, revenue: 100 },
  { age: null, revenue: 20 },
];

const CUSTOMERS = PEOPLE.map((person, index) => ({
  customer_id: `d${index}`,
  birth_date: person.age === null ? '' : `${2026 - person.age}-01-15`,
  region: index % 2 === 0 ? 'Northfield' : 'Southmere',
  channel: 'web',
  customer_type: 'individual',
  loyalty_tier: 'silver',
}));

const CONTACTS = PEOPLE.map((person, index) => ({
  customer_id: `d${index}`,
  contacted_at: '2026-03-01',
  converted: person.revenue > 0 ? 1 : 0,
  revenue: person.revenue.toFixed(2),
}));

/** Sales in and around a window, for a report whose units are customers and whose values are sums in SQL. */
const SALES = PEOPLE.flatMap((person, index) =>
  index % 3 === 2
    ? []
    : [
        { sale_id: `s${index}a`, customer_id: `d${index}`, sold_at: '2026-04-10', amount: (5 + index * 7.25).toFixed(2) },
        { sale_id: `s${index}b`, customer_id: `d${index}`, sold_at: index % 2 === 0 ? '2026-04-20' : '2026-05-20', amount: (1 + index * 3.1).toFixed(2) },
      ],
);

/** Independent count of values per bin, for bins given by their edges: [low, high), the last closed. */
function countByEdges(values: readonly number[], edges: readonly number[]): number[] {
  const counts = new Array<number>(edges.length - 1).fill(0);
  for (const value of values) {
    const last = edges.length - 2;
    const index = value >= (edges[last] as number) ? last : edges.findIndex((low, position) => position < last && value >= low && value < (edges[position + 1] as number));
    counts[index] = (counts[index] as number) + 1;
  }
  return counts;
}

function binsOf(snapshot: Snapshot, key: 'age_histogram' | 'value_histogram'): Array<[number, number, number | null]> {
  const histogram = snapshot.population[key];
  if (!histogram) throw new Error(`${key} is missing`);
  return histogram.bins.map((bin) => [bin.low, bin.high, bin.count]);
}

function gridOf(snapshot: Snapshot): Array<[number, number, number, number, number]> {
  const grid = snapshot.population.age_value_grid;
  if (!grid) throw new Error('age_value_grid is missing');
  return grid.map((cell) => [cell.age_low, cell.age_high, cell.value_low, cell.value_high, cell.count]);
}

const snapshots = new Map<string, { perUnit: Snapshot; perConversion: Snapshot; sales: Snapshot }>();

describe.each(TEST_DIALECTS)('distribution data on %s', (dialect) => {
  let context: TestApp;
  beforeAll(async () => {
    context = await createTestApp(dialect, ARITHMETIC_TEST_SETTINGS);
    await uploadRows(context.app, '/v1/customers', CUSTOMERS);
    await uploadRows(context.app, '/v1/campaigns/spring/contacts', CONTACTS);
    await uploadRows(context.app, '/v1/sales', SALES);
    const perUnit = await createReport(context.app, { name: 'Spread per unit', source: { campaign_ids: ['spring'] }, dimensions: ['region'], min_n: 2 });
    const perConversion = await createReport(context.app, { name: 'Spread per conversion', source: { campaign_ids: ['spring'] }, dimensions: ['region'], min_n: 2, value_basis: 'per_conversion' });
    const sales = await createReport(context.app, { name: 'Spread of sales', source: { sales_from: '2026-04-01', sales_to: '2026-04-30' }, dimensions: ['region'], min_n: 2 });
    snapshots.set(dialect, {
      perUnit: await refresh(context.app, perUnit.report_id),
      perConversion: await refresh(context.app, perConversion.report_id),
      sales: await refresh(context.app, sales.report_id),
    });
  }, 60_000);
  afterAll(async () => {
    await context.close();
  });

  test('the age histogram has the Sturges bins of the twelve known ages, an age on an inner edge in the bin above', () => {
    const { perUnit } = snapshots.get(dialect)!;
    // n = 12: k = ⌈log₂ 12⌉ + 1 = 5 bins (Sturges 1926) over 20…70, width 10; ages 30, 40 and 50 sit on edges.
    expect(perUnit.population.age_histogram).toMatchObject({ rule: 'sturges', bin_width: 10, note: null });
    expect(binsOf(perUnit, 'age_histogram')).toEqual([
      [20, 30, 3],
      [30, 40, 3],
      [40, 50, 2],
      [50, 60, 2],
      [60, 70, 2],
    ]);
    const ages = PEOPLE.flatMap((person) => (person.age === null ? [] : [person.age]));
    expect(binsOf(perUnit, 'age_histogram').map(([, , count]) => count)).toEqual(countByEdges(ages, [20, 30, 40, 50, 60, 70]));
  });

  test('the value histogram counts every unit, the one without an age too, in major currency units', () => {
    const { perUnit } = snapshots.get(dialect)!;
    // n = 13: k = ⌈log₂ 13⌉ + 1 = 5 bins over 0…100, width 20; the six zeros and 10 in the first, 100 in the closed last bin.
    expect(perUnit.population.value_histogram).toMatchObject({ rule: 'sturges', bin_width: 20, note: null });
    expect(binsOf(perUnit, 'value_histogram')).toEqual([
      [0, 20, 7],
      [20, 40, 2],
      [40, 60, 2],
      [60, 80, 1],
      [80, 100, 1],
    ]);
    expect(binsOf(perUnit, 'value_histogram').map(([, , count]) => count)).toEqual(countByEdges(PEOPLE.map((person) => person.revenue), [0, 20, 40, 60, 80, 100]));
  });

  test('the grid places each unit with a known age in its age and value bins, and its counts add up to those units', () => {
    const { perUnit } = snapshots.get(dialect)!;
    // Axes as the histograms: ages 20…70 and values 0…100 in five bins each.
    expect(gridOf(perUnit)).toEqual([
      [20, 30, 0, 20, 3],
      [30, 40, 0, 20, 1],
      [30, 40, 20, 40, 1],
      [30, 40, 40, 60, 1],
      [40, 50, 0, 20, 1],
      [40, 50, 40, 60, 1],
      [50, 60, 0, 20, 1],
      [50, 60, 60, 80, 1],
      [60, 70, 0, 20, 1],
      [60, 70, 80, 100, 1],
    ]);
    const total = gridOf(perUnit).reduce((sum, [, , , , count]) => sum + count, 0);
    expect(total).toBe(perUnit.population.n - perUnit.data_quality.unknown_age);
    expect(total).toBe(12);
  });

  test('per conversion, the value histogram and grid hold the converted units only, a value on an inner edge in the bin above', () => {
    const { perConversion } = snapshots.get(dialect)!;
    // n = 7: k = ⌈log₂ 7⌉ + 1 = 4 bins over 10…100, width 22.5: edges 10, 32.5, 55, 77.5, 100; 55 sits on an edge.
    expect(perConversion.population.value_histogram?.bin_width).toBe(22.5);
    expect(binsOf(perConversion, 'value_histogram')).toEqual([
      [10, 32.5, 3],
      [32.5, 55, 1],
      [55, 77.5, 2],
      [77.5, 100, 1],
    ]);
    // The age axis is the whole population's (20…70, 5 bins); six converted units have an age.
    expect(gridOf(perConversion)).toEqual([
      [20, 30, 10, 32.5, 1],
      [30, 40, 10, 32.5, 1],
      [30, 40, 32.5, 55, 1],
      [40, 50, 55, 77.5, 1],
      [50, 60, 55, 77.5, 1],
      [60, 70, 77.5, 100, 1],
    ]);
  });

  test('the report page draws both histograms and the scatter from them instead of the table', async () => {
    const { perUnit } = snapshots.get(dialect)!;
    const figures = await distributionCharts(perUnit);
    expect(figures.map((figure) => figure.id)).toEqual(['age-histogram', 'value-histogram', 'scatter-age-value']);
    expect(figures[0]?.data.rows).toHaveLength(5);
    expect(figures[2]?.data.rows).toHaveLength(10);
    expect(distributionFallback(perUnit)).toBe('');
  });

  test('a sales report, whose values are sums in SQL, has a grid that adds up to its customers with a known age', () => {
    const { sales } = snapshots.get(dialect)!;
    const valueTotal = binsOf(sales, 'value_histogram').reduce((sum, [, , count]) => sum + (count ?? 0), 0);
    expect(valueTotal).toBe(sales.population.n);
    const gridTotal = gridOf(sales).reduce((sum, [, , , , count]) => sum + count, 0);
    expect(gridTotal).toBe(sales.population.n - sales.data_quality.unknown_age);
    expect(gridOf(sales).length).toBeGreaterThan(1);
  });
});

describe('SQLite and PostgreSQL', () => {
  test.skipIf(!TEST_DIALECTS.includes('postgres'))('give the same histograms and grid for the same data', () => {
    const pick = (entry: { perUnit: Snapshot; perConversion: Snapshot; sales: Snapshot } | undefined) =>
      [entry?.perUnit, entry?.perConversion, entry?.sales].map((snapshot) => ({
        age: snapshot?.population.age_histogram,
        value: snapshot?.population.value_histogram,
        grid: snapshot?.population.age_value_grid,
      }));
    expect(pick(snapshots.get('sqlite'))[2]?.grid).toBeTruthy();
    expect(pick(snapshots.get('postgres'))).toEqual(pick(snapshots.get('sqlite')));
  });
});

describe('histograms and grid in code', () => {
  test('no units give no histograms and no grid axes', () => {
    expect(populationHistograms([], [])).toEqual({ age: null, value: null });
    expect(ageValueGridAxes([], [{ valueCents: 100, count: 2 }])).toBeNull();
  });

  test('value counts that were not read give no value histogram', () => {
    expect(populationHistograms([{ labels: ['a'], age: 30, count: 4 }], null).value).toBeNull();
  });

  test('the grid has at most twenty bins on an axis even when the histogram has more', () => {
    // 2^20 units: Sturges asks for ⌈log₂ 2^20⌉ + 1 = 21 bins.
    const ages = Array.from({ length: 64 }, (_unused, index) => ({ labels: ['a'], age: 18 + index, count: 16_384 }));
    const axes = ageValueGridAxes(ages, [
      { valueCents: 0, count: 1_048_575 },
      { valueCents: 123_456, count: 1 },
    ]);
    expect(populationHistograms(ages, null).age?.bins).toHaveLength(21);
    expect(axes).toEqual({ age: { low: 18, high: 81, bins: 20 }, valueCents: { low: 0, high: 123_456, bins: 20 } });
  });

  test('a grid cell outside its axes is refused', () => {
    expect(() => ageValueGridCells({ age: { low: 20, high: 40, bins: 2 }, valueCents: { low: 0, high: 100, bins: 1 } }, [{ ageBin: 2, valueBin: 0, count: 1 }])).toThrow(/outside/);
  });
});
