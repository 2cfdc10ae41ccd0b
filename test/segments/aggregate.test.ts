import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { ageInYears } from '../../src/ingest/fields.js';
import {
  ageBandOf,
  binIndex,
  cellAggregates,
  cellStats,
  gridCountsOf,
  populationTotals,
  rollUp,
  shiftsAndCellAggregates,
  shiftsFromTotals,
  sourceQuality,
  valueCountsByAgeBin,
  valueCountsOf,
  valueDistribution,
  type AggregationRequest,
  type GridAxis,
  type GroupStats,
  type Shifts,
} from '../../src/segments/index.js';
import { correlationFromSums } from '../../src/report/snapshot/profiles.js';
import type { Correlation } from '../../src/report/shapes/index.js';
import { mean, pearsonCorrelation, summaryMean, summaryVariance, variance, type Outcome, type Summary } from '../../src/stats/index.js';
import { TEST_DIALECTS, createTestDatabase, type TestDatabase } from '../support/database.js';

const EDGES = [18, 25, 35, 45, 55, 65];
const NOW = '2026-06-01T00:00:00.000Z';

interface Unit {
  customer_id: string;
  birth_date: string | null;
  region: string;
  channel: string;
  tier: string | null;
  age_at_contact: number | null;
  converted: 0 | 1;
  revenue_cents: number;
}

// Ages chosen on and around every band edge and the plausibility limits; revenue in cents.
const UNITS: Unit[] = [
  { customer_id: 'a', birth_date: '2000-01-01', region: 'North', channel: 'web', tier: 'gold', age_at_contact: 17, converted: 0, revenue_cents: 0 },
  { customer_id: 'b', birth_date: '2000-01-01', region: 'North', channel: 'web', tier: 'gold', age_at_contact: 18, converted: 1, revenue_cents: 1250 },
  { customer_id: 'c', birth_date: '2000-01-01', region: 'North', channel: 'store', tier: null, age_at_contact: 24, converted: 1, revenue_cents: 999 },
  { customer_id: 'd', birth_date: '2000-01-01', region: 'South', channel: 'store', tier: 'silver', age_at_contact: 25, converted: 0, revenue_cents: 0 },
  { customer_id: 'e', birth_date: '2000-01-01', region: 'South', channel: 'web', tier: 'gold', age_at_contact: 64, converted: 1, revenue_cents: 40000 },
  { customer_id: 'f', birth_date: '2000-01-01', region: 'South', channel: 'web', tier: null, age_at_contact: 65, converted: 0, revenue_cents: 0 },
  { customer_id: 'g', birth_date: '2000-01-01', region: 'North', channel: 'web', tier: 'silver', age_at_contact: 120, converted: 1, revenue_cents: 1 },
  { customer_id: 'h', birth_date: '2000-01-01', region: 'North', channel: 'store', tier: 'gold', age_at_contact: 121, converted: 0, revenue_cents: 0 },
  { customer_id: 'i', birth_date: null, region: 'South', channel: 'store', tier: 'gold', age_at_contact: null, converted: 1, revenue_cents: 2500 },
  { customer_id: 'j', birth_date: '2000-01-01', region: 'South', channel: 'web', tier: 'silver', age_at_contact: 45, converted: 1, revenue_cents: 2500 },
];

async function seedCampaign(database: TestDatabase, units: Unit[], campaignId = 'spring'): Promise<void> {
  const db = database.handle.db;
  await db
    .insertInto('customers')
    .values(units.map((unit) => ({ customer_id: unit.customer_id, birth_date: unit.birth_date, region: unit.region, channel: unit.channel, customer_type: 'individual' as const, created_at: NOW, updated_at: NOW, last_ingest_id: null })))
    .execute();
  const attributes = units.filter((unit) => unit.tier !== null).map((unit) => ({ customer_id: unit.customer_id, name: 'loyalty_tier', value: unit.tier as string }));
  await db.insertInto('customer_attributes').values(attributes).execute();
  await db.insertInto('campaigns').values({ campaign_id: campaignId, created_at: NOW }).execute();
  await db
    .insertInto('campaign_contacts')
    .values(units.map((unit) => ({ campaign_id: campaignId, customer_id: unit.customer_id, contacted_at: '2026-03-01', converted: unit.converted, revenue_cents: unit.revenue_cents, age_at_contact: unit.age_at_contact, region: unit.region, channel: unit.channel, customer_type: 'individual' as const, holdout: 0, last_ingest_id: null })))
    .execute();
}

