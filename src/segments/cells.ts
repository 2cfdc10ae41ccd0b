/**
 * The cells of a report: ONE GROUP BY over the finest cells (all dimensions together, and age;
 * for campaigns in the order of their covering index, so nothing is sorted) with n,
 * conversions and the shifted sums Σ(v − c), Σ(v − c)² for both value bases; the age sums,
 * the age distribution and the co-moments of age and value follow from it exactly in code.
 */
import { sql, type RawBuilder } from 'kysely';
import type { Executor } from '../db/executor.js';
import { ageBandOf, isBuiltInDimension } from './dimensions.js';
import { CONTACT_CELL_COLUMNS, VALUE, attributeColumn, basePopulation, plausibleAgeOf, populationTotals, toNumber, type AggregationRequest } from './population.js';
import {
  NO_SHIFTS,
  exactTotals,
  recentre,
  shiftsFromTotals,
  type Arithmetic,
  type PairedShiftedSums,
  type ShiftedSums,
  type Shifts,
} from './shifted-sums.js';
import { compareLabelLists, compareText } from './text-order.js';

/** One finest cell: a combination of one value per dimension. */
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

export interface CellAggregate {
  /** One value per dimension, in the request's order. */
  labels: string[];
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
function cellLabelsOf(row: Record<string, unknown>, request: AggregationRequest, age: number | null): string[] {
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
  labels: string[];
  age: number | null;
  count: number;
}

function emptyCell(values: string[]): CellAggregate {
  return {
    labels: values,
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
  /** Reports over several campaigns: units and conversions per cell and campaign; otherwise empty. */
  strata: CampaignCellCount[];
}

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

function plausibleAgeOfRow(row: Record<string, unknown>): number | null {
  return plausibleAgeOf(row['raw_age'] === null || row['raw_age'] === undefined ? null : toNumber(row['raw_age']));
}

/** A row of the cell query, its sums shifted by `rowShift`, as sums about the report's shifts. */
function groupSums(row: Record<string, unknown>, rowShift: number, shifts: Shifts, arithmetic: Arithmetic): GroupSums {
  const n = toNumber(row['n']);
  const converted = toNumber(row['converted']) === 1;
  const unit = recentre(n, toNumber(row['value_sum']), toNumber(row['value_squares']), rowShift, shifts.unitValue, arithmetic);
  const convertedSums = converted ? recentre(n, toNumber(row['value_sum']), toNumber(row['value_squares']), rowShift, shifts.convertedValue, arithmetic) : { sum: 0, squares: 0 };
  return {
    row,
    age: plausibleAgeOfRow(row),
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
  const shifts = shiftsFromTotals(
    exactTotals(rows.map((row) => ({ n: toNumber(row['n']), converted: toNumber(row['converted']) === 1, valueSum: toNumber(row['value_sum']), age: plausibleAgeOfRow(row) }))),
  );
  return { shifts, ...foldCellRows(rows.map((row) => groupSums(row, 0, shifts, 'exact')), request, shifts, 'exact') };
}

/** Merges the rows of the cell query into the requested cells and the counts per cell and age. */
function foldCellRows(groups: readonly GroupSums[], request: AggregationRequest, shifts: Shifts, arithmetic: Arithmetic): CellAggregates {
  const cells = new Map<string, CellAggregate>();
  const ageCounts = new Map<string, AgeCount>();
  const unconvertedByAge = new Map<number | null, number>();
  const stratified = request.source.kind === 'campaigns' && request.source.campaignIds.length > 1;
  const strata = new Map<string, CampaignCellCount>();
  for (const { row, age, n, conversions, unitSum, unitSquares, convertedSum, convertedSquares } of groups) {
    const values = cellLabelsOf(row, request, age);
    const key = JSON.stringify(values);
    if (stratified) {
      const campaign = String(row['campaign_key']);
      const stratumKey = JSON.stringify([campaign, values]);
      const stratum = strata.get(stratumKey);
      if (stratum) {
        stratum.n += n;
        stratum.conversions += conversions;
      } else strata.set(stratumKey, { campaign, labels: values, n, conversions });
    }
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
    else ageCounts.set(ageKey, { labels: values, age, count: n });
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
  const sorted = [...cells.values()].sort((left, right) => compareLabelLists(left.labels, right.labels));
  // SQLite turns an overflowing integer product into a float without an error; a sum beyond
  // 2^53 cannot be exact in JavaScript either. Either way the result is floating point.
  const strataInOrder = [...strata.values()].sort((left, right) => compareText(left.campaign, right.campaign) || compareLabelLists(left.labels, right.labels));
  return { cells: sorted, ageCounts: [...ageCounts.values()], unconvertedByAge, arithmetic: sorted.every(isExact) ? arithmetic : 'floating', strata: strataInOrder };
}
