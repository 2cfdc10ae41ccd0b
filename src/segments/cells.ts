/**
 * The cells of a report: ONE GROUP BY over the finest cells (all dimensions together, and age;
 * for campaigns in the order of their covering index, so nothing is sorted) with n,
 * conversions and the shifted sums Σ(v − c), Σ(v − c)² for both value bases; the age sums,
 * the age distribution and the co-moments of age and value follow from it exactly in code.
 */
import { sql, type RawBuilder } from 'kysely';
import type { Executor } from '../db/executor.js';
import { ageBandOf, isBuiltInDimension } from './dimensions.js';
import { CONTACT_CELL_COLUMNS, UNITS, VALUE, attributeColumn, basePopulation, plausibleAgeOf, toNumber, type AggregationRequest } from './population.js';
import { exactTotals, shiftsFromTotals, type Arithmetic, type MoneySums, type PairedShiftedSums, type ShiftedSums, type Shifts } from './shifted-sums.js';
import { compareLabelLists, compareText } from './text-order.js';

/**
 * Units and conversions of one cell within one campaign, for reports over several campaigns,
 * whose comparisons are made within campaign.
 */
export interface CampaignCellCount {
  campaign: string;
  labels: string[];
  n: number;
  conversions: number;
}

/** One finest cell: a combination of one value per dimension. */
export interface CellAggregate {
  /** One value per dimension, in the request's order. */
  labels: string[];
  n: number;
  conversions: number;
  /** Value (cents) of every unit, exact sums. */
  unitValue: MoneySums;
  /** Value (cents) of the converted units, exact sums. */
  convertedValue: MoneySums;
  /** Ages of the units with a plausible age, shifted by `shifts.age`. */
  age: ShiftedSums;
  /** Age and value (of the report's value basis) of the units with a plausible age, about the report's shifts. */
  ageValue: PairedShiftedSums;
}

/**
 * The columns the cell query groups by. A campaign population is grouped by campaign, all
 * three customer columns, the age as stored, the arm and the outcome: the order of
 * contact_value_counts' key, so the database reads it front to back without sorting (the arm is grouped even when the source keeps one arm, since
 * leaving it out would make the database sort). The finer groups are merged into the requested
 * cells in code. Attribute columns, when asked for, come last.
 */
function cellGroupColumns(request: AggregationRequest): string[] {
  const attributes = request.dimensions.filter((dimension) => !isBuiltInDimension(dimension)).map((_name, index) => attributeColumn(index));
  if (request.source.kind === 'campaigns') return ['campaign_key', ...CONTACT_CELL_COLUMNS, 'age_key', 'holdout', 'converted', ...attributes];
  return [...CONTACT_CELL_COLUMNS.filter((column) => request.dimensions.includes(column)), 'age_key', 'converted', ...attributes];
}

/**
 * Per group (converted is part of the key): n, Σv and Σv² in 64-bit integers, the fast and
 * usual way, each row weighed by the units it stands for (n = Σ units, Σv = Σ units·v). A sum beyond 2^63 makes the database raise an overflow (SQLite "integer overflow",
 * PostgreSQL "bigint out of range"), or SQLite turns an overflowing product into a float; a sum
 * beyond 2^53 is not exact as a JavaScript number. Either way `exactCellQuery` runs instead.
 */
function cellQuery(request: AggregationRequest): RawBuilder<Record<string, unknown>> {
  const groupColumns = cellGroupColumns(request).map((column) => sql.ref(`population.${column}`));
  return sql<Record<string, unknown>>`
    select ${sql.join([...groupColumns, sql`sum(${UNITS}) as n`, sql`sum(${UNITS} * ${VALUE}) as value_sum`, sql`sum(${UNITS} * ${VALUE} * ${VALUE}) as value_squares`])}
    from (${basePopulation(request.source, request.dimensions)}) population
    group by ${sql.join(groupColumns)}`;
}

