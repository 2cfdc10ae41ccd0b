/**
 * The one read of a campaign report on contact_value_counts: its campaigns' rows, both arms,
 * folded in code (kept-fold.ts) into everything the report's population queries returned.
 */
import type SqliteDatabase from 'better-sqlite3';
import { sql } from 'kysely';
import type { Executor } from '../db/executor.js';
import { prepared } from '../db/prepared.js';
import { KeptCountsFold, type KeptAggregates, type KeptRow } from './kept-fold.js';
import { toNumber, type AggregationRequest } from './population.js';

const KEPT_COLUMNS = 'campaign_id, region, channel, customer_type, age, holdout, converted, revenue_cents, units';

/**
 * The statement text for `campaigns` campaigns. `campaign_id in (…)` is a range of the primary
 * key's first column, so SQLite walks the key's index and the rows come in key order (one
 * group's rows one after another); no ORDER BY, since the fold does not need one.
 */
function keptRowsText(campaigns: number): string {
  return `select ${KEPT_COLUMNS} from contact_value_counts where campaign_id in (${Array.from({ length: campaigns }, () => '?').join(', ')})`;
}

/**
 * Reads the report's campaigns' rows of contact_value_counts once, inside `db`'s transaction, and
 * folds them into the report's aggregates. On SQLite (`sqlite`: the raw connection behind the
 * transaction's database) the rows stream through a cached prepared statement as arrays, so no
 * row object is built and none is kept; on PostgreSQL one plain query.
 * `splitArms`: the holdout contacts form the holdout arm and the rest the report's population.
 * @throws whatever the database throws
 */
export async function keptCountAggregates(db: Executor, sqlite: SqliteDatabase.Database | null, request: AggregationRequest, splitArms: boolean): Promise<KeptAggregates> {
  const source = request.source;
  if (source.kind !== 'campaigns' || source.table !== 'contact_value_counts') throw new Error('only a campaign report on contact_value_counts is folded from its kept rows');
  const fold = new KeptCountsFold(request, splitArms);
  if (source.campaignIds.length === 0) return fold.finish();
  if (sqlite !== null) {
    for (const row of prepared(sqlite, keptRowsText(source.campaignIds.length), 'values').iterate(...source.campaignIds)) fold.add(row as KeptRow);
    return fold.finish();
  }
  const { rows } = await sql<Record<string, unknown>>`
    select campaign_id, region, channel, customer_type, age, holdout, converted, revenue_cents, units
    from contact_value_counts where campaign_id in (${sql.join(source.campaignIds)})`.execute(db);
  for (const row of rows) {
    fold.add([
      String(row['campaign_id']),
      String(row['region']),
      String(row['channel']),
      String(row['customer_type']),
      toNumber(row['age']),
      toNumber(row['holdout']),
      toNumber(row['converted']),
      toNumber(row['revenue_cents']),
      toNumber(row['units']),
    ]);
  }
  return fold.finish();
}
