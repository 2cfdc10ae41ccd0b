/**
 * The one money sum that stays a single 64-bit integer: a customer's spend within a sales
 * window, the unit value of a sales report. The cell sums split each unit's value into 16-bit
 * parts (cells.ts), which needs that value itself below 2^63 cents; a customer past it (92,234
 * sales at the per-row cap in one window) makes the database raise an overflow. This module
 * tells that case apart, so the refresh is refused with a clear problem instead of failing.
 */
import { sql } from 'kysely';
import type { Executor } from '../db/executor.js';
import { toNumber } from './population.js';

/** The largest spend of one customer within one sales window, in cents: 2^63 − 1. */
const MAX_CUSTOMER_SPEND_CENTS = 2n ** 63n - 1n;

/** A customer's spend within a sales window is past `MAX_CUSTOMER_SPEND_CENTS`. */
export class SpendBeyondLimitError extends Error {
  override name = 'SpendBeyondLimitError';
  constructor(
    readonly window: { from: string; to: string },
    readonly customers: number,
  ) {
    super(
      `${customers === 1 ? '1 customer has' : `${customers} customers have`} spent more than ${MAX_CUSTOMER_SPEND_CENTS} cents ` +
        `(2^63 − 1, the largest spend of one customer a sales report can sum) between ${window.from} and ${window.to}; ` +
        `shorten the report's sales window or check those sales for duplicates`,
    );
  }
}

function isOverflow(error: unknown): boolean {
  const message = error instanceof Error ? error.message : String(error);
  return /integer overflow|out of range/i.test(message);
}

/**
 * How many customers spent 2^63 cents or more from `from` to `to` (both inclusive). Each
 * amount a is split as a = 2^16·h + l, and both sums are far inside 64 bits, so
 * ⌊Σa / 2^16⌋ = Σh + ⌊Σl / 2^16⌋ is exact, and Σa ≥ 2^63 exactly when it is ≥ 2^47.
 * Amounts are never negative (the upload refuses them), so integer division is floor.
 */
async function customersBeyondSpendLimit(db: Executor, window: { from: string; to: string }): Promise<number> {
  const { rows } = await sql<Record<string, unknown>>`
    select count(*) as customers from (
      select customer_id from sales
      where sold_at >= ${window.from} and sold_at <= ${window.to}
      group by customer_id
      having cast(sum(amount_cents / 65536) as bigint) + cast(sum(amount_cents % 65536) as bigint) / 65536 >= ${sql.lit(2 ** 47)}
    ) beyond`.execute(db);
  return toNumber(rows[0]?.['customers']);
}

/**
 * The error a failed sales refresh should report: a `SpendBeyondLimitError` when the database
 * raised an overflow and a customer's spend in one of `windows` is past the limit, else
 * `error` itself. Run outside the failed transaction (PostgreSQL refuses queries in one).
 */
export async function explainOverflow(db: Executor, error: unknown, windows: ReadonlyArray<{ from: string; to: string }>): Promise<unknown> {
  if (!isOverflow(error)) return error;
  for (const window of windows) {
    const customers = await customersBeyondSpendLimit(db, window);
    if (customers > 0) return new SpendBeyondLimitError(window, customers);
  }
  return error;
}
