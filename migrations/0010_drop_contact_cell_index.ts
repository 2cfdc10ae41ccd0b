import type { Kysely } from 'kysely';

/**
 * Campaign reports on the built-in dimensions read `contact_value_counts`, kept at upload, so the
 * covering index that let them read every contact in cell order is no longer read by them, and it
 * was most of an upload's index work (each contact lands in one of thousands of places in it).
 * Reports on extra attributes read the contacts of their campaigns through the primary key.
 */
export async function up(db: Kysely<unknown>): Promise<void> {
  await db.schema.dropIndex('campaign_contacts_by_cell').execute();
}

export async function down(db: Kysely<unknown>): Promise<void> {
  await db.schema
    .createIndex('campaign_contacts_by_cell')
    .on('campaign_contacts')
    .columns(['campaign_id', 'region', 'channel', 'customer_type', 'age_at_contact', 'holdout', 'converted', 'revenue_cents'])
    .execute();
}