function plausible(age: number | null): number | null {
  return age === null || age < 18 || age > 120 ? null : age;
}

function valueOf(outcome: Outcome<number>): number {
  if (!outcome.ok) throw new Error(outcome.reason);
  return outcome.value;
}

/**
 * Equal within a relative 1e-12. One cent or one year more in any sum behind a figure moves
 * the figure by far more than that on these rows, so the check is as strict as comparing the
 * sums themselves.
 */
function expectClose(actual: number | null, expected: number): void {
  expect(actual).not.toBeNull();
  expect(Math.abs((actual as number) - expected)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(expected)));
}

function expectSameOutcome(reported: Outcome<number>, listed: Outcome<number>): void {
  expect(reported.ok).toBe(listed.ok);
  if (reported.ok && listed.ok) expectClose(reported.value, listed.value);
}

/** The count, mean and variance a summary reports are those of the values themselves. */
function expectFigures(summary: Summary, values: number[]): void {
  expect(summary.n).toBe(values.length);
  expectSameOutcome(summaryMean(summary), mean(values));
  expectSameOutcome(summaryVariance(summary), variance(values));
}

/** The correlation the report shows from sums is Pearson's r of the (age, value) pairs themselves. */
function expectCorrelation(reported: Correlation, pairs: ReadonlyArray<[number, number]>): void {
  expect(reported.n).toBe(pairs.length);
  const listed = pearsonCorrelation(pairs.map(([age]) => age), pairs.map(([, value]) => value), 0.95);
  if (!listed.ok) {
    expect(reported.r).toBeNull();
    return;
  }
  expectClose(reported.r, listed.value.r);
  expectClose(reported.ci_low, listed.value.interval.low);
  expectClose(reported.ci_high, listed.value.interval.high);
  expectClose(reported.p_value, listed.value.pValue);
}

/** Every figure of a group of a per-unit report (money in major units) against its rows. */
function expectFiguresOfRows(stats: GroupStats, shifts: Shifts, rows: readonly Unit[]): void {
  const converted = rows.filter((row) => row.converted === 1);
  const aged = rows.filter((row) => plausible(row.age_at_contact) !== null);
  expect(stats.n).toBe(rows.length);
  expect(stats.conversions).toBe(converted.length);
  expectFigures(stats.unitValue, rows.map((row) => row.revenue_cents / 100));
  expectFigures(stats.convertedValue, converted.map((row) => row.revenue_cents / 100));
  expectFigures(stats.age, aged.map((row) => row.age_at_contact as number));
  expectCorrelation(correlationFromSums(stats.ageValue, shifts, 0.95), aged.map((row) => [row.age_at_contact as number, row.revenue_cents]));
}

