import { sql, type Kysely } from 'kysely';

/**
 * How many contacts share one cell and one revenue value, kept current in the same transaction
 * as the contacts (src/aggregates/), so a campaign report reads these counts instead of every
 * contact. One row per (campaign, region, channel, customer type, age, holdout, converted,
 * revenue) with its number of contacts, `units`; rows with no units are deleted, never kept.
 *
 * `age` is the contact's `age_at_contact`, or -1 when that is unknown (no birth date): a primary
 * key column cannot hold NULL, and ON CONFLICT never matches NULL, so the unknown age needs a
 * value of its own. -1 never collides with a real age: ingest refuses contacts dated before the
 * customer's birth, so a stored age is never negative (and ages below 18 are implausible anyway).
 *
 * The key's column order is that of the index `campaign_contacts_by_cell`, so reading the table
 * in key order groups cells without a sort. The table is filled here from the contacts already
 * stored, with the same SQL on SQLite and PostgreSQL.
 */
export async function up(db: Kysely<unknown>): Promise<void> {
  await db.schema
    .createTable('contact_value_counts')
    .addColumn('campaign_id', 'text', (c) => c.notNull())
    .addColumn('region', 'text', (c) => c.notNull())
    .addColumn('channel', 'text', (c) => c.notNull())
    .addColumn('customer_type', 'text', (c) => c.notNull())
    .addColumn('age', 'integer', (c) => c.notNull())
    .addColumn('holdout', 'integer', (c) => c.notNull())
    .addColumn('converted', 'integer', (c) => c.notNull())
    .addColumn('revenue_cents', 'bigint', (c) => c.notNull())
    .addColumn('units', 'bigint', (c) => c.notNull())
    .addPrimaryKeyConstraint('contact_value_counts_pk', [
      'campaign_id',
      'region',
      'channel',
      'customer_type',
      'age',
      'holdout',
      'converted',
      'revenue_cents',
    ])
    .execute();
  await sql`insert into contact_value_counts
      (campaign_id, region, channel, customer_type, age, holdout, converted, revenue_cents, units)
    select campaign_id, region, channel, customer_type, coalesce(age_at_contact, -1), holdout, converted, revenue_cents, count(*)
    from campaign_contacts
    group by campaign_id, region, channel, customer_type, coalesce(age_at_contact, -1), holdout, converted, revenue_cents`.execute(db);
}

export async function down(db: Kysely<unknown>): Promise<void> {
  await db.schema.dropTable('contact_value_counts').execute();
}
