/**
 * Counts per (cell, value) of the value metric, from which the medians, quartiles and modes
 * of the value in each segment are read.
 */
import { sql, type RawBuilder } from 'kysely';
import type { Executor } from '../db/executor.js';
import type { CellAggregate } from './cells.js';
import { MAX_PLAUSIBLE_AGE, MIN_PLAUSIBLE_AGE, UNKNOWN, ageBands } from './dimensions.js';
import { CONVERTED, UNITS, VALUE, dimensionColumn, population, toNumber, type AggregationRequest } from './population.js';

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
  labels: string[];
  valueCents: number;
  count: number;
}

/** Which units the value distribution is read for: all of them, or those in the listed dimension values. */
export type ValueDistributionScope = 'all' | ReadonlyArray<{ dimensionIndex: number; labels: readonly string[] }>;

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
    const inScope = scope.map(({ dimensionIndex, labels: values }) =>
      request.dimensions[dimensionIndex] === 'age_band' ? inAgeBands(values, request.ageEdges) : sql`${dimensions[dimensionIndex]} in (${sql.join(values)})`,
    );
    conditions.push(sql`(${sql.join(inScope, sql` or `)})`);
  }
  const { rows } = await sql<Record<string, unknown>>`
    select ${sql.join([...dimensions, sql`${CONVERTED} as converted`, sql`${VALUE} as value_cents`, sql`sum(${UNITS}) as count`])}
    from ${population(request)}
    ${conditions.length > 0 ? sql`where ${sql.join(conditions, sql` and `)}` : sql``}
    group by ${sql.join([...dimensions, CONVERTED, VALUE])}`.execute(db);
  const counts = new Map<string, ValueCount>();
  const add = (values: string[], valueCents: number, count: number) => {
    const key = `${JSON.stringify(values)}|${valueCents}`;
    const known = counts.get(key);
    if (known) known.count += count;
    else counts.set(key, { labels: values, valueCents, count });
  };
  const zeros = new Map<string, { labels: string[]; count: number }>();
  if (zerosFromCells) {
    const inScope = (values: readonly string[]) => scope === 'all' || scope.some(({ dimensionIndex, labels: chosen }) => chosen.includes(values[dimensionIndex] as string));
    for (const cell of cells) if (inScope(cell.labels)) zeros.set(JSON.stringify(cell.labels), { labels: cell.labels, count: cell.n - cell.conversions });
  }
  for (const row of rows) {
    const values = request.dimensions.map((_dimension, index) => String(row[dimensionColumn(index)]));
    const count = toNumber(row['count']);
    const zero = zeros.get(JSON.stringify(values));
    if (zero !== undefined && toNumber(row['converted']) !== 1) zero.count -= count;
    add(values, toNumber(row['value_cents']), count);
  }
  for (const { labels: values, count } of zeros.values()) {
    if (count < 0) throw new Error(`the unconverted units of cell ${JSON.stringify(values)} do not add up (${count}): the data changed between two reads`);
    if (count > 0) add(values, 0, count);
  }
  return [...counts.values()];
}