describe.each(TEST_DIALECTS)('aggregation in the database (%s)', (dialect) => {
  let database: TestDatabase;
  beforeAll(async () => {
    database = await createTestDatabase(dialect);
    await seedCampaign(database, UNITS);
  });
  afterAll(async () => {
    await database.destroy();
  });

  const request: AggregationRequest = {
    source: { kind: 'campaigns', campaignIds: ['spring'] },
    dimensions: ['age_band', 'region', 'loyalty_tier'],
    ageEdges: EDGES,
    valueBasis: 'per_unit',
  };

  test('the population totals are the plain sums of the rows', async () => {
    const totals = await populationTotals(database.handle.db, request.source);
    const aged = UNITS.map((unit) => plausible(unit.age_at_contact)).filter((age): age is number => age !== null);
    expect(totals).toEqual({
      n: UNITS.length,
      conversions: UNITS.filter((unit) => unit.converted).length,
      valueCents: UNITS.reduce((sum, unit) => sum + unit.revenue_cents, 0),
      convertedValueCents: UNITS.filter((unit) => unit.converted).reduce((sum, unit) => sum + unit.revenue_cents, 0),
      agedUnits: aged.length,
      ageTotal: aged.reduce((sum, age) => sum + age, 0),
    });
    expect(shiftsFromTotals(totals)).toEqual({ unitValue: Math.round(47250 / 10), convertedValue: Math.round(47250 / 6), age: Math.round(aged.reduce((s, a) => s + a, 0) / aged.length) });
  });

  test('every cell and every segment reports the counts, means, variances and age–value correlation of its rows', async () => {
    const shifts = { unitValue: 4725, convertedValue: 7875, age: 50 };
    const { cells, arithmetic } = await cellAggregates(database.handle.db, request, shifts);
    expect(arithmetic).toBe('exact');
    const valuesOf = (unit: Unit) => [ageBandOf(unit.age_at_contact, EDGES), unit.region, unit.tier ?? 'unknown'];
    const expected = new Map<string, Unit[]>();
    for (const unit of UNITS) {
      const key = JSON.stringify(valuesOf(unit));
      expected.set(key, [...(expected.get(key) ?? []), unit]);
    }
    expect(cells.map((cell) => JSON.stringify(cell.labels)).sort()).toEqual([...expected.keys()].sort());
    const cellGroups = cells.map((cell) => ({ labels: cell.labels, stats: cellStats(cell, shifts) }));
    for (const cell of cellGroups) expectFiguresOfRows(cell.stats, shifts, expected.get(JSON.stringify(cell.labels)) as Unit[]);
    // The roll-up adds the cells' sums, so a wrong sum in any cell shows in its segments and the total.
    const { total, segments } = rollUp(cellGroups, request.dimensions, [['region', 'loyalty_tier']]);
    expectFiguresOfRows(total, shifts, UNITS);
    for (const segment of segments) {
      const indexes = segment.dimensions.map((dimension) => request.dimensions.indexOf(dimension));
      const rows = UNITS.filter((unit) => indexes.every((index, position) => valuesOf(unit)[index] === segment.labels[position]));
      expectFiguresOfRows(segment.stats, shifts, rows);
    }
  });

  test('age bands put every edge in the right band and implausible ages in unknown, never dropping a unit', async () => {
    const { cells } = await cellAggregates(database.handle.db, { ...request, dimensions: ['age_band'] }, { unitValue: 0, convertedValue: 0, age: 0 });
    const counts = Object.fromEntries(cells.map((cell) => [cell.labels[0], cell.n]));
    expect(counts).toEqual({ unknown: 3, '18-24': 2, '25-34': 1, '45-54': 1, '55-64': 1, '65+': 2 });
    expect(cells.reduce((sum, cell) => sum + cell.n, 0)).toBe(UNITS.length);
  });

  test('the band the SQL assigns (for the value distribution) is the band ageBandOf assigns', async () => {
    const values = await valueDistribution(database.handle.db, { ...request, dimensions: ['age_band'] });
    const bySql: Record<string, number> = {};
    for (const entry of values) bySql[entry.labels[0] as string] = (bySql[entry.labels[0] as string] ?? 0) + entry.count;
    const byCode: Record<string, number> = {};
    for (const unit of UNITS) byCode[ageBandOf(unit.age_at_contact, EDGES)] = (byCode[ageBandOf(unit.age_at_contact, EDGES)] ?? 0) + 1;
    expect(bySql).toEqual(byCode);
  });

  test('the age–value correlation of the value basis per_conversion uses only converted units', async () => {
    const shifts = { unitValue: 0, convertedValue: 0, age: 0 };
    const { cells } = await cellAggregates(database.handle.db, { ...request, dimensions: ['region'], valueBasis: 'per_conversion' }, shifts);
    const { total } = rollUp(cells.map((cell) => ({ labels: cell.labels, stats: cellStats(cell, shifts) })), ['region'], []);
    // Converted units with a plausible age: b (18, 1250), c (24, 999), g (120, 1), e (64, 40000), j (45, 2500);
    // the unconverted d (25) and f (65) are left out.
    const pairs: Array<[number, number]> = [[18, 1250], [24, 999], [120, 1], [64, 40000], [45, 2500]];
    expectCorrelation(correlationFromSums(total.ageValue, shifts, 0.95), pairs);
    const south = cells.find((cell) => cell.labels[0] === 'South');
    expect(south && correlationFromSums(cellStats(south, shifts).ageValue, shifts, 0.95).n).toBe(2);
  });

  test('the age and value distributions count units per cell and value', async () => {
    const { ageCounts: ages } = await cellAggregates(database.handle.db, { ...request, dimensions: ['region'] }, { unitValue: 0, convertedValue: 0, age: 0 });
    const southAges = ages.filter((entry) => entry.labels[0] === 'South').sort((a, b) => (a.age ?? -1) - (b.age ?? -1));
    expect(southAges).toEqual([
      { labels: ['South'], age: null, count: 1 },
      { labels: ['South'], age: 25, count: 1 },
      { labels: ['South'], age: 45, count: 1 },
      { labels: ['South'], age: 64, count: 1 },
      { labels: ['South'], age: 65, count: 1 },
    ]);
    const values = await valueDistribution(database.handle.db, { ...request, dimensions: ['region'], valueBasis: 'per_conversion' });
    const south = values.filter((entry) => entry.labels[0] === 'South').sort((a, b) => a.valueCents - b.valueCents);
    expect(south).toEqual([
      { labels: ['South'], valueCents: 2500, count: 2 },
      { labels: ['South'], valueCents: 40000, count: 1 },
    ]);
  });

  test('the value distribution can be limited to chosen dimension values', async () => {
    const limited = await valueDistribution(database.handle.db, { ...request, dimensions: ['region', 'loyalty_tier'] }, [{ dimensionIndex: 1, labels: ['silver'] }]);
    // Silver: d (South, 0), g (North, 1 cent), j (South, 2500).
    expect(limited.sort((a, b) => a.valueCents - b.valueCents)).toEqual([
      { labels: ['South', 'silver'], valueCents: 0, count: 1 },
      { labels: ['North', 'silver'], valueCents: 1, count: 1 },
      { labels: ['South', 'silver'], valueCents: 2500, count: 1 },
    ]);
    expect(await valueDistribution(database.handle.db, request, [])).toEqual([]);
  });

  test('sums too large for 64-bit integers are summed exactly', async () => {
    const big = await createTestDatabase(dialect);
    try {
      // Two revenues a trillion cents apart: the squares overflow a 64-bit integer.
      await seedCampaign(big, [
        { ...UNITS[1]!, customer_id: 'x', revenue_cents: 0 },
        { ...UNITS[1]!, customer_id: 'y', revenue_cents: 100_000_000_000_000 },
        { ...UNITS[1]!, customer_id: 'z', revenue_cents: 50_000_000_000_000 },
      ]);
      const { cells, arithmetic } = await cellAggregates(big.handle.db, { ...request, dimensions: ['region'] }, { unitValue: 0, convertedValue: 0, age: 0 });
      expect(arithmetic).toBe('exact');
      // Σv = 1e14 + 5e13; Σv² = 1e28 + 2.5e27, worked by hand.
      expect(cells[0]!.unitValue).toEqual({ n: 3, sum: 150_000_000_000_000n, squares: 12_500_000_000_000_000_000_000_000_000n });
      // Values 0, 1e12 and 5e11 (major units): mean 5e11, variance ((5e11)² + (5e11)²) / 2 = 2.5e23.
      const { unitValue } = cellStats(cells[0]!, { unitValue: 0, convertedValue: 0, age: 0 });
      expect(valueOf(summaryMean(unitValue))).toBe(5e11);
      expect(valueOf(summaryVariance(unitValue)) / 2.5e23).toBeCloseTo(1, 15);
      const onePass = await shiftsAndCellAggregates(big.handle.db, { ...request, dimensions: ['region'] });
      expect(onePass.shifts.unitValue).toBe(50_000_000_000_000);
      expect(onePass.arithmetic).toBe('exact');
      expect(onePass.cells.map((cell) => cell.unitValue)).toEqual(cells.map((cell) => cell.unitValue));
    } finally {
      await big.destroy();
    }
  });

  test.each([
    ['per_unit', ['age_band', 'region', 'loyalty_tier']],
    ['per_conversion', ['age_band', 'region', 'loyalty_tier']],
    ['per_unit', ['channel']],
    ['per_conversion', ['customer_type', 'age_band']],
  ] as const)('one pass gives the shifts and cells of the totals pass and the shifted pass (%s, %j)', async (valueBasis, dimensions) => {
    const wanted = { ...request, valueBasis, dimensions: [...dimensions] };
    const shifts = shiftsFromTotals(await populationTotals(database.handle.db, wanted.source));
    const twoPasses = await cellAggregates(database.handle.db, wanted, shifts);
    const onePass = await shiftsAndCellAggregates(database.handle.db, wanted);
    expect(onePass.shifts).toEqual(shifts);
    expect(onePass.cells).toEqual(twoPasses.cells);
    expect(onePass.arithmetic).toBe('exact');
    const byKey = (entries: typeof onePass.ageCounts) => [...entries].map((entry) => JSON.stringify(entry)).sort();
    expect(byKey(onePass.ageCounts)).toEqual(byKey(twoPasses.ageCounts));
  });

  test('limiting the value distribution to age bands keeps exactly the units of those bands, unknown ages included', async () => {
    const bands = { ...request, dimensions: ['age_band', 'region'] };
    const everything = await valueDistribution(database.handle.db, bands);
    const chosen = ['18-24', 'unknown'];
    const limited = await valueDistribution(database.handle.db, bands, [{ dimensionIndex: 0, labels: chosen }]);
    const order = (entries: typeof everything) => [...entries].map((entry) => JSON.stringify(entry)).sort();
    expect(order(limited)).toEqual(order(everything.filter((entry) => chosen.includes(entry.labels[0] as string))));
    // Units a (17), h (121) and i (no birth date) are of unknown age; b (18) and c (24) are 18-24.
    expect(limited.reduce((sum, entry) => sum + entry.count, 0)).toBe(5);
  });

  test.each([
    ['per_unit', 'all'],
    ['per_unit', [{ dimensionIndex: 0, labels: ['18-24', 'unknown'] }]],
    ['per_conversion', 'all'],
  ] as const)('the value distribution read with the cells (zeros counted from them) is the full read (%s, %j)', async (valueBasis, scope) => {
    const wanted = { ...request, valueBasis, dimensions: ['age_band', 'region'] };
    const { cells } = await shiftsAndCellAggregates(database.handle.db, wanted);
    const order = (entries: Awaited<ReturnType<typeof valueDistribution>>) => entries.map((entry) => JSON.stringify(entry)).sort();
    const full = await valueDistribution(database.handle.db, wanted, scope);
    expect(order(await valueDistribution(database.handle.db, wanted, scope, cells))).toEqual(order(full));
  });

  test('value counts per age bin add up to the value counts, and the grid bins every aged unit once', async () => {
    const ageAxis: GridAxis = { low: 18, high: 120, bins: 4 };
    const valueAxis: GridAxis = { low: 0, high: 40000, bins: 3 };
    const { unconvertedByAge } = await shiftsAndCellAggregates(database.handle.db, request);
    const counts = await valueCountsByAgeBin(database.handle.db, request, ageAxis, unconvertedByAge);
    const plainValues = new Map<number, number>();
    for (const unit of UNITS) plainValues.set(unit.revenue_cents, (plainValues.get(unit.revenue_cents) ?? 0) + 1);
    expect(valueCountsOf(counts)).toEqual([...plainValues].map(([valueCents, count]) => ({ valueCents, count })).sort((a, b) => a.valueCents - b.valueCents));
    // Worked by hand from UNITS: bin width 25.5 years and 13333⅓ cents; plausible ages only.
    // b (18, 1250) → (0, 0); c (24, 999) → (0, 0); d (25, 0) → (0, 0); j (45, 2500) → (1, 0);
    // e (64, 40000) → (1, 2); f (65, 0) → (1, 0); g (120, 1) → (3, 0).
    expect(gridCountsOf(counts, { age: ageAxis, valueCents: valueAxis })).toEqual([
      { ageBin: 0, valueBin: 0, count: 3 },
      { ageBin: 1, valueBin: 0, count: 2 },
      { ageBin: 1, valueBin: 2, count: 1 },
      { ageBin: 3, valueBin: 0, count: 1 },
    ]);
    const withoutAxis = await valueCountsByAgeBin(database.handle.db, { ...request, valueBasis: 'per_conversion' }, null, unconvertedByAge);
    expect(withoutAxis.every((entry) => entry.ageBin === null)).toBe(true);
    expect(withoutAxis.reduce((sum, entry) => sum + entry.count, 0)).toBe(UNITS.filter((unit) => unit.converted === 1).length);
  });

  test('an unconverted unit with a value other than 0 is counted at its value, not among the zeros', async () => {
    // Ingest refuses such a contact (revenue above 0 needs converted = 1); stored directly here,
    // it checks that the zeros are what remains of the unconverted units, not all of them.
    const odd = await createTestDatabase(dialect);
    try {
      await seedCampaign(odd, [
        { ...UNITS[0]!, customer_id: 'p', age_at_contact: 30, converted: 0, revenue_cents: 0 },
        { ...UNITS[0]!, customer_id: 'q', age_at_contact: 30, converted: 0, revenue_cents: 700 },
        { ...UNITS[0]!, customer_id: 'r', age_at_contact: 70, converted: 1, revenue_cents: 700 },
        { ...UNITS[0]!, customer_id: 's', age_at_contact: null, converted: 0, revenue_cents: 0 },
      ]);
      const oddRequest = { ...request, dimensions: ['region'] };
      const { unconvertedByAge } = await shiftsAndCellAggregates(odd.handle.db, oddRequest);
      const counts = await valueCountsByAgeBin(odd.handle.db, oddRequest, { low: 30, high: 70, bins: 2 }, unconvertedByAge);
      const merged = new Map<string, number>();
      for (const entry of counts) merged.set(`${entry.ageBin}|${entry.valueCents}`, (merged.get(`${entry.ageBin}|${entry.valueCents}`) ?? 0) + entry.count);
      expect(Object.fromEntries(merged)).toEqual({ '0|0': 1, '0|700': 1, '1|700': 1, 'null|0': 1 });
      const { cells } = await shiftsAndCellAggregates(odd.handle.db, oddRequest);
      const order = (entries: Awaited<ReturnType<typeof valueDistribution>>) => entries.map((entry) => JSON.stringify(entry)).sort();
      expect(order(await valueDistribution(odd.handle.db, oddRequest, 'all', cells))).toEqual(order(await valueDistribution(odd.handle.db, oddRequest)));
    } finally {
      await odd.destroy();
    }
  });

  test('data quality counts customers outside the population and rejected rows of the ingests involved', async () => {
    const quality = await sourceQuality(database.handle.db, request.source, dialect);
    expect(quality.customersOutsidePopulation).toBe(0);
    expect(quality.rejectedRows).toEqual([]);
  });

  test('customers outside a population of several campaigns are those contacted in none of them, each customer counted once', async () => {
    const overlap = await createTestDatabase(dialect);
    try {
      await seedCampaign(overlap, UNITS, 'spring');
      const db = overlap.handle.db;
      // Two spring customers contacted again in summer, and one customer contacted in summer only.
      const summerOnly = { ...(UNITS[0] as Unit), customer_id: 'summer-only' };
      await db
        .insertInto('customers')
        .values([summerOnly, { ...summerOnly, customer_id: 'never-contacted-1' }, { ...summerOnly, customer_id: 'never-contacted-2' }].map((unit) => ({ customer_id: unit.customer_id, birth_date: unit.birth_date, region: unit.region, channel: unit.channel, customer_type: 'individual' as const, created_at: NOW, updated_at: NOW, last_ingest_id: null })))
        .execute();
      await db.insertInto('campaigns').values({ campaign_id: 'summer', created_at: NOW }).execute();
      const summerContacts = [UNITS[0] as Unit, UNITS[1] as Unit, summerOnly];
      await db
        .insertInto('campaign_contacts')
        .values(summerContacts.map((unit) => ({ campaign_id: 'summer', customer_id: unit.customer_id, contacted_at: '2026-07-01', converted: 0, revenue_cents: 0, age_at_contact: unit.age_at_contact, region: unit.region, channel: unit.channel, customer_type: 'individual' as const, holdout: 0, last_ingest_id: null })))
        .execute();
      const outside = async (campaignIds: string[]) => (await sourceQuality(db, { kind: 'campaigns', campaignIds }, dialect)).customersOutsidePopulation;
      const stored = UNITS.length + 3;
      expect(await outside(['spring'])).toBe(stored - UNITS.length);
      expect(await outside(['summer'])).toBe(stored - 3);
      expect(await outside(['spring', 'summer'])).toBe(2);
    } finally {
      await overlap.destroy();
    }
  });
});

