/**
 * contact_value_counts filled again from the stored contacts, with the SQL migration 0009 fills
 * it with: for suites that store contacts before uploads keep the table current themselves.
 */
import { sql, type Kysely } from 'kysely';
import type { Database } from '../../src/db/tables.js';

export async function recomputeContactValueCounts(db: Kysely<Database>): Promise<void> {
  await db.transaction().execute(async (trx) => {
    await sql`delete from contact_value_counts`.execute(trx);
    await sql`insert into contact_value_counts
        (campaign_id, region, channel, customer_type, age, holdout, converted, revenue_cents, units)
      select campaign_id, region, channel, customer_type, coalesce(age_at_contact, -1), holdout, converted, revenue_cents, count(*)
      from campaign_contacts
      group by campaign_id, region, channel, customer_type, coalesce(age_at_contact, -1), holdout, converted, revenue_cents`.execute(trx);
  });
}
