/**
 * Writes gathered changes into `contact_value_counts`: one multi-row upsert per chunk of keys,
 * then the rows the changes emptied are deleted, so no row with zero units remains.
 */
import { sql } from 'kysely';
import type { Executor } from '../db/executor.js';
import type { CellDeltas, CellKey } from './cell-deltas.js';

export const CELL_KEY_COLUMNS = ['campaign_id', 'region', 'channel', 'customer_type', 'age', 'holdout', 'converted', 'revenue_cents'] as const;

/**
 * Keys per upsert: 9 parameters each keeps a statement far under SQLite's limit of 32,766
 * parameters, and PostgreSQL refuses a statement that touches one row twice, so a key appears
 * once per statement (`CellDeltas` holds each key once).
 */
const KEYS_PER_UPSERT = 1_000;
/** Emptied keys per delete: eight equalities each, joined by OR. */
const KEYS_PER_DELETE = 100;

function chunk<T>(items: readonly T[], size: number): T[][] {
  const chunks: T[][] = [];
  for (let start = 0; start < items.length; start += size) chunks.push(items.slice(start, start + size));
  return chunks;
}

/**
 * Adds every non-zero change of `deltas` to the stored units, in the one fixed key order (two
 * transactions writing the same keys then wait for each other instead of deadlocking), and
 * deletes the rows left with zero units. Returns the number of keys written. Runs inside the
 * caller's transaction; throws only what the driver throws.
 *
 * @example deltas.add(contact, 1); await applyCellDeltas(trx, deltas) // → 1; the contact's row gains a unit
 */
export async function applyCellDeltas(db: Executor, deltas: CellDeltas): Promise<number> {
  const changes = deltas.sorted();
  const emptied: CellKey[] = [];
  for (const part of chunk(changes, KEYS_PER_UPSERT)) {
    const rows = await db
      .insertInto('contact_value_counts')
      .values(part.map(({ key, units }) => ({ ...key, units })))
      .onConflict((conflict) => conflict.columns(CELL_KEY_COLUMNS).doUpdateSet({ units: sql<number>`contact_value_counts.units + excluded.units` }))
      .returning([...CELL_KEY_COLUMNS, 'units'])
      .execute();
    for (const { units, ...key } of rows) if (Number(units) === 0) emptied.push(key);
  }
  await deleteEmptiedRows(db, emptied);
  return changes.length;
}

/** Deletes the rows of `keys` that hold no units. */
export async function deleteEmptiedRows(db: Executor, keys: readonly CellKey[]): Promise<void> {
  for (const part of chunk(keys, KEYS_PER_DELETE)) {
    await db
      .deleteFrom('contact_value_counts')
      .where('units', '=', 0)
      .where((eb) => eb.or(part.map((key) => eb.and(key))))
      .execute();
  }
}
