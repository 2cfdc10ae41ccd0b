import type { Kysely } from 'kysely';

// Dates are ISO text and money is integer cents on both engines; see src/db/tables.ts.
export async function up(db: Kysely<unknown>): Promise<void> {
  await db.schema
    .createTable('customers')
    .addColumn('customer_id', 'text', (c) => c.primaryKey())
    .addColumn('birth_date', 'text')
    .addColumn('region', 'text', (c) => c.notNull())
    .addColumn('channel', 'text', (c) => c.notNull())
    .addColumn('customer_type', 'text', (c) => c.notNull())
    .addColumn('created_at', 'text', (c) => c.notNull())
    .addColumn('updated_at', 'text', (c) => c.notNull())
    .addColumn('last_ingest_id', 'text')
    .execute();

  await db.schema
    .createTable('customer_attributes')
    .addColumn('customer_id', 'text', (c) => c.notNull().references('customers.customer_id').onDelete('cascade'))
    .addColumn('name', 'text', (c) => c.notNull())
    .addColumn('value', 'text', (c) => c.notNull())
    .addPrimaryKeyConstraint('customer_attributes_pk', ['customer_id', 'name'])
    .execute();
  await db.schema.createIndex('customer_attributes_by_name').on('customer_attributes').columns(['name', 'value']).execute();

  await db.schema
    .createTable('sales')
    .addColumn('sale_id', 'text', (c) => c.primaryKey())
    .addColumn('customer_id', 'text', (c) => c.notNull().references('customers.customer_id').onDelete('cascade'))
    .addColumn('sold_at', 'text', (c) => c.notNull())
    .addColumn('amount_cents', 'bigint', (c) => c.notNull())
    .addColumn('last_ingest_id', 'text')
    .execute();
  await db.schema.createIndex('sales_by_customer').on('sales').columns(['customer_id', 'sold_at']).execute();
  await db.schema.createIndex('sales_by_date').on('sales').column('sold_at').execute();

  await db.schema
    .createTable('campaigns')
    .addColumn('campaign_id', 'text', (c) => c.primaryKey())
    .addColumn('created_at', 'text', (c) => c.notNull())
    .execute();

  await db.schema
    .createTable('campaign_contacts')
    .addColumn('campaign_id', 'text', (c) => c.notNull().references('campaigns.campaign_id').onDelete('cascade'))
    .addColumn('customer_id', 'text', (c) => c.notNull().references('customers.customer_id').onDelete('cascade'))
    .addColumn('contacted_at', 'text', (c) => c.notNull())
    .addColumn('converted', 'integer', (c) => c.notNull())
    .addColumn('revenue_cents', 'bigint', (c) => c.notNull())
    .addColumn('age_at_contact', 'integer')
    .addColumn('last_ingest_id', 'text')
    .addPrimaryKeyConstraint('campaign_contacts_pk', ['campaign_id', 'customer_id'])
    .execute();
  await db.schema.createIndex('campaign_contacts_by_customer').on('campaign_contacts').column('customer_id').execute();

  await db.schema
    .createTable('ingests')
    .addColumn('ingest_id', 'text', (c) => c.primaryKey())
    .addColumn('kind', 'text', (c) => c.notNull())
    .addColumn('campaign_id', 'text')
    .addColumn('on_error', 'text', (c) => c.notNull())
    .addColumn('content_type', 'text', (c) => c.notNull())
    .addColumn('rows_received', 'integer', (c) => c.notNull())
    .addColumn('inserted', 'integer', (c) => c.notNull())
    .addColumn('updated', 'integer', (c) => c.notNull())
    .addColumn('unchanged', 'integer', (c) => c.notNull())
    .addColumn('rejected', 'integer', (c) => c.notNull())
    .addColumn('sha256', 'text', (c) => c.notNull())
    .addColumn('idempotency_key', 'text', (c) => c.unique())
    .addColumn('received_at', 'text', (c) => c.notNull())
    .addColumn('duration_ms', 'integer', (c) => c.notNull())
    .execute();

  await db.schema
    .createTable('rejected_rows')
    .addColumn('ingest_id', 'text', (c) => c.notNull().references('ingests.ingest_id').onDelete('cascade'))
    .addColumn('ordinal', 'integer', (c) => c.notNull())
    .addColumn('row_number', 'integer', (c) => c.notNull())
    .addColumn('line', 'integer', (c) => c.notNull())
    .addColumn('customer_id', 'text')
    .addColumn('column_name', 'text')
    .addColumn('value', 'text')
    .addColumn('reason', 'text', (c) => c.notNull())
    .addPrimaryKeyConstraint('rejected_rows_pk', ['ingest_id', 'ordinal'])
    .execute();
  await db.schema.createIndex('rejected_rows_by_customer').on('rejected_rows').column('customer_id').execute();
}

export async function down(db: Kysely<unknown>): Promise<void> {
  for (const table of ['rejected_rows', 'ingests', 'campaign_contacts', 'campaigns', 'sales', 'customer_attributes', 'customers']) {
    await db.schema.dropTable(table).execute();
  }
}