describe.each(TEST_DIALECTS)('a sales window population (%s)', (dialect) => {
  let database: TestDatabase;
  beforeAll(async () => {
    database = await createTestDatabase(dialect);
    const db = database.handle.db;
    const customers = [
      { customer_id: 'leap', birth_date: '2000-02-29' },
      { customer_id: 'eve', birth_date: '1990-03-31' },
      { customer_id: 'day', birth_date: '1990-04-01' },
      { customer_id: 'none', birth_date: null },
      { customer_id: 'idle', birth_date: '1980-06-15' },
    ];
    await db
      .insertInto('customers')
      .values(customers.map((customer) => ({ ...customer, region: 'North', channel: 'web', customer_type: 'individual' as const, created_at: NOW, updated_at: NOW, last_ingest_id: null })))
      .execute();
    await db
      .insertInto('sales')
      .values([
        { sale_id: 's1', customer_id: 'leap', sold_at: '2026-01-05', amount_cents: 1000, last_ingest_id: null },
        { sale_id: 's2', customer_id: 'leap', sold_at: '2026-03-31', amount_cents: 500, last_ingest_id: null },
        { sale_id: 's3', customer_id: 'eve', sold_at: '2026-04-01', amount_cents: 9999, last_ingest_id: null },
        { sale_id: 's4', customer_id: 'day', sold_at: '2025-12-31', amount_cents: 700, last_ingest_id: null },
        { sale_id: 's5', customer_id: 'none', sold_at: '2026-02-01', amount_cents: 300, last_ingest_id: null },
      ])
      .execute();
  });
  afterAll(async () => {
    await database.destroy();
  });

  test('every customer is a unit; buying, spend and age are read at the window', async () => {
    const request: AggregationRequest = { source: { kind: 'sales', from: '2026-01-01', to: '2026-03-31' }, dimensions: ['age_band'], ageEdges: [18, 26, 35], valueBasis: 'per_unit' };
    const totals = await populationTotals(database.handle.db, request.source);
    // Sales on both window ends count; 2026-04-01 and 2025-12-31 fall outside.
    expect(totals).toMatchObject({ n: 5, conversions: 2, valueCents: 1800, convertedValueCents: 1800 });
    const { ageCounts: ages } = await cellAggregates(database.handle.db, request, shiftsFromTotals(totals));
    const byAge = Object.fromEntries(ages.map((entry) => [String(entry.age), entry.count]));
    // Ages on 2026-03-31 by exact birthday arithmetic, as ageInYears computes them.
    expect(ageInYears('2000-02-29', '2026-03-31')).toBe(26);
    expect(ageInYears('1990-03-31', '2026-03-31')).toBe(36);
    expect(ageInYears('1990-04-01', '2026-03-31')).toBe(35);
    expect(byAge).toEqual({ '26': 1, '36': 1, '35': 1, '45': 1, null: 1 });
  });

  test('a window ending the day before a leap-day birthday in a common year counts the year not yet complete', async () => {
    const { ageCounts: ages } = await cellAggregates(
      database.handle.db,
      { source: { kind: 'sales', from: '2026-01-01', to: '2026-02-28' }, dimensions: ['region'], ageEdges: [18], valueBasis: 'per_unit' },
      { unitValue: 0, convertedValue: 0, age: 0 },
    );
    expect(ageInYears('2000-02-29', '2026-02-28')).toBe(25);
    expect(ages.some((entry) => entry.age === 25)).toBe(true);
    expect(ages.some((entry) => entry.age === 26)).toBe(false);
  });

  test('customers without any sale are counted for data quality', async () => {
    const quality = await sourceQuality(database.handle.db, { kind: 'sales', from: '2026-01-01', to: '2026-03-31' }, dialect);
    expect(quality.customersWithoutAnySale).toBe(1);
  });
});

