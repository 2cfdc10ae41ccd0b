/**
 * How many distinct labels each dimension of a report has in its population, in one pass.
 * A dimension with thousands of labels (an identifier uploaded as an attribute) would make
 * thousands of segments, each too small to say anything, and a snapshot and page of many
 * megabytes; the report service refuses such a report before building anything.
 */
import { sql } from 'kysely';
import type { Executor } from '../db/executor.js';
import { ageBands, isBuiltInDimension } from './dimensions.js';
import { dimensionColumn, population, toNumber, type AggregationRequest } from './population.js';

/**
 * For each dimension, a number no smaller than its distinct labels in any population, from
 * small reads that stop once past `limit`: the age bands from the definition, an attribute's
 * values from the index on (name, value), a customer column's values from the customers (a
 * contact carries its customer's values); each plus one for `unknown`. A refresh counts the
 * population's labels exactly (`labelCounts`) only when a bound is past the limit, so the
 * usual report pays for no extra pass over its population.
 */
export async function labelCountBounds(db: Executor, request: Pick<AggregationRequest, 'dimensions' | 'ageEdges'>, limit: number): Promise<number[]> {
  const bounds: number[] = [];
  for (const dimension of request.dimensions) {
    if (dimension === 'age_band') {
      bounds.push(ageBands(request.ageEdges).length + 1);
      continue;
    }
    const values = isBuiltInDimension(dimension)
      ? sql`select distinct ${sql.ref(dimension)} from customers limit ${sql.lit(limit + 1)}`
      : sql`select distinct value from customer_attributes where name = ${dimension} limit ${sql.lit(limit + 1)}`;
    const { rows } = await sql<Record<string, unknown>>`select count(*) as labels from (${values}) bounded`.execute(db);
    bounds.push(toNumber(rows[0]?.['labels']) + 1);
  }
  return bounds;
}

/** The distinct labels per dimension, in the order of `request.dimensions`. */
export async function labelCounts(db: Executor, request: Pick<AggregationRequest, 'source' | 'dimensions' | 'ageEdges'>): Promise<number[]> {
  if (request.dimensions.length === 0) return [];
  const counts = request.dimensions.map((_dimension, index) => sql`count(distinct ${sql.ref(`population.${dimensionColumn(index)}`)}) as ${sql.ref(`c${index}`)}`);
  const { rows } = await sql<Record<string, unknown>>`select ${sql.join(counts)} from ${population(request)}`.execute(db);
  const row = rows[0] ?? {};
  return request.dimensions.map((_dimension, index) => toNumber(row[`c${index}`]));
}
