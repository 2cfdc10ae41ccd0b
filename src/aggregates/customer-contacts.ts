/**
 * The counts of the contacts of some customers, selected and grouped in the database, for the
 * writes that move or remove every contact of a customer at once (a customer's changed values,
 * an erasure), where the contacts are never read one by one.
 */
import { sql } from 'kysely';
import type { Executor } from '../db/executor.js';
import { CELL_KEY_COLUMNS, deleteEmptiedRows } from './apply-deltas.js';
import type { CellDeltas, CellKey } from './cell-deltas.js';
import { groupedContacts } from './grouped-contacts.js';

const CUSTOMERS_PER_STATEMENT = 1_000;

function chunk<T>(items: readonly T[], size: number): T[][] {
  const chunks: T[][] = [];
  for (let start = 0; start < items.length; start += size) chunks.push(items.slice(start, start + size));
  return chunks;
}

/**
 * Adds the contacts of `customerIds`, as stored now, to `deltas` (`sign` −1 counts them out).
 * An upload counts a customer's contacts out before their copied values change and in after,
 * and writes the net change once with the rest of its changes (`applyCellDeltas`), so every
 * write of an upload to the counts happens in the one key order.
 */
export async function gatherContactsOfCustomers(db: Executor, customerIds: readonly string[], sign: 1 | -1, deltas: CellDeltas): Promise<void> {
  for (const part of chunk(customerIds, CUSTOMERS_PER_STATEMENT)) {
    for (const { units, ...row } of await groupedContacts(db, part, 1).execute()) {
      const key: CellKey = { ...row, age: Number(row.age), holdout: Number(row.holdout), converted: Number(row.converted), revenue_cents: Number(row.revenue_cents) };
      deltas.addUnits(key, sign * Number(units));
    }
  }
}

/**
 * Takes the contacts of `customerIds` out of the counts in the database itself (INSERT … SELECT
 * … GROUP BY … ON CONFLICT, one statement per thousand customers) and deletes the rows left
 * empty; for an erasure, before the contacts are deleted. Throws only what the driver throws.
 */
export async function subtractContactsOfCustomers(db: Executor, customerIds: readonly string[]): Promise<void> {
  for (const part of chunk(customerIds, CUSTOMERS_PER_STATEMENT)) {
    const rows = await db
      .insertInto('contact_value_counts')
      .columns([...CELL_KEY_COLUMNS, 'units'])
      .expression(groupedContacts(db, part, -1))
      .onConflict((conflict) => conflict.columns(CELL_KEY_COLUMNS).doUpdateSet({ units: sql<number>`contact_value_counts.units + excluded.units` }))
      .returning([...CELL_KEY_COLUMNS, 'units'])
      .execute();
    await deleteEmptiedRows(db, rows.filter((row) => Number(row.units) === 0).map(({ units: _units, ...key }) => key));
  }
}
