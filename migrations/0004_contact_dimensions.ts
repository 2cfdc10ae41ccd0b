import { sql, type Kysely } from 'kysely';

/**
 * The customer's region, channel and type are copied onto each campaign contact, and one index
 * holds every column a campaign report reads in the order it groups them. The report then
 * reads that index alone, front to back, with no join to customers and no sort: its GROUP BY
 * follows the index order (SQLite streams it; PostgreSQL hashes or scans it as it prefers).
 * The copies are kept current when a customer changes (src/ingest/repository.ts,
 * `refreshContactCustomerValues`), like the age at contact.
 */
export async function up(db: Kysely<unknown>): Promise<void> {
  // SQLite adds one column per ALTER TABLE statement.
  for (const column of ['region', 'channel', 'customer_type']) {
    await db.schema.alterTable('campaign_contacts').addColumn(column, 'text').execute();
  }
  await sql`update campaign_contacts set
      region = (select c.region from customers c where c.customer_id = campaign_contacts.customer_id),
      channel = (select c.channel from customers c where c.customer_id = campaign_contacts.customer_id),
      customer_type = (select c.customer_type from customers c where c.customer_id = campaign_contacts.customer_id)`.execute(db);

  await db.schema.dropIndex('campaign_contacts_for_reports').execute();
  await db.schema
    .createIndex('campaign_contacts_by_cell')
    .on('campaign_contacts')
    .columns(['campaign_id', 'region', 'channel', 'customer_type', 'age_at_contact', 'converted', 'revenue_cents'])
    .execute();
  // With the campaign beside the customer, "which customers were contacted in these campaigns"
  // is answered from this index alone; erasure and the age refresh use its first column.
  await db.schema.dropIndex('campaign_contacts_by_customer').execute();
  await db.schema.createIndex('campaign_contacts_by_customer_and_campaign').on('campaign_contacts').columns(['customer_id', 'campaign_id']).execute();
}

export async function down(db: Kysely<unknown>): Promise<void> {
  await db.schema.dropIndex('campaign_contacts_by_customer_and_campaign').execute();
  await db.schema.createIndex('campaign_contacts_by_customer').on('campaign_contacts').column('customer_id').execute();
  await db.schema.dropIndex('campaign_contacts_by_cell').execute();
  await db.schema
    .createIndex('campaign_contacts_for_reports')
    .on('campaign_contacts')
    .columns(['campaign_id', 'customer_id', 'converted', 'revenue_cents', 'age_at_contact'])
    .execute();
  for (const column of ['customer_type', 'channel', 'region']) {
    await db.schema.alterTable('campaign_contacts').dropColumn(column).execute();
  }
}
