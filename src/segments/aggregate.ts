/**
 * Every SQL statement of a report. The population (campaign contacts, or customers in a
 * sales window) is described once as a derived table with one column per dimension; the
 * queries group it in the database and return sufficient statistics, never raw rows:
 *
 * - `populationTotals`: one cheap pass for the counts and the shifts c (rounded means);
 * - `cellAggregates`: ONE GROUP BY over the finest cells (all dimensions together, and age;
 *   for campaigns in the order of their covering index, so nothing is sorted)
 *   with n, conversions and the shifted sums Σ(v − c), Σ(v − c)² for both value bases; the
 *   age sums, the age distribution and the co-moments of age and value follow from it exactly;
 * - `valueDistribution`: counts per (cell, value), from which medians, quartiles and modes of
 *   the value are read;
 * - `valueCountsByAgeBin`: counts per value and age bin over the whole population, from which
 *   its value histogram and its age × value grid (binned scatter) follow in code.
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

/** The columns a campaign report's cells are grouped by, in the order of the index `campaign_contacts_by_cell`. */
const CONTACT_CELL_COLUMNS = ['region', 'channel', 'customer_type'] as const;

/**
 * The units of the population with the columns the reports need: converted (0/1),
 * value_cents, age (plausible or null), raw_age (as stored or computed, for grouping) and the
 * dimension columns. A campaign population reads the customer's values copied onto each
 * contact, so it never joins customers; it also offers campaign_key, and always all three
 * customer columns, so that its cells can be grouped in the order of its covering index.
 */