/**
 * Money in cents is split into four 16-bit parts v = Σ pᵢ·2^(16i) (cents are never negative, and
 * below 2^63), so that every product pᵢ·pⱼ is below 2^32. Weighed by the row's units u, the sums
 * are Σ u·pᵢ < U·2^16 and Σ u·pᵢ·pⱼ < U·2^32, where U is the units of the whole group, and each
 * row's term u·pᵢ·pⱼ (evaluated left to right, so (u·pᵢ)·pⱼ, whose partial product is smaller
 * still) is at most its group's sum: while a group stands for fewer than 2^31 units every term
 * and every sum stays inside a 64-bit integer on both engines, whether its rows are single
 * units or kept counts. The sums come back as text and are put together exactly in BigInt
 * (`moneySumsOfExactRow`). The same SQL runs on SQLite and PostgreSQL.
 */
const PART_BITS = 16;
const PARTS = 4;
const PART_PAIRS: Array<[number, number]> = [];
for (let first = 0; first < PARTS; first++) for (let second = first; second < PARTS; second++) PART_PAIRS.push([first, second]);

function valuePart(index: number): RawBuilder<unknown> {
  return sql`((cast(${VALUE} as bigint) >> ${sql.lit(index * PART_BITS)}) & ${sql.lit(2 ** PART_BITS - 1)})`;
}

function exactCellQuery(request: AggregationRequest): RawBuilder<Record<string, unknown>> {
  const groupColumns = cellGroupColumns(request).map((column) => sql.ref(`population.${column}`));
  const partSums = Array.from({ length: PARTS }, (_unused, index) => sql`cast(sum(${UNITS} * ${valuePart(index)}) as text) as ${sql.ref(`p${index}`)}`);
  const productSums = PART_PAIRS.map(
    ([first, second]) => sql`cast(sum(${UNITS} * ${valuePart(first)} * ${valuePart(second)}) as text) as ${sql.ref(`q${first}${second}`)}`,
  );
  return sql<Record<string, unknown>>`
    select ${sql.join([...groupColumns, sql`sum(${UNITS}) as n`, ...partSums, ...productSums])}
    from (${basePopulation(request.source, request.dimensions)}) population
    group by ${sql.join(groupColumns)}`;
}

function bigIntOf(value: unknown): bigint {
  if (value === null || value === undefined) return 0n;
  if (typeof value === 'bigint') return value;
  const text = String(value).trim();
  if (!/^-?\d+$/.test(text)) throw new Error(`the database returned a sum that is not a whole number: ${text}`);
  return BigInt(text);
}

/** Σv and Σv² of one row of the exact cell query: Σv = Σ 2^(16i)·Σpᵢ, Σv² = Σ 2^(16(i+j))·(i = j ? 1 : 2)·Σpᵢpⱼ. */
function moneySumsOfExactRow(row: Record<string, unknown>): { sum: bigint; squares: bigint } {
  let sum = 0n;
  for (let index = 0; index < PARTS; index++) sum += bigIntOf(row[`p${index}`]) << BigInt(index * PART_BITS);
  let squares = 0n;
  for (const [first, second] of PART_PAIRS) {
    const weight = first === second ? 1n : 2n;
    squares += (weight * bigIntOf(row[`q${first}${second}`])) << BigInt((first + second) * PART_BITS);
  }
  return { sum, squares };
}

function moneySumsOfRow(row: Record<string, unknown>): { sum: bigint; squares: bigint } {
  return { sum: bigIntOf(toNumber(row['value_sum'])), squares: bigIntOf(toNumber(row['value_squares'])) };
}

