/**
 * The one read of a campaign report on contact_value_counts: its campaigns' rows, both arms,
 * folded in code (kept-fold.ts) into everything the report's population queries returned.
 */
import type SqliteDatabase from 'better-sqlite3';
import { sql } from 'kysely';
import type { Executor } from '../db/executor.js';
import { prepared } from '../db/prepared.js';
import { KeptCountsFold, type KeptAggregates } from './kept-fold.js';
import { toNumber, type AggregationRequest } from './population.js';

/**
 * On SQLite the rows come one text key (campaign, region, channel, customer type) at a time,
 * their numeric columns as three JSON arrays: age·4 + holdout·2 + converted, revenue, units.
 * `campaign_id in (…)` is a range of the primary key's first column and the grouping is the
 * key's first four columns, so SQLite walks the key's index once, in key order, and sorts
 * nothing (EXPLAIN QUERY PLAN: SEARCH contact_value_counts USING INDEX
 * sqlite_autoindex_contact_value_counts_1 (campaign_id=?), no temporary B-tree). A few hundred
 * rows reach JavaScript instead of one per kept row, which is most of the cost of a row read
 * (at 1,000,000 contacts 129,702 rows: bench/population-read.ts). The three arrays are filled
 * row by row together, so their entries line up. Holdout and converted are 0/1 flags and the
 * stored age an integer from -1 up, so the packed number is exact and unpacks with shifts.
 */
function keptRowsText(campaigns: number): string {
  return `select campaign_id, region, channel, customer_type,
      json_group_array(age * 4 + holdout * 2 + converted), json_group_array(revenue_cents), json_group_array(units)
    from contact_value_counts where campaign_id in (${Array.from({ length: campaigns }, () => '?').join(', ')})
    group by campaign_id, region, channel, customer_type`;
}

/** Folds one row of the grouped read: a text key and its rows' numbers, packed as `keptRowsText` says. */
function foldTextKey(fold: KeptCountsFold, row: readonly unknown[], parse: (column: unknown) => number[]): void {
  const [campaign, region, channel, customerType] = row.slice(0, 4).map(String) as [string, string, string, string];
  const keys = parse(row[4]);
  const values = parse(row[5]);
  const units = parse(row[6]);
  if (values.length !== keys.length || units.length !== keys.length) throw new Error(`the kept rows of ${campaign}/${region}/${channel}/${customerType} came back with arrays of different lengths`);
  for (let index = 0; index < keys.length; index++) {
    const key = keys[index] as number;
    fold.add(campaign, region, channel, customerType, key >> 2, (key >> 1) & 1, key & 1, values[index] as number, units[index] as number);
  }
}

/**
 * Reads the report's campaigns' rows of contact_value_counts once, inside `db`'s transaction, and
 * folds them into the report's aggregates. On SQLite (`sqlite`: the raw connection behind the
 * transaction's database; null on PostgreSQL) through a cached prepared statement, rows as
 * arrays; on PostgreSQL one plain query grouped the same way. Memory: the numbers of one text
 * key at a time, besides what the fold keeps.
 * `splitArms`: the holdout contacts form the holdout arm and the rest the report's population.
 * @throws whatever the database throws
 */
export async function keptCountAggregates(db: Executor, sqlite: SqliteDatabase.Database | null, request: AggregationRequest, splitArms: boolean): Promise<KeptAggregates> {
  const source = request.source;
  if (source.kind !== 'campaigns' || source.table !== 'contact_value_counts') throw new Error('only a campaign report on contact_value_counts is folded from its kept rows');
  const fold = new KeptCountsFold(request, splitArms);
  if (source.campaignIds.length === 0) return fold.finish();
  if (sqlite !== null) {
    const rows = prepared(sqlite, keptRowsText(source.campaignIds.length), 'values').iterate(...source.campaignIds) as Iterable<unknown[]>;
    for (const row of rows) foldTextKey(fold, row, (column) => JSON.parse(String(column)) as number[]);
    return fold.finish();
  }
  // PostgreSQL: the same grouping with json_agg, whose arrays the driver parses; the three
  // aggregates of a group see its rows in one order, so their entries line up.
  const { rows } = await sql<Record<string, unknown>>`
    select campaign_id, region, channel, customer_type,
      json_agg(age * 4 + holdout * 2 + converted) as keys, json_agg(revenue_cents) as revenues, json_agg(units) as units
    from contact_value_counts where campaign_id in (${sql.join(source.campaignIds)})
    group by campaign_id, region, channel, customer_type`.execute(db);
  for (const row of rows) {
    foldTextKey(fold, [row['campaign_id'], row['region'], row['channel'], row['customer_type'], row['keys'], row['revenues'], row['units']], (column) =>
      (column as unknown[]).map(toNumber),
    );
  }
  return fold.finish();
}