function basePopulation(source: PopulationSource, dimensions: readonly string[]): RawBuilder<unknown> {
  const attributeNames = dimensions.filter((dimension) => !isBuiltInDimension(dimension));
  const customerKey = source.kind === 'campaigns' ? sql.ref('cc.customer_id') : sql.ref('cu.customer_id');

  const columns: Array<RawBuilder<unknown>> = [];
  attributeNames.forEach((_name, index) => {
    columns.push(sql`coalesce(${sql.ref(`a${index}.value`)}, ${sql.lit(UNKNOWN)}) as ${sql.ref(attributeColumn(index))}`);
  });
  const attributeJoins = attributeNames.map(
    (name, index) =>
      sql`left join customer_attributes ${sql.ref(`a${index}`)} on ${sql.ref(`a${index}.customer_id`)} = ${customerKey} and ${sql.ref(`a${index}.name`)} = ${name}`,
  );

  if (source.kind === 'campaigns') {
    for (const column of CONTACT_CELL_COLUMNS) columns.push(sql`${sql.ref(`cc.${column}`)} as ${sql.ref(column)}`);
    columns.push(
      sql`cc.campaign_id as campaign_key`,
      sql`cc.converted as converted`,
      sql`cc.revenue_cents as value_cents`,
      sql`cc.age_at_contact as raw_age`,
      sql`${plausibleAge(sql.ref('cc.age_at_contact'))} as age`,
    );
    return sql`select ${sql.join(columns)}
      from campaign_contacts cc
      ${sql.join(attributeJoins, sql` `)}
      where cc.campaign_id in (${sql.join(source.campaignIds)})`;
  }

  // A sales report's unit is a customer: bought in the window or not, spend in the window, age at its end.
  for (const column of CONTACT_CELL_COLUMNS) if (dimensions.includes(column)) columns.push(sql`${sql.ref(`cu.${column}`)} as ${sql.ref(column)}`);
  const ageAtEnd = ageAtDateSql(sql.ref('cu.birth_date'), source.to);
  columns.push(
    sql`case when s.spend is null then 0 else 1 end as converted`,
    sql`coalesce(s.spend, 0) as value_cents`,
    sql`${ageAtEnd} as raw_age`,
    sql`${plausibleAge(ageAtEnd)} as age`,
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

/** The age as the population's `age` column has it: the raw age when plausible, else null. */
function plausibleAgeOf(rawAge: number | null): number | null {
  return rawAge !== null && rawAge >= MIN_PLAUSIBLE_AGE && rawAge <= MAX_PLAUSIBLE_AGE ? rawAge : null;
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
  return sql`(select ${sql.join([...dimensionColumns, sql`base.converted as converted`, sql`base.value_cents as value_cents`, sql`base.age as age`, sql`base.raw_age as raw_age`])}
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

/**
 * The columns the cell query groups by. A campaign population is grouped by campaign, all
 * three customer columns and the stored age, in the order of `campaign_contacts_by_cell`, so
 * the database reads that index front to back without sorting; the finer groups are merged
 * into the requested cells in code. Attribute columns, when asked for, come last.
 */
function cellGroupColumns(request: AggregationRequest): string[] {
  const attributes = request.dimensions.filter((dimension) => !isBuiltInDimension(dimension)).map((_name, index) => attributeColumn(index));
  const customerColumns =
    request.source.kind === 'campaigns' ? ['campaign_key', ...CONTACT_CELL_COLUMNS] : CONTACT_CELL_COLUMNS.filter((column) => request.dimensions.includes(column));
  return [...customerColumns, 'raw_age', 'converted', ...attributes];
}

/**
 * Per group (converted is part of the key): n, Σ(v − c) and Σ(v − c)² with c the unit-value
 * shift. The converted units' sums about their own shift follow exactly in code
 * (`recentre`), so the query needs no CASE per row.
 */
function cellQuery(request: AggregationRequest, shifts: Shifts, arithmetic: Arithmetic): RawBuilder<Record<string, unknown>> {
  const groupColumns = cellGroupColumns(request).map((column) => sql.ref(`population.${column}`));
  const deviation = term(sql`${VALUE} - ${sql.lit(shifts.unitValue)}`, arithmetic);
  return sql<Record<string, unknown>>`
    select ${sql.join([...groupColumns, sql`count(*) as n`, sql`sum(${deviation}) as value_sum`, sql`sum(${deviation} * ${deviation}) as value_squares`])}
    from (${basePopulation(request.source, request.dimensions)}) population
    group by ${sql.join(groupColumns)}`;
}

/** The requested dimension values of one row of the cell query. */
function cellValuesOf(row: Record<string, unknown>, request: AggregationRequest, age: number | null): string[] {
  let attributeIndex = 0;
  return request.dimensions.map((dimension) => {
    if (dimension === 'age_band') return ageBandOf(age, request.ageEdges);
    if (isBuiltInDimension(dimension)) return String(row[dimension]);
    return String(row[attributeColumn(attributeIndex++)]);
  });
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
 * per cell and age, from ONE GROUP BY over the cells, age and converted (`cellGroupColumns`),
 * with the value sums shifted by `shifts`. Age is part of the grouping key because it costs the
 * database nothing (a campaign's index is in that order; otherwise the rows are sorted once
 * either way) and makes every age statistic exact in code: within a group the age is one
 * number a, so its sums are n·(a − c), n·(a − c)² and, with the value, (a − c)·Σ(v − c′).
 * Runs in exact integer arithmetic, and again in floating point only if a sum overflows.
 * @throws whatever the database throws, other than an overflow
 */
export async function cellAggregates(db: Executor, request: AggregationRequest, shifts: Shifts): Promise<CellAggregates> {
  let arithmetic: Arithmetic = 'exact';
  let rows: Array<Record<string, unknown>>;
  try {
    rows = (await cellQuery(request, shifts, 'exact').execute(db)).rows;
  } catch (error) {
    if (!isOverflow(error)) throw error;
    arithmetic = 'floating';
    rows = (await cellQuery(request, shifts, 'floating').execute(db)).rows;
  }
  return foldCellRows(
    rows.map((row) => groupSums(row, shifts.unitValue, shifts, arithmetic)),
    request,
    shifts,
    arithmetic,
  );
}

export interface CellAggregates {
  cells: CellAggregate[];
  ageCounts: AgeCount[];
  /** Units that did not convert, per age (null: unknown), over the whole population. */
  unconvertedByAge: Map<number | null, number>;
  arithmetic: Arithmetic;
}

const NO_SHIFTS: Shifts = { unitValue: 0, convertedValue: 0, age: 0 };

/** One row of the cell query with its sums about the report's shifts. */
interface GroupSums {
  row: Record<string, unknown>;
  age: number | null;
  n: number;
  conversions: number;
  unitSum: number;
  unitSquares: number;
  convertedSum: number;
  convertedSquares: number;
}

function rawAgeOf(row: Record<string, unknown>): number | null {
  return plausibleAgeOf(row['raw_age'] === null || row['raw_age'] === undefined ? null : toNumber(row['raw_age']));
}

/**
 * Moves Σ(v − from) and Σ(v − from)² over n values to the shift `to`:
 * Σ(v − to) = Σ(v − from) − n·d and Σ(v − to)² = Σ(v − from)² − 2d·Σ(v − from) + n·d², d = to − from.
 * Exact in integer arithmetic (BigInt) when the inputs are exact integers, else in floating point.
 */
function recentre(n: number, sum: number, squares: number, from: number, to: number, arithmetic: Arithmetic): { sum: number; squares: number } {
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

/** A row of the cell query, its sums shifted by `rowShift`, as sums about the report's shifts. */
function groupSums(row: Record<string, unknown>, rowShift: number, shifts: Shifts, arithmetic: Arithmetic): GroupSums {
  const n = toNumber(row['n']);
  const converted = toNumber(row['converted']) === 1;
  const unit = recentre(n, toNumber(row['value_sum']), toNumber(row['value_squares']), rowShift, shifts.unitValue, arithmetic);
  const convertedSums = converted ? recentre(n, toNumber(row['value_sum']), toNumber(row['value_squares']), rowShift, shifts.convertedValue, arithmetic) : { sum: 0, squares: 0 };
  return {
    row,
    age: rawAgeOf(row),
    n,
    conversions: converted ? n : 0,
    unitSum: unit.sum,
    unitSquares: unit.squares,
    convertedSum: convertedSums.sum,
    convertedSquares: convertedSums.squares,
  };
}

/**
 * The shifts and the finest cells of the population, in one pass of the database when that
 * pass can be exact: the cell query runs unshifted, the population totals (and so the shifts,
 * `shiftsFromTotals`) are summed from its rows, and each row's sums are re-centred exactly
 * (`recentre`). The result is the one `populationTotals` followed by `cellAggregates` gives,
 * which is the fallback when an unshifted sum overflows in the database or is beyond 2^53 (not
 * exact as a number here).
 * @throws whatever the database throws, other than an overflow
 */
export async function shiftsAndCellAggregates(db: Executor, request: AggregationRequest): Promise<CellAggregates & { shifts: Shifts }> {
  let rows: Array<Record<string, unknown>> | null;
  try {
    rows = (await cellQuery(request, NO_SHIFTS, 'exact').execute(db)).rows;
  } catch (error) {
    if (!isOverflow(error)) throw error;
    rows = null;
  }
  const exact = (row: Record<string, unknown>) => ['n', 'value_sum', 'value_squares'].every((column) => Number.isSafeInteger(toNumber(row[column])));
  if (rows === null || !rows.every(exact)) {
    const shifts = shiftsFromTotals(await populationTotals(db, request.source));
    return { shifts, ...(await cellAggregates(db, request, shifts)) };
  }
  let n = 0n;
  let conversions = 0n;
  let valueCents = 0n;
  let convertedValueCents = 0n;
  let agedUnits = 0n;
  let ageTotal = 0n;
  for (const row of rows) {
    const count = BigInt(toNumber(row['n']));
    const sum = BigInt(toNumber(row['value_sum']));
    n += count;
    valueCents += sum;
    if (toNumber(row['converted']) === 1) {
      conversions += count;
      convertedValueCents += sum;
    }
    const age = rawAgeOf(row);
    if (age !== null) {
      agedUnits += count;
      ageTotal += count * BigInt(age);
    }
  }
  const shifts = shiftsFromTotals({
    n: Number(n),
    conversions: Number(conversions),
    valueCents: Number(valueCents),
    convertedValueCents: Number(convertedValueCents),
    agedUnits: Number(agedUnits),
    ageTotal: Number(ageTotal),
  });
  return { shifts, ...foldCellRows(rows.map((row) => groupSums(row, 0, shifts, 'exact')), request, shifts, 'exact') };
}

/** Merges the rows of the cell query into the requested cells and the counts per cell and age. */
function foldCellRows(groups: readonly GroupSums[], request: AggregationRequest, shifts: Shifts, arithmetic: Arithmetic): CellAggregates {
  const cells = new Map<string, CellAggregate>();
  const ageCounts = new Map<string, AgeCount>();
  const unconvertedByAge = new Map<number | null, number>();
  for (const { row, age, n, conversions, unitSum, unitSquares, convertedSum, convertedSquares } of groups) {
    const values = cellValuesOf(row, request, age);
    const key = JSON.stringify(values);
    let cell = cells.get(key);
    if (!cell) cells.set(key, (cell = emptyCell(values)));
    cell.n += n;
    cell.conversions += conversions;
    cell.unitValue = { n: cell.n, sumOfShifted: cell.unitValue.sumOfShifted + unitSum, sumOfSquaredShifted: cell.unitValue.sumOfSquaredShifted + unitSquares };
    cell.convertedValue = {
      n: cell.conversions,
      sumOfShifted: cell.convertedValue.sumOfShifted + convertedSum,
      sumOfSquaredShifted: cell.convertedValue.sumOfSquaredShifted + convertedSquares,
    };
    const ageKey = `${key}|${age ?? ''}`;
    const ageCount = ageCounts.get(ageKey);
    if (ageCount) ageCount.count += n;
    else ageCounts.set(ageKey, { values, age, count: n });
    unconvertedByAge.set(age, (unconvertedByAge.get(age) ?? 0) + n - conversions);
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
  return { cells: sorted, ageCounts: [...ageCounts.values()], unconvertedByAge, arithmetic: sorted.every(isExact) ? arithmetic : 'floating' };
}

/**
 * Units in the named age bands, tested on the stored age itself rather than on the band label
 * computed for every unit: the same units, at a fraction of the cost.
 */
function inAgeBands(labels: readonly string[], edges: readonly number[]): RawBuilder<unknown> {
  const rawAge = sql.ref('population.raw_age');
  const tests = ageBands(edges)
    .filter((band) => labels.includes(band.label))
    // Ages outside the plausible range are of unknown age whatever band their number falls in.
    .map((band) => sql`${rawAge} between ${sql.lit(Math.max(band.low, MIN_PLAUSIBLE_AGE))} and ${sql.lit(Math.min(band.high, MAX_PLAUSIBLE_AGE))}`);
  if (labels.includes(UNKNOWN)) tests.push(sql`${rawAge} is null or ${rawAge} < ${sql.lit(MIN_PLAUSIBLE_AGE)} or ${rawAge} > ${sql.lit(MAX_PLAUSIBLE_AGE)}`);
  return tests.length === 0 ? sql`1 = 0` : sql`(${sql.join(tests, sql` or `)})`;
}

/** Count of the value metric's units per finest cell and value (in cents). */
export interface ValueCount {
  values: string[];
  valueCents: number;
  count: number;
}

/** Which units the value distribution is read for: all of them, or those in the listed dimension values. */
export type ValueDistributionScope = 'all' | ReadonlyArray<{ dimensionIndex: number; values: readonly string[] }>;

/**
 * Counts of the value metric's units per finest cell and value. Reading every value costs a
 * sort of the whole population, so the caller may limit it to the dimension values whose
 * groups are small enough to be described value by value (`scope`). Given the population's
 * `cells` (from `cellAggregates`), a per-unit read leaves out the unconverted units worth 0
 * (most of them) and counts them from the cells instead, so only the others are sorted.
 */
export async function valueDistribution(
  db: Executor,
  request: AggregationRequest,
  scope: ValueDistributionScope = 'all',
  cells?: readonly CellAggregate[],
): Promise<ValueCount[]> {
  if (scope !== 'all' && scope.length === 0) return [];
  const dimensions = request.dimensions.map((_dimension, index) => sql.ref(`population.${dimensionColumn(index)}`));
  const zerosFromCells = cells !== undefined && request.valueBasis === 'per_unit';
  const conditions: Array<RawBuilder<unknown>> = [];
  if (request.valueBasis === 'per_conversion') conditions.push(sql`${CONVERTED} = 1`);
  if (zerosFromCells) conditions.push(sql`(${CONVERTED} = 1 or ${VALUE} <> 0)`);
  if (scope !== 'all') {
    const inScope = scope.map(({ dimensionIndex, values }) =>
      request.dimensions[dimensionIndex] === 'age_band' ? inAgeBands(values, request.ageEdges) : sql`${dimensions[dimensionIndex]} in (${sql.join(values)})`,
    );
    conditions.push(sql`(${sql.join(inScope, sql` or `)})`);
  }
  const { rows } = await sql<Record<string, unknown>>`
    select ${sql.join([...dimensions, sql`${CONVERTED} as converted`, sql`${VALUE} as value_cents`, sql`count(*) as count`])}
    from ${population(request)}
    ${conditions.length > 0 ? sql`where ${sql.join(conditions, sql` and `)}` : sql``}
    group by ${sql.join([...dimensions, CONVERTED, VALUE])}`.execute(db);
  const counts = new Map<string, ValueCount>();
  const add = (values: string[], valueCents: number, count: number) => {
    const key = `${JSON.stringify(values)}|${valueCents}`;
    const known = counts.get(key);
    if (known) known.count += count;
    else counts.set(key, { values, valueCents, count });
  };
  const zeros = new Map<string, { values: string[]; count: number }>();
  if (zerosFromCells) {
    const inScope = (values: readonly string[]) => scope === 'all' || scope.some(({ dimensionIndex, values: chosen }) => chosen.includes(values[dimensionIndex] as string));
    for (const cell of cells) if (inScope(cell.values)) zeros.set(JSON.stringify(cell.values), { values: cell.values, count: cell.n - cell.conversions });
  }
  for (const row of rows) {
    const values = request.dimensions.map((_dimension, index) => String(row[dimensionColumn(index)]));
    const count = toNumber(row['count']);
    const zero = zeros.get(JSON.stringify(values));
    if (zero !== undefined && toNumber(row['converted']) !== 1) zero.count -= count;
    add(values, toNumber(row['value_cents']), count);
  }
  for (const { values, count } of zeros.values()) {
    if (count < 0) throw new Error(`the unconverted units of cell ${JSON.stringify(values)} do not add up (${count}): the data changed between two reads`);
    if (count > 0) add(values, 0, count);
  }
  return [...counts.values()];
}

/** Count of the value metric's units with one value (in cents), over the whole population. */
export interface PopulationValueCount {
  valueCents: number;
  count: number;
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

/** Count of the value metric's units with one value (cents) in one bin of the age axis; ageBin null: age unknown. */
export interface AgeBinValueCount {
  ageBin: number | null;
  valueCents: number;
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

/**
 * The same bin index as `binIndexSql`, in code: exact for whole numbers, because the floored
 * quotient is corrected against the integer products.
 * @example binIndex(25, { low: 0, high: 100, bins: 4 }) // 1
 */
export function binIndex(value: number, axis: GridAxis): number {
  if (axis.high <= axis.low || axis.bins === 1 || value <= axis.low) return 0;
  if (value >= axis.high) return axis.bins - 1;
  const numerator = (value - axis.low) * axis.bins;
  const width = axis.high - axis.low;
  let index = Math.floor(numerator / width);
  if (index * width > numerator) index -= 1;
  else if ((index + 1) * width <= numerator) index += 1;
  return index;
}

function requireIntegerAxis(name: string, axis: GridAxis): void {
  if (!Number.isSafeInteger(axis.low) || !Number.isSafeInteger(axis.high) || !Number.isSafeInteger(axis.bins) || axis.bins < 1 || axis.high < axis.low) {
    throw new Error(`the ${name} axis of the grid needs whole-number bounds and a positive number of bins, got ${JSON.stringify(axis)}`);
  }
}

/**
 * Counts of the value metric's units per value (cents) and bin of the age axis, over the whole
 * population: the data of the population's value histogram (summed over the age bins,
 * `valueCountsOf`) and of the age × value grid (binned by value once the value axis is known,
 * `gridCountsOf`). Ages are binned in SQL with integer arithmetic (`binIndexSql`), so SQLite
 * and PostgreSQL place every unit in the same bin; with no age axis every unit counts as of
 * unknown age. At most (bins + 1) rows per distinct value.
 *
 * Most units of a per-unit value did not convert and are worth 0. The query leaves those out,
 * so it sorts only the converted units and the rare unconverted ones with another value; the
 * zeros per age bin are what remains of `unconvertedByAge` (from the cell query) after them.
 * @throws Error when the axis does not have whole-number bounds; whatever the database throws
 * @example
 * await valueCountsByAgeBin(db, request, { low: 18, high: 90, bins: 12 }, cellAggregates.unconvertedByAge);
 * // [{ ageBin: 0, valueCents: 0, count: 40 }, { ageBin: null, valueCents: 1250, count: 2 }, …]
 */
export async function valueCountsByAgeBin(
  db: Executor,
  request: Pick<AggregationRequest, 'source' | 'valueBasis'>,
  ageAxis: GridAxis | null,
  unconvertedByAge: ReadonlyMap<number | null, number>,
): Promise<AgeBinValueCount[]> {
  if (ageAxis !== null) requireIntegerAxis('age', ageAxis);
  const ageBin = ageAxis === null ? sql`cast(null as integer)` : sql`case when ${AGE} is null then null else ${binIndexSql(AGE, ageAxis)} end`;
  const perUnit = request.valueBasis === 'per_unit';
  const { rows } = await sql<Record<string, unknown>>`
    select binned.converted as converted, binned.age_bin as age_bin, binned.value_cents as value_cents, count(*) as count
    from (
      select ${CONVERTED} as converted, ${ageBin} as age_bin, ${VALUE} as value_cents
      from (${basePopulation(request.source, [])}) population
      where ${CONVERTED} = 1 ${perUnit ? sql`or ${VALUE} <> 0` : sql``}
    ) binned
    group by binned.converted, binned.age_bin, binned.value_cents`.execute(db);
  const binOf = (age: number | null) => (age === null || ageAxis === null ? null : binIndex(age, ageAxis));
  const counts: AgeBinValueCount[] = [];
  const zeros = new Map<number | null, number>();
  if (perUnit) for (const [age, count] of unconvertedByAge) zeros.set(binOf(age), (zeros.get(binOf(age)) ?? 0) + count);
  for (const row of rows) {
    const entry = {
      ageBin: row['age_bin'] === null || row['age_bin'] === undefined ? null : toNumber(row['age_bin']),
      valueCents: toNumber(row['value_cents']),
      count: toNumber(row['count']),
    };
    if (toNumber(row['converted']) !== 1) zeros.set(entry.ageBin, (zeros.get(entry.ageBin) ?? 0) - entry.count);
    counts.push(entry);
  }
  for (const [ageBin, count] of zeros) {
    if (count < 0) throw new Error(`the unconverted units of age bin ${ageBin} do not add up (${count}): the data changed between two reads`);
    if (count > 0) counts.push({ ageBin, valueCents: 0, count });
  }
  return counts;
}

/** Counts per value over the whole population, in value order, from `valueCountsByAgeBin`'s rows. */
export function valueCountsOf(counts: readonly AgeBinValueCount[]): PopulationValueCount[] {
  const byValue = new Map<number, number>();
  for (const entry of counts) byValue.set(entry.valueCents, (byValue.get(entry.valueCents) ?? 0) + entry.count);
  return [...byValue].map(([valueCents, count]) => ({ valueCents, count })).sort((left, right) => left.valueCents - right.valueCents);
}

/**
 * The occupied cells of the age × value grid from `valueCountsByAgeBin`'s rows (binned on
 * `axes.age`), the values binned on `axes.valueCents`; units of unknown age are left out.
 * @throws Error when the value axis does not have whole-number bounds
 */
export function gridCountsOf(counts: readonly AgeBinValueCount[], axes: AgeValueGridAxes): AgeValueBinCount[] {
  requireIntegerAxis('value', axes.valueCents);
  const grid = new Map<string, AgeValueBinCount>();
  for (const entry of counts) {
    if (entry.ageBin === null) continue;
    const valueBin = binIndex(entry.valueCents, axes.valueCents);
    const key = `${entry.ageBin}|${valueBin}`;
    const cell = grid.get(key);
    if (cell) cell.count += entry.count;
    else grid.set(key, { ageBin: entry.ageBin, valueBin, count: entry.count });
  }
  return [...grid.values()].sort((left, right) => left.ageBin - right.ageBin || left.valueBin - right.valueBin);
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
    // One probe per customer into the (customer, campaign) index, rather than a sort of every contact.
    const contacted = toNumber(
      (
        await sql<{ n: unknown }>`select count(*) as n from customers c where exists (
          select 1 from campaign_contacts cc where cc.customer_id = c.customer_id and cc.campaign_id in (${sql.join(source.campaignIds)}))`.execute(db)
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
