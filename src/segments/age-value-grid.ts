/**
 * Counts per value and age bin over the whole population, from which its value histogram and
 * its age × value grid (binned scatter) follow in code; and the bin arithmetic they share.
 */
import { sql, type RawBuilder } from 'kysely';
import type { Executor } from '../db/executor.js';
import { AGE, CONVERTED, UNITS, VALUE, basePopulation, toNumber, type AggregationRequest } from './population.js';

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

/** @throws Error naming the axis when its bounds are not whole numbers or it has no bins */
export function requireIntegerAxis(name: string, axis: GridAxis): void {
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
    select binned.converted as converted, binned.age_bin as age_bin, binned.value_cents as value_cents, sum(binned.units) as count
    from (
      select ${CONVERTED} as converted, ${ageBin} as age_bin, ${VALUE} as value_cents, ${UNITS} as units
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

/** What a report takes from its value counts per age bin: the counts per value, and the grid's cells once its axes are known. */
export interface ValuesByAge {
  /** As `valueCountsOf`. */
  wholeValueCounts: PopulationValueCount[];
  /** As `gridCountsOf`. @throws Error when the value axis does not have whole-number bounds */
  gridCounts(axes: AgeValueGridAxes): AgeValueBinCount[];
}

/** `valueCountsOf` and `gridCountsOf` of `valueCountsByAgeBin`'s rows. */
export function valuesByAgeOf(counts: readonly AgeBinValueCount[]): ValuesByAge {
  return { wholeValueCounts: valueCountsOf(counts), gridCounts: (axes) => gridCountsOf(counts, axes) };
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
