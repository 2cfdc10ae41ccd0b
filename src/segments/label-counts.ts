/**
 * How many distinct labels each dimension of a report has in its population, in one pass.
 * A dimension with thousands of labels (an identifier uploaded as an attribute) would make
 * thousands of segments, each too small to say anything, and a snapshot and page of many
 * megabytes; the report service refuses such a report before building anything.
 */
import { sql } from 'kysely';
import type { Executor } from '../db/executor.js';
import { dimensionColumn, population, toNumber, type AggregationRequest } from './population.js';

/** The distinct labels per dimension, in the order of `request.dimensions`. */
export async function labelCounts(db: Executor, request: Pick<AggregationRequest, 'source' | 'dimensions' | 'ageEdges'>): Promise<number[]> {
  if (request.dimensions.length === 0) return [];
  const counts = request.dimensions.map((_dimension, index) => sql`count(distinct ${sql.ref(`population.${dimensionColumn(index)}`)}) as ${sql.ref(`c${index}`)}`);
  const { rows } = await sql<Record<string, unknown>>`select ${sql.join(counts)} from ${population(request)}`.execute(db);
  const row = rows[0] ?? {};
  return request.dimensions.map((_dimension, index) => toNumber(row[`c${index}`]));
}
