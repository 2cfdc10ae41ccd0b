/**
 * Every SQL statement of a report. The population (campaign contacts, or customers in a
 * sales window) is described once as a derived table with one column per dimension; the
 * queries group it in the database and return sufficient statistics, never raw rows:
 *
 * - `populationTotals`: one cheap pass for the counts and the shifts c (rounded means);
 * - `cellAggregates`: ONE GROUP BY over the finest cells (all dimensions together, and age)
 *   with n, conversions and the shifted sums Σ(v − c), Σ(v − c)² for both value bases; the
 *   age sums, the age distribution and the co-moments of age and value follow from it exactly;
 * - `valueDistribution`: counts per (cell, value), from which medians, quartiles and modes of
 *   the value are read;
 * - `populationValueCounts` and `ageValueGridCounts`: counts per value, and per cell of an
 *   age × value grid, over the whole population, for its histogram and binned scatter.
 *
 * The SQL is the subset SQLite and PostgreSQL share (CASE, COALESCE, SUBSTR, CAST … AS
 * INTEGER / DOUBLE PRECISION) and everything is integer arithmetic on cents and years, so
 * both engines return the same exact sums. Text values are never ordered in SQL (collations
 * differ between engines); callers sort in code.
 */
import { sql, type Kysely, type RawBuilder, type Transaction } from 'kysely';
import type { Database } from '../db/tables.js';
import { MAX_PLAUSIBLE_AGE, MIN_PLAUSIBLE_AGE, UNKNOWN, ageBandOf, ageBands, isBuiltInDimension } from './dimensions.js';

export type Executor = Kysely<Database> | Transaction<Database>;

export type PopulationSource = { kind: 'campaigns'; campaignIds: string[] } | { kind: 'sales'; from: string; to: string };

export interface AggregationRequest {
  source: PopulationSource;
  dimensions: readonly string[];
  ageEdges: readonly number[];
  valueBasis: 'per_unit' | 'per_conversion';
}

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

