import type { Kysely } from 'kysely';

/**
 * A contact may be a holdout: a customer kept out of the campaign on purpose, whose response
 * measures what the campaign added. Stored as 0/1 like `converted`; contacts stored before this
 * migration were all contacted. The report index gains the flag before `converted`, so a
 * campaign report still reads that index alone while splitting each cell into its two arms.
 * Receipts count the holdout rows an upload stored.
 */
export async function up(db: Kysely<unknown>): Promise<void> {
  await db.schema.alterTable('campaign_contacts').addColumn('holdout', 'integer', (column) => column.notNull().defaultTo(0)).execute();
  await db.schema.alterTable('ingests').addColumn('holdout_rows', 'integer', (column) => column.notNull().defaultTo(0)).execute();
  await db.schema.dropIndex('campaign_contacts_by_cell').execute();
  await db.schema
    .createIndex('campaign_contacts_by_cell')
    .on('campaign_contacts')
    .columns(['campaign_id', 'region', 'channel', 'customer_type', 'age_at_contact', 'holdout', 'converted', 'revenue_cents'])
    .execute();
}

export async function down(db: Kysely<unknown>): Promise<void> {
  await db.schema.dropIndex('campaign_contacts_by_cell').execute();
  await db.schema
    .createIndex('campaign_contacts_by_cell')
    .on('campaign_contacts')
    .columns(['campaign_id', 'region', 'channel', 'customer_type', 'age_at_contact', 'converted', 'revenue_cents'])
    .execute();
  await db.schema.alterTable('ingests').dropColumn('holdout_rows').execute();
  await db.schema.alterTable('campaign_contacts').dropColumn('holdout').execute();
}