/** The requested dimension values of one row of the cell query (`bandOf`: `ageBandOf` for the request's edges). */
function cellLabelsOf(row: Record<string, unknown>, request: AggregationRequest, age: number | null, bandOf: (age: number | null) => string): string[] {
  let attributeIndex = 0;
  return request.dimensions.map((dimension) => {
    if (dimension === 'age_band') return bandOf(age);
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
  labels: string[];
  age: number | null;
  count: number;
}

/** A cell with no units yet: the start of every fold and of simulated cells. */
export function emptyCell(values: string[]): CellAggregate {
  return {
    labels: values,
    n: 0,
    conversions: 0,
    unitValue: { n: 0, sum: 0n, squares: 0n },
    convertedValue: { n: 0, sum: 0n, squares: 0n },
    age: { n: 0, sumOfShifted: 0, sumOfSquaredShifted: 0 },
    ageValue: { n: 0, ageSum: 0, ageSquaredSum: 0, valueSum: 0, valueSquaredSum: 0, crossSum: 0 },
  };
}

export interface CellAggregates {
  cells: CellAggregate[];
  ageCounts: AgeCount[];
  /** Units that did not convert, per age (null: unknown), over the whole population. */
  unconvertedByAge: Map<number | null, number>;
  /** Always `exact`: the money sums are exact integers whatever their size. */
  arithmetic: Arithmetic;
  /** Reports over several campaigns: units and conversions per cell and campaign; otherwise empty. */
  strata: CampaignCellCount[];
}

/**
 * One group of units of one cell, age and outcome with its exact money sums: a row of the cell
 * query, or the kept counts of one such group summed in code (kept-fold.ts). `row` carries the
 * grouped columns `cellLabelsOf` reads (campaign_key, the customer columns, the attributes).
 */
export interface GroupSums {
  row: Record<string, unknown>;
  age: number | null;
  n: number;
  converted: boolean;
  valueSum: bigint;
  valueSquares: bigint;
}

function plausibleAgeOfRow(row: Record<string, unknown>): number | null {
  return plausibleAgeOf(row['age_key'] === null || row['age_key'] === undefined ? null : toNumber(row['age_key']));
}

/**
 * The rows of `query`; inside a transaction under a savepoint, rolled back when it fails.
 * PostgreSQL aborts the whole transaction on an error, and the 64-bit query can overflow on a
 * single row's product (u·v·v, in bigint): without the savepoint the split query could not
 * follow it in the same read.
 */
async function undoneOnError(db: Executor, query: RawBuilder<Record<string, unknown>>): Promise<Array<Record<string, unknown>>> {
  if (!db.isTransaction) return (await query.execute(db)).rows;
  await sql`savepoint cell_query`.execute(db);
  try {
    const { rows } = await query.execute(db);
    await sql`release savepoint cell_query`.execute(db);
    return rows;
  } catch (error) {
    await sql`rollback to savepoint cell_query`.execute(db);
    await sql`release savepoint cell_query`.execute(db);
    throw error;
  }
}

/**
 * The groups of the cell query (cells, age and converted) with exact money sums: the 64-bit
 * query when every sum it returns is exact, else the split query (`exactCellQuery`).
 * @throws whatever the database throws, other than an overflow
 */
async function cellGroups(db: Executor, request: AggregationRequest): Promise<GroupSums[]> {
  let rows: Array<Record<string, unknown>> | null;
  try {
    rows = await undoneOnError(db, cellQuery(request));
  } catch (error) {
    if (!isOverflow(error)) throw error;
    rows = null;
  }
  const exact = (row: Record<string, unknown>) => ['n', 'value_sum', 'value_squares'].every((column) => Number.isSafeInteger(toNumber(row[column])));
  const sumsOf = rows !== null && rows.every(exact) ? moneySumsOfRow : moneySumsOfExactRow;
  if (rows === null || sumsOf === moneySumsOfExactRow) rows = (await exactCellQuery(request).execute(db)).rows;
  return rows.map((row) => {
    const { sum, squares } = sumsOf(row);
    return { row, age: plausibleAgeOfRow(row), n: toNumber(row['n']), converted: toNumber(row['converted']) === 1, valueSum: sum, valueSquares: squares };
  });
}

/**
 * The finest cells of the population with their sufficient statistics, and the count of units
 * per cell and age, from ONE GROUP BY over the cells, age and converted (`cellGroupColumns`).
 * Age is part of the grouping key because it costs the database nothing (a campaign's index is
 * in that order; otherwise the rows are sorted once either way) and makes every age statistic
 * exact in code: within a group the age is one number a, so its sums are n·(a − c), n·(a − c)²
 * and, with the value, (a − c)·Σ(v − c′). Money sums are exact at any size.
 * @throws whatever the database throws, other than an overflow
 */
export async function cellAggregates(db: Executor, request: AggregationRequest, shifts: Shifts): Promise<CellAggregates> {
  return foldCellRows(await cellGroups(db, request), request, shifts);
}

/**
 * The shifts and the finest cells of the population in one pass of the database: the
 * population totals (and so the shifts, `shiftsFromTotals`) are summed exactly from the groups
 * of the cell query. The result is the one `populationTotals` followed by `cellAggregates` gives.
 * @throws whatever the database throws, other than an overflow
 */
export async function shiftsAndCellAggregates(db: Executor, request: AggregationRequest): Promise<CellAggregates & { shifts: Shifts }> {
  const groups = await cellGroups(db, request);
  const shifts = shiftsFromTotals(exactTotals(groups.map((group) => ({ n: group.n, converted: group.converted, valueSum: group.valueSum, age: group.age }))));
  return { shifts, ...foldCellRows(groups, request, shifts) };
}

/**
 * Σ(v − c) and Σ(v − c)² of a group from its exact Σv and Σv², as numbers (for the age–value
 * correlation): the exact value rounded once. In number arithmetic when every term and partial
 * sum is a safe integer (then each step is exact, and so the result), else in BigInt.
 */
function shiftedMoney(n: number, sum: bigint, squares: bigint, shift: number): { sum: number; squares: number } {
  const plainSum = Number(sum);
  const plainSquares = Number(squares);
  const shiftedTotal = n * shift;
  const shiftedSum = plainSum - shiftedTotal;
  const cross = 2 * shift * plainSum;
  const shiftSquares = n * shift * shift;
  const lessCross = plainSquares - cross;
  const shiftedSquares = lessCross + shiftSquares;
  if ([plainSum, plainSquares, shiftedTotal, shiftedSum, 2 * shift, cross, n * shift, shiftSquares, lessCross, shiftedSquares].every(Number.isSafeInteger)) {
    return { sum: shiftedSum, squares: shiftedSquares };
  }
  const count = BigInt(n);
  const c = BigInt(shift);
  return { sum: Number(sum - count * c), squares: Number(squares - 2n * c * sum + count * c * c) };
}

/**
 * The band label of an age, remembered per age (a fold asks for the same few ages many times).
 */
function ageBandLabeller(edges: readonly number[]): (age: number | null) => string {
  const labels = new Map<number | null, string>();
  return (age) => {
    let label = labels.get(age);
    if (label === undefined) labels.set(age, (label = ageBandOf(age, edges)));
    return label;
  };
}

/**
 * Merges the rows of the cell query into the requested cells and the counts per cell and age.
 * The age–value co-moments are floating sums added group by group, so the groups' order is
 * part of the result's last bits: the cell query's (the order of contact_value_counts' key on
 * SQLite), which kept-fold.ts gives too.
 */
function foldCellRows(groups: readonly GroupSums[], request: AggregationRequest, shifts: Shifts): CellAggregates {
  return foldCellGroups(groups, request, shifts).aggregates;
}

/**
 * `foldCellRows`, with the cell of every group: `cellOfGroup[i]` is the index in
 * `aggregates.cells` of the cell `groups[i]` went into.
 */
export function foldCellGroups(groups: readonly GroupSums[], request: AggregationRequest, shifts: Shifts): { aggregates: CellAggregates; cellOfGroup: Int32Array } {
  const cells = new Map<string, CellAggregate>();
  const cellKeyOfGroup: string[] = [];
  const ageCounts = new Map<string, AgeCount>();
  const unconvertedByAge = new Map<number | null, number>();
  const stratified = request.source.kind === 'campaigns' && request.source.campaignIds.length > 1;
  const strata = new Map<string, CampaignCellCount>();
  const bandOf = ageBandLabeller(request.ageEdges);
  const valueShift = request.valueBasis === 'per_unit' ? shifts.unitValue : shifts.convertedValue;
  // Groups that follow one another with the same row object (kept-fold.ts gives one per text
  // key) and age band are of one cell: its labels, keys and entries are looked up once.
  const bandByAge = request.dimensions.includes('age_band');
  let lastRow: Record<string, unknown> | null = null;
  let lastBand = '';
  let lastAge: number | null | undefined;
  let key = '';
  let cell = emptyCell([]);
  let stratum: CampaignCellCount | null = null;
  let ageCount: AgeCount = { labels: [], age: null, count: 0 };
  // The cells' sums are updated in place: every one was made here by `emptyCell`.
  for (const { row, age, n, converted, valueSum, valueSquares } of groups) {
    const conversions = converted ? n : 0;
    const band = bandByAge ? bandOf(age) : '';
    const sameCell = row === lastRow && band === lastBand;
    if (!sameCell) {
      lastRow = row;
      lastBand = band;
      const values = cellLabelsOf(row, request, age, bandOf);
      key = JSON.stringify(values);
      const known = cells.get(key);
      if (known) cell = known;
      else cells.set(key, (cell = emptyCell(values)));
      if (stratified) {
        const campaign = String(row['campaign_key']);
        const stratumKey = JSON.stringify([campaign, values]);
        stratum = strata.get(stratumKey) ?? null;
        if (stratum === null) strata.set(stratumKey, (stratum = { campaign, labels: values, n: 0, conversions: 0 }));
      }
    }
    if (stratum !== null) {
      stratum.n += n;
      stratum.conversions += conversions;
    }
    cellKeyOfGroup.push(key);
    cell.n += n;
    cell.conversions += conversions;
    cell.unitValue.n = cell.n;
    cell.unitValue.sum += valueSum;
    cell.unitValue.squares += valueSquares;
    if (converted) {
      cell.convertedValue.n = cell.conversions;
      cell.convertedValue.sum += valueSum;
      cell.convertedValue.squares += valueSquares;
    }
    if (!sameCell || age !== lastAge) {
      lastAge = age;
      const ageKey = `${key}|${age ?? ''}`;
      const known = ageCounts.get(ageKey);
      if (known) ageCount = known;
      else ageCounts.set(ageKey, (ageCount = { labels: cell.labels, age, count: 0 }));
    }
    ageCount.count += n;
    unconvertedByAge.set(age, (unconvertedByAge.get(age) ?? 0) + n - conversions);
    if (age === null) continue;
    const shiftedAge = age - shifts.age;
    const ageSums = cell.age;
    ageSums.n += n;
    ageSums.sumOfShifted += n * shiftedAge;
    ageSums.sumOfSquaredShifted += n * shiftedAge * shiftedAge;
    const pairs = request.valueBasis === 'per_unit' ? n : conversions;
    if (pairs === 0) continue;
    const money = shiftedMoney(n, valueSum, valueSquares, valueShift);
    const ageValue = cell.ageValue;
    ageValue.n += pairs;
    ageValue.ageSum += pairs * shiftedAge;
    ageValue.ageSquaredSum += pairs * shiftedAge * shiftedAge;
    ageValue.valueSum += money.sum;
    ageValue.valueSquaredSum += money.squares;
    ageValue.crossSum += shiftedAge * money.sum;
  }
  const sorted = [...cells.values()].sort((left, right) => compareLabelLists(left.labels, right.labels));
  const indexOfCell = new Map(sorted.map((cell, index) => [cell, index]));
  const cellOfGroup = Int32Array.from(cellKeyOfGroup, (key) => indexOfCell.get(cells.get(key) as CellAggregate) as number);
  const strataInOrder = [...strata.values()].sort((left, right) => compareText(left.campaign, right.campaign) || compareLabelLists(left.labels, right.labels));
  return { aggregates: { cells: sorted, ageCounts: [...ageCounts.values()], unconvertedByAge, arithmetic: 'exact', strata: strataInOrder }, cellOfGroup };
}
