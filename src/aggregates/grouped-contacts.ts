/**
 * The one SQL that counts contacts by the key of `contact_value_counts`: what the table should
 * hold, for all contacts or for some customers'. The same text runs on SQLite and PostgreSQL.
 */
import { sql } from 'kysely';
import type { Executor } from '../db/executor.js';
import { UNKNOWN_AGE } from './cell-deltas.js';

const ageOrUnknown = sql<number>`coalesce(age_at_contact, ${sql.lit(UNKNOWN_AGE)})`;

/**
 * Contacts grouped by key with their count as `units` (times `sign`), of `customerIds` only
 * when given.
 */
export function groupedContacts(db: Executor, customerIds: readonly string[] | null, sign: 1 | -1 = 1) {
  let query = db
    .selectFrom('campaign_contacts')
    .select(['campaign_id', 'region', 'channel', 'customer_type', ageOrUnknown.as('age'), 'holdout', 'converted', 'revenue_cents', sql<number>`${sql.lit(sign)} * count(*)`.as('units')]);
  if (customerIds !== null) query = query.where('customer_id', 'in', customerIds);
  return query.groupBy(['campaign_id', 'region', 'channel', 'customer_type', ageOrUnknown, 'holdout', 'converted', 'revenue_cents']);
}
