/**
 * Whether `contact_value_counts` holds exactly what the contacts say, and its repair. The
 * contacts are the truth; the counts are derived from them and kept current by every write.
 */
import type { Kysely } from 'kysely';
import { sqliteConnectionOf } from '../db/connect.js';
import type { Executor } from '../db/executor.js';
import type { Database } from '../db/tables.js';
import { takeWriteLock } from '../db/write-lock.js';
import { CELL_KEY_COLUMNS } from './apply-deltas.js';
import { compareCellKeys, type CellKey } from './cell-deltas.js';
import { groupedContacts } from './grouped-contacts.js';

export interface CellCount {
  key: CellKey;
  units: number;
}

export interface CellDifference {
  key: CellKey;
  /** 0 when the row is missing. */
  storedUnits: number;
  /** 0 when the row should not exist. */
  expectedUnits: number;
}

export interface CellCheck {
  storedRows: number;
  expectedRows: number;
  /** Every key whose stored units differ from the recomputation. */
  differenceCount: number;
  /** The first differences in key order, at most the limit asked for. */
  differences: CellDifference[];
}

function countOf(row: Record<string, unknown>): CellCount {
  return {
    key: {
      campaign_id: String(row['campaign_id']),
      region: String(row['region']),
      channel: String(row['channel']),
      customer_type: row['customer_type'] as CellKey['customer_type'],
      age: Number(row['age']),
      holdout: Number(row['holdout']),
      converted: Number(row['converted']),
      revenue_cents: Number(row['revenue_cents']),
    },
    units: Number(row['units']),
  };
}

/** The table as it should be, recomputed from the contacts, in key order. */
export async function recomputeCells(db: Executor): Promise<CellCount[]> {
  const rows = await groupedContacts(db, null).execute();
  return rows.map(countOf).sort((left, right) => compareCellKeys(left.key, right.key));
}

async function storedCells(db: Executor): Promise<CellCount[]> {
  const rows = await db.selectFrom('contact_value_counts').select([...CELL_KEY_COLUMNS, 'units']).execute();
  return rows.map(countOf).sort((left, right) => compareCellKeys(left.key, right.key));
}

/**
 * Compares the stored counts with the recomputation, both read in one transaction (repeatable
 * read on PostgreSQL) so that an upload committing meanwhile cannot show as a difference.
 * Lists at most `limit` differences, in key order, and counts all of them.
 */
export async function checkCells(db: Kysely<Database>, limit = 20): Promise<CellCheck> {
  let transaction = db.transaction();
  if (sqliteConnectionOf(db) === null) transaction = transaction.setIsolationLevel('repeatable read');
  const [stored, expected] = await transaction.execute(async (trx) => [await storedCells(trx), await recomputeCells(trx)] as const);
  const differences: CellDifference[] = [];
  let differenceCount = 0;
  const note = (key: CellKey, storedUnits: number, expectedUnits: number) => {
    differenceCount += 1;
    if (differences.length < limit) differences.push({ key, storedUnits, expectedUnits });
  };
  // Both lists are in key order: walk them side by side.
  let s = 0;
  let e = 0;
  while (s < stored.length || e < expected.length) {
    const storedCell = stored[s];
    const expectedCell = expected[e];
    const order = storedCell === undefined ? 1 : expectedCell === undefined ? -1 : compareCellKeys(storedCell.key, expectedCell.key);
    if (order < 0 && storedCell !== undefined) {
      note(storedCell.key, storedCell.units, 0);
      s += 1;
    } else if (order > 0 && expectedCell !== undefined) {
      note(expectedCell.key, 0, expectedCell.units);
      e += 1;
    } else if (storedCell !== undefined && expectedCell !== undefined) {
      if (storedCell.units !== expectedCell.units) note(storedCell.key, storedCell.units, expectedCell.units);
      s += 1;
      e += 1;
    }
  }
  return { storedRows: stored.length, expectedRows: expected.length, differenceCount, differences };
}

/**
 * Replaces the whole table with the recomputation, in one transaction that holds the write lock
 * exclusively (uploads wait, as for an erasure), so no upload's changes are lost or counted
 * twice. Returns the number of rows written.
 */
export async function rebuildCells(db: Kysely<Database>): Promise<number> {
  return db.transaction().execute(async (trx) => {
    await takeWriteLock(trx, sqliteConnectionOf(db) !== null, 'rebuild');
    await trx.deleteFrom('contact_value_counts').execute();
    const result = await trx
      .insertInto('contact_value_counts')
      .columns([...CELL_KEY_COLUMNS, 'units'])
      .expression(groupedContacts(trx, null))
      .executeTakeFirst();
    return Number(result.numInsertedOrUpdatedRows ?? 0);
  });
}