/** One finest cell: a combination of one value per dimension. */
export interface CellAggregate {
  /** One value per dimension, in the request's order. */
  values: string[];
  n: number;
  conversions: number;
  /** Value (cents) of every unit, shifted by `shifts.unitValue`. */
  unitValue: ShiftedSums;
  /** Value (cents) of the converted units, shifted by `shifts.convertedValue`. */
  convertedValue: ShiftedSums;
  /** Ages of the units with a plausible age, shifted by `shifts.age`. */
  age: ShiftedSums;
  /** Age and value (of the report's value basis) of the units with a plausible age. */
  ageValue: PairedShiftedSums;
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

const VALUE = sql.ref('population.value_cents');
const AGE = sql.ref('population.age');
const CONVERTED = sql.ref('population.converted');

function dimensionColumn(index: number): string {
  return `d${index}`;
}

function attributeColumn(index: number): string {
  return `attribute_${index}`;
}

/** Age in whole years at `onDate` from `birthDateColumn`, by exact birthday arithmetic (as `ageInYears`). */
function ageAtDateSql(birthDateColumn: RawBuilder<unknown>, onDate: string): RawBuilder<number | null> {
  const year = Number(onDate.slice(0, 4));
  const monthDay = onDate.slice(5, 10);
  if (!Number.isInteger(year) || !/^\d{2}-\d{2}$/.test(monthDay)) throw new Error(`not an ISO date: ${onDate}`);
  return sql<number | null>`(${sql.lit(year)} - cast(substr(${birthDateColumn}, 1, 4) as integer) - case when ${sql.lit(monthDay)} < substr(${birthDateColumn}, 6, 5) then 1 else 0 end)`;
}

function plausibleAge(age: RawBuilder<unknown>): RawBuilder<number | null> {
  return sql<number | null>`case when ${age} between ${sql.lit(MIN_PLAUSIBLE_AGE)} and ${sql.lit(MAX_PLAUSIBLE_AGE)} then ${age} end`;
}

/**
 * The units of the population with the columns the reports need: converted (0/1),
 * value_cents, age (plausible or null) and the raw dimension columns.
 */
function basePopulation(source: PopulationSource, dimensions: readonly string[]): RawBuilder<unknown> {
  const attributeNames = dimensions.filter((dimension) => !isBuiltInDimension(dimension));
  const customerColumns = (['region', 'channel', 'customer_type'] as const).filter((column) => dimensions.includes(column));
  const needsCustomers = customerColumns.length > 0 || source.kind === 'sales';
  const customerKey = source.kind === 'campaigns' ? sql.ref('cc.customer_id') : sql.ref('cu.customer_id');

  const columns: Array<RawBuilder<unknown>> = [];
  for (const column of customerColumns) columns.push(sql`${sql.ref(`cu.${column}`)} as ${sql.ref(column)}`);
  attributeNames.forEach((_name, index) => {
    columns.push(sql`coalesce(${sql.ref(`a${index}.value`)}, ${sql.lit(UNKNOWN)}) as ${sql.ref(attributeColumn(index))}`);
  });
  const attributeJoins = attributeNames.map(
    (name, index) =>
      sql`left join customer_attributes ${sql.ref(`a${index}`)} on ${sql.ref(`a${index}.customer_id`)} = ${customerKey} and ${sql.ref(`a${index}.name`)} = ${name}`,
  );

  if (source.kind === 'campaigns') {
    columns.push(sql`cc.converted as converted`, sql`cc.revenue_cents as value_cents`, sql`${plausibleAge(sql.ref('cc.age_at_contact'))} as age`);
    return sql`select ${sql.join(columns)}
      from campaign_contacts cc
      ${needsCustomers ? sql`join customers cu on cu.customer_id = cc.customer_id` : sql``}
      ${sql.join(attributeJoins, sql` `)}
      where cc.campaign_id in (${sql.join(source.campaignIds)})`;
  }

  // A sales report's unit is a customer: bought in the window or not, spend in the window, age at its end.
  columns.push(
    sql`case when s.spend is null then 0 else 1 end as converted`,
    sql`coalesce(s.spend, 0) as value_cents`,
    sql`${plausibleAge(ageAtDateSql(sql.ref('cu.birth_date'), source.to))} as age`,
  );
  return sql`select ${sql.join(columns)}
    from customers cu
    left join (
      select customer_id, sum(amount_cents) as spend from sales
      where sold_at >= ${source.from} and sold_at <= ${source.to}
      group by customer_id
    ) s on s.customer_id = cu.customer_id
    ${sql.join(attributeJoins, sql` `)}`;
}

function ageBandSql(age: RawBuilder<unknown>, edges: readonly number[]): RawBuilder<string> {
  const bands = ageBands(edges);
  const branches = bands.map((band) => sql`when ${age} <= ${sql.lit(band.high)} then ${sql.lit(band.label)}`);
  return sql<string>`case when ${age} is null then ${sql.lit(UNKNOWN)} ${sql.join(branches, sql` `)} else ${sql.lit(UNKNOWN)} end`;
}

/**
 * The population as a derived table `population` with columns d0…dk, converted, value_cents,
 * age. With `bandsInCode`, the age band column is left out: the query groups by age anyway,
 * and the band, a function of the age, is then assigned in code (`ageBandOf`).
 */
function population(request: Pick<AggregationRequest, 'source' | 'dimensions' | 'ageEdges'>, options: { bandsInCode?: boolean } = {}): RawBuilder<unknown> {
  let attributeIndex = 0;
  const dimensionColumns = request.dimensions.flatMap((dimension, index) => {
    let expression: RawBuilder<unknown>;
    if (dimension === 'age_band') {
      if (options.bandsInCode) return [];
      expression = ageBandSql(sql.ref('base.age'), request.ageEdges);
    } else if (isBuiltInDimension(dimension)) expression = sql.ref(`base.${dimension}`);
    else expression = sql.ref(`base.${attributeColumn(attributeIndex++)}`);
    return [sql`${expression} as ${sql.ref(dimensionColumn(index))}`];
  });
  return sql`(select ${sql.join([...dimensionColumns, sql`base.converted as converted`, sql`base.value_cents as value_cents`, sql`base.age as age`])}
    from (${basePopulation(request.source, request.dimensions)}) base) population`;
}

function toNumber(value: unknown): number {
  if (value === null || value === undefined) return 0;
  const number = typeof value === 'number' ? value : Number(value);
  if (!Number.isFinite(number)) throw new Error(`the database returned a non-numeric aggregate: ${String(value)}`);
  return number;
}

/**
 * Counts and totals of the whole population in one pass, the first of a report's queries:
 * its means, rounded to whole cents and years, become the shifts of the cell sums.
 */
export async function populationTotals(db: Executor, source: PopulationSource): Promise<PopulationTotals> {
  const { rows } = await sql<Record<string, unknown>>`
    select count(*) as n,
      sum(${CONVERTED}) as conversions,
      sum(${VALUE}) as value_cents,
      sum(case when ${CONVERTED} = 1 then ${VALUE} else 0 end) as converted_value_cents,
      count(${AGE}) as aged_units,
      sum(${AGE}) as age_total
    from (${basePopulation(source, [])}) population`.execute(db);
  const row = rows[0] ?? {};
  return {
    n: toNumber(row['n']),
    conversions: toNumber(row['conversions']),
    valueCents: toNumber(row['value_cents']),
    convertedValueCents: toNumber(row['converted_value_cents']),
    agedUnits: toNumber(row['aged_units']),
    ageTotal: toNumber(row['age_total']),
  };
}

/** Rounded means: integers near the data, so every shifted term is an exact integer. */
export function shiftsFromTotals(totals: PopulationTotals): Shifts {
  const roundedMean = (total: number, count: number) => (count === 0 ? 0 : Math.round(total / count));
  return {
    unitValue: roundedMean(totals.valueCents, totals.n),
    convertedValue: roundedMean(totals.convertedValueCents, totals.conversions),
    age: roundedMean(totals.ageTotal, totals.agedUnits),
  };
}

/**
 * `exact`: integer arithmetic, identical on both engines. `floating`: the fallback when a sum
 * of squares would overflow a 64-bit integer (SQLite raises "integer overflow", PostgreSQL
 * "bigint out of range"); then the last digits may differ between engines.
 */
type Arithmetic = 'exact' | 'floating';

function term(expression: RawBuilder<unknown>, arithmetic: Arithmetic): RawBuilder<unknown> {
  return arithmetic === 'exact' ? sql`(${expression})` : sql`cast(${expression} as double precision)`;
}

function cellQuery(request: AggregationRequest, shifts: Shifts, arithmetic: Arithmetic): RawBuilder<Record<string, unknown>> {
  const dimensions = request.dimensions.flatMap((dimension, index) => (dimension === 'age_band' ? [] : [sql.ref(`population.${dimensionColumn(index)}`)]));
  const unitDeviation = term(sql`${VALUE} - ${sql.lit(shifts.unitValue)}`, arithmetic);
  const convertedDeviation = term(sql`${VALUE} - ${sql.lit(shifts.convertedValue)}`, arithmetic);
  const whenConverted = (expression: RawBuilder<unknown>) => sql`sum(case when ${CONVERTED} = 1 then ${expression} else 0 end)`;
  return sql<Record<string, unknown>>`
    select ${sql.join([
      ...dimensions,
      sql`${AGE} as age`,
      sql`count(*) as n`,
      sql`sum(${CONVERTED}) as conversions`,
      sql`sum(${unitDeviation}) as unit_sum`,
      sql`sum(${unitDeviation} * ${unitDeviation}) as unit_squares`,
      sql`${whenConverted(convertedDeviation)} as converted_sum`,
      sql`${whenConverted(sql`${convertedDeviation} * ${convertedDeviation}`)} as converted_squares`,
    ])}
    from ${population(request, { bandsInCode: true })}
    group by ${sql.join([...dimensions, AGE])}`;
}

function isOverflow(error: unknown): boolean {
  const message = error instanceof Error ? error.message : String(error);
  return /integer overflow|out of range/i.test(message);
}

/** Count of units per finest cell and age (null: unknown or implausible age). */
export interface AgeCount {
  values: string[];
  age: number | null;
  count: number;
}

function emptyCell(values: string[]): CellAggregate {
  return {
    values,
    n: 0,
    conversions: 0,
    unitValue: { n: 0, sumOfShifted: 0, sumOfSquaredShifted: 0 },
    convertedValue: { n: 0, sumOfShifted: 0, sumOfSquaredShifted: 0 },
    age: { n: 0, sumOfShifted: 0, sumOfSquaredShifted: 0 },
    ageValue: { n: 0, ageSum: 0, ageSquaredSum: 0, valueSum: 0, valueSquaredSum: 0, crossSum: 0 },
  };
}

function isExact(cell: CellAggregate): boolean {
  return (
    [cell.unitValue, cell.convertedValue, cell.age].every((sums) => Number.isSafeInteger(sums.sumOfShifted) && Number.isSafeInteger(sums.sumOfSquaredShifted)) &&
    Object.values(cell.ageValue).every((value) => Number.isSafeInteger(value))
  );
}

/**
 * The finest cells of the population with their sufficient statistics, and the count of units
 * per cell and age, from ONE GROUP BY over the cells and age. Age is part of the grouping key
 * because it costs the database little more (the rows are sorted once either way) and makes
 * every age statistic exact in code: within a group the age is one number a, so its sums are
 * n·(a − c), n·(a − c)² and, with the value, (a − c)·Σ(v − c′).
 * Runs in exact integer arithmetic, and again in floating point only if a sum overflows.
 * @throws whatever the database throws, other than an overflow
 */
export async function cellAggregates(
  db: Executor,
  request: AggregationRequest,
  shifts: Shifts,
): Promise<{ cells: CellAggregate[]; ageCounts: AgeCount[]; arithmetic: Arithmetic }> {
  let arithmetic: Arithmetic = 'exact';
  let rows: Array<Record<string, unknown>>;
  try {
    rows = (await cellQuery(request, shifts, 'exact').execute(db)).rows;
  } catch (error) {
    if (!isOverflow(error)) throw error;
    arithmetic = 'floating';
    rows = (await cellQuery(request, shifts, 'floating').execute(db)).rows;
  }
  const cells = new Map<string, CellAggregate>();
  const ageCounts: AgeCount[] = [];
  for (const row of rows) {
    const age = row['age'] === null || row['age'] === undefined ? null : toNumber(row['age']);
    const values = request.dimensions.map((dimension, index) => (dimension === 'age_band' ? ageBandOf(age, request.ageEdges) : String(row[dimensionColumn(index)])));
    const key = JSON.stringify(values);
    let cell = cells.get(key);
    if (!cell) cells.set(key, (cell = emptyCell(values)));
    const n = toNumber(row['n']);
    const conversions = toNumber(row['conversions']);
    const unitSum = toNumber(row['unit_sum']);
    const unitSquares = toNumber(row['unit_squares']);
    const convertedSum = toNumber(row['converted_sum']);
    const convertedSquares = toNumber(row['converted_squares']);
    cell.n += n;
    cell.conversions += conversions;
    cell.unitValue = { n: cell.n, sumOfShifted: cell.unitValue.sumOfShifted + unitSum, sumOfSquaredShifted: cell.unitValue.sumOfSquaredShifted + unitSquares };
    cell.convertedValue = {
      n: cell.conversions,
      sumOfShifted: cell.convertedValue.sumOfShifted + convertedSum,
      sumOfSquaredShifted: cell.convertedValue.sumOfSquaredShifted + convertedSquares,
    };
    ageCounts.push({ values, age, count: n });
    if (age === null) continue;
    const shiftedAge = age - shifts.age;
    cell.age = { n: cell.age.n + n, sumOfShifted: cell.age.sumOfShifted + n * shiftedAge, sumOfSquaredShifted: cell.age.sumOfSquaredShifted + n * shiftedAge * shiftedAge };
    const [pairs, valueSum, valueSquares] = request.valueBasis === 'per_unit' ? [n, unitSum, unitSquares] : [conversions, convertedSum, convertedSquares];
    cell.ageValue = {
      n: cell.ageValue.n + pairs,
      ageSum: cell.ageValue.ageSum + pairs * shiftedAge,
      ageSquaredSum: cell.ageValue.ageSquaredSum + pairs * shiftedAge * shiftedAge,
      valueSum: cell.ageValue.valueSum + valueSum,
      valueSquaredSum: cell.ageValue.valueSquaredSum + valueSquares,
      crossSum: cell.ageValue.crossSum + shiftedAge * valueSum,
    };
  }
  const sorted = [...cells.values()].sort((left, right) => compareValueLists(left.values, right.values));
  // SQLite turns an overflowing integer product into a float without an error; a sum beyond
  // 2^53 cannot be exact in JavaScript either. Either way the result is floating point.
  return { cells: sorted, ageCounts, arithmetic: sorted.every(isExact) ? arithmetic : 'floating' };
}

/** Count of the value metric's units per finest cell and value (in cents). */
export interface ValueCount {
  values: string[];
  valueCents: number;
  count: number;
}

/** Which units the value distribution is read for: all of them, or those in the listed dimension values. */
export type ValueDistributionScope = 'all' | Array<{ dimensionIndex: number; values: string[] }>;

/**
 * Counts of the value metric's units per finest cell and value. Reading every value costs a
 * sort of the whole population, so the caller may limit it to the dimension values whose
 * groups are small enough to be described value by value (`scope`).
 */
export async function valueDistribution(db: Executor, request: AggregationRequest, scope: ValueDistributionScope = 'all'): Promise<ValueCount[]> {
  if (scope !== 'all' && scope.length === 0) return [];
  const dimensions = request.dimensions.map((_dimension, index) => sql.ref(`population.${dimensionColumn(index)}`));
  const conditions: Array<RawBuilder<unknown>> = [];
  if (request.valueBasis === 'per_conversion') conditions.push(sql`${CONVERTED} = 1`);
  if (scope !== 'all') {
    conditions.push(sql`(${sql.join(scope.map(({ dimensionIndex, values }) => sql`${dimensions[dimensionIndex]} in (${sql.join(values)})`), sql` or `)})`);
  }
  const { rows } = await sql<Record<string, unknown>>`
    select ${sql.join([...dimensions, sql`${VALUE} as value_cents`, sql`count(*) as count`])}
    from ${population(request)}
    ${conditions.length > 0 ? sql`where ${sql.join(conditions, sql` and `)}` : sql``}
    group by ${sql.join([...dimensions, VALUE])}`.execute(db);
  return rows.map((row) => ({
    values: request.dimensions.map((_dimension, index) => String(row[dimensionColumn(index)])),
    valueCents: toNumber(row['value_cents']),
    count: toNumber(row['count']),
  }));
}

/** Count of the value metric's units with one value (in cents), over the whole population. */
export interface PopulationValueCount {
  valueCents: number;
  count: number;
}

function valueBasisCondition(valueBasis: AggregationRequest['valueBasis']): RawBuilder<unknown> {
  return valueBasis === 'per_conversion' ? sql`where ${CONVERTED} = 1` : sql``;
}

/**
 * Counts of the value metric's units per value (cents) over the whole population, without
 * cells: the data of the population's value histogram, complete however large the population
 * (unlike `valueDistribution`, which a caller may narrow). One GROUP BY on the value alone.
 * @throws whatever the database throws
 * @example
 * await populationValueCounts(db, request); // [{ valueCents: 0, count: 712 }, { valueCents: 1250, count: 3 }, …]
 */
export async function populationValueCounts(db: Executor, request: Pick<AggregationRequest, 'source' | 'valueBasis'>): Promise<PopulationValueCount[]> {
  const { rows } = await sql<Record<string, unknown>>`
    select ${VALUE} as value_cents, count(*) as count
    from (${basePopulation(request.source, [])}) population
    ${valueBasisCondition(request.valueBasis)}
    group by ${VALUE}`.execute(db);
  return rows.map((row) => ({ valueCents: toNumber(row['value_cents']), count: toNumber(row['count']) })).sort((left, right) => left.valueCents - right.valueCents);
}

/**
 * One axis of the age × value grid: `bins` equal bins from `low` to `high` (whole years or
 * cents). Bin i holds x with low + i·(high − low)/bins ≤ x < low + (i + 1)·(high − low)/bins;
 * the last bin also holds x = high (the edge rule of the statistics core's `histogram`).
 */
export interface GridAxis {
  low: number;
  high: number;
  bins: number;
}

export interface AgeValueGridAxes {
  age: GridAxis;
  valueCents: GridAxis;
}

/** Count of the value metric's units with a known age in one cell of the age × value grid. */
export interface AgeValueBinCount {
  ageBin: number;
  valueBin: number;
  count: number;
}

/**
 * The bin index of an integer column on an axis, in integer arithmetic only:
 * ⌊(x − low)·bins / (high − low)⌋, which is the bin whose real-valued edges hold x. Both
 * engines truncate integer division toward zero, and x − low ≥ 0 there, so they agree.
 */
function binIndexSql(column: RawBuilder<unknown>, axis: GridAxis): RawBuilder<number> {
  if (axis.high <= axis.low || axis.bins === 1) return sql<number>`0`;
  return sql<number>`case when ${column} >= ${sql.lit(axis.high)} then ${sql.lit(axis.bins - 1)} when ${column} <= ${sql.lit(axis.low)} then 0
    else (cast(${column} as bigint) - ${sql.lit(axis.low)}) * ${sql.lit(axis.bins)} / ${sql.lit(axis.high - axis.low)} end`;
}

function requireIntegerAxis(name: string, axis: GridAxis): void {
  if (!Number.isSafeInteger(axis.low) || !Number.isSafeInteger(axis.high) || !Number.isSafeInteger(axis.bins) || axis.bins < 1 || axis.high < axis.low) {
    throw new Error(`the ${name} axis of the grid needs whole-number bounds and a positive number of bins, got ${JSON.stringify(axis)}`);
  }
}

/**
 * Counts of the value metric's units with a known age per cell of an age × value grid, over
 * the whole population, binned in SQL with integer arithmetic (`binIndexSql`) so that SQLite
 * and PostgreSQL place every unit in the same cell. Only occupied cells are returned.
 * @throws Error when an axis does not have whole-number bounds; whatever the database throws
 * @example
 * await ageValueGridCounts(db, request, { age: { low: 18, high: 90, bins: 12 }, valueCents: { low: 0, high: 50_000, bins: 20 } });
 * // [{ ageBin: 0, valueBin: 0, count: 40 }, …]
 */
export async function ageValueGridCounts(db: Executor, request: Pick<AggregationRequest, 'source' | 'valueBasis'>, axes: AgeValueGridAxes): Promise<AgeValueBinCount[]> {
  requireIntegerAxis('age', axes.age);
  requireIntegerAxis('value', axes.valueCents);
  const converted = request.valueBasis === 'per_conversion' ? sql`and ${CONVERTED} = 1` : sql``;
  const { rows } = await sql<Record<string, unknown>>`
    select binned.age_bin as age_bin, binned.value_bin as value_bin, count(*) as count
    from (
      select ${binIndexSql(AGE, axes.age)} as age_bin, ${binIndexSql(VALUE, axes.valueCents)} as value_bin
      from (${basePopulation(request.source, [])}) population
      where ${AGE} is not null ${converted}
    ) binned
    group by binned.age_bin, binned.value_bin`.execute(db);
  return rows
    .map((row) => ({ ageBin: toNumber(row['age_bin']), valueBin: toNumber(row['value_bin']), count: toNumber(row['count']) }))
    .sort((left, right) => left.ageBin - right.ageBin || left.valueBin - right.valueBin);
}

/** Data-quality counts that are not visible in the cells. */
export interface SourceQuality {
  /** Stored customers outside the population (campaign reports: never contacted in these campaigns). */
  customersOutsidePopulation: number;
  /** Customers without any sale at all, in or out of the window (sales reports). */
  customersWithoutAnySale: number;
  rejectedRows: Array<{ kind: string; ingests: number; rejected: number }>;
}

/** Counts of stored customers outside the population (or without sales) and the rejected rows of the ingests a report draws on. */
export async function sourceQuality(db: Executor, source: PopulationSource): Promise<SourceQuality> {
  const customers = toNumber((await sql<{ n: unknown }>`select count(*) as n from customers`.execute(db)).rows[0]?.n);
  let customersOutsidePopulation = 0;
  let customersWithoutAnySale = 0;
  if (source.kind === 'campaigns') {
    const contacted = toNumber(
      (
        await sql<{ n: unknown }>`select count(*) as n from (select distinct customer_id from campaign_contacts where campaign_id in (${sql.join(source.campaignIds)})) contacted`.execute(db)
      ).rows[0]?.n,
    );
    customersOutsidePopulation = customers - contacted;
  } else {
    const withSales = toNumber((await sql<{ n: unknown }>`select count(*) as n from (select distinct customer_id from sales) buyers`.execute(db)).rows[0]?.n);
    customersWithoutAnySale = customers - withSales;
  }
  const ingestFilter =
    source.kind === 'campaigns'
      ? sql`kind = 'customers' or (kind = 'contacts' and campaign_id in (${sql.join(source.campaignIds)}))`
      : sql`kind in ('customers', 'sales')`;
  const { rows } = await sql<Record<string, unknown>>`
    select kind, count(*) as ingests, sum(rejected) as rejected from ingests where ${ingestFilter} group by kind`.execute(db);
  const rejectedRows = rows
    .map((row) => ({ kind: String(row['kind']), ingests: toNumber(row['ingests']), rejected: toNumber(row['rejected']) }))
    .sort((left, right) => compareText(left.kind, right.kind));
  return { customersOutsidePopulation, customersWithoutAnySale, rejectedRows };
}

/** Code-unit order, the same on every machine and engine (SQL collations are not). */
export function compareText(left: string, right: string): number {
  if (left === right) return 0;
  return left < right ? -1 : 1;
}

/** Orders lists of dimension values element by element, by code units. */
export function compareValueLists(left: readonly string[], right: readonly string[]): number {
  for (let index = 0; index < Math.max(left.length, right.length); index += 1) {
    const order = compareText(left[index] ?? '', right[index] ?? '');
    if (order !== 0) return order;
  }
  return 0;
}