describe('binIndex', () => {
  test('puts a whole number in the bin whose real-valued edges hold it, the top edge in the last bin', () => {
    const axis: GridAxis = { low: 18, high: 81, bins: 12 };
    for (let age = 18; age <= 81; age += 1) {
      const width = (axis.high - axis.low) / axis.bins;
      const expected = age === axis.high ? axis.bins - 1 : Math.floor((age - axis.low) / width + 1e-9);
      expect(binIndex(age, axis)).toBe(expected);
    }
    // Values on an interior edge go up: 18 + 3 · 5.25 = 33.75 is not whole, 18 + 4 · 5.25 = 39 is.
    expect(binIndex(39, axis)).toBe(4);
    expect(binIndex(38, axis)).toBe(3);
  });

  test('is exact where floating-point division would round across an edge', () => {
    // Near 2^52 the quotient (x − low) · bins / width lies within a few units in the last place of the edge 1.
    const axis: GridAxis = { low: 0, high: 2 ** 52 - 1, bins: 2 };
    expect(binIndex(2 ** 51 - 1, axis)).toBe(0);
    expect(binIndex(2 ** 51, axis)).toBe(1);
    expect(binIndex(0, { low: 5, high: 5, bins: 3 })).toBe(0);
    expect(binIndex(7, { low: 0, high: 10, bins: 1 })).toBe(0);
  });
});
