import type { Kysely } from 'kysely';

// Report definitions, their immutable snapshots, and the bookkeeping of scheduled jobs.
// JSON documents are stored as text on both engines so that they read back byte for byte.
export async function up(db: Kysely<unknown>): Promise<void> {
  await db.schema
    .createTable('reports')
    .addColumn('report_id', 'text', (c) => c.primaryKey())
    .addColumn('name', 'text', (c) => c.notNull())
    .addColumn('definition', 'text', (c) => c.notNull())
    .addColumn('refresh', 'text', (c) => c.notNull())
    .addColumn('created_at', 'text', (c) => c.notNull())
    .execute();

  await db.schema
    .createTable('report_snapshots')
    .addColumn('snapshot_id', 'text', (c) => c.primaryKey())
    .addColumn('report_id', 'text', (c) => c.notNull().references('reports.report_id').onDelete('cascade'))
    .addColumn('sequence', 'integer', (c) => c.notNull())
    .addColumn('created_at', 'text', (c) => c.notNull())
    .addColumn('fingerprint', 'text', (c) => c.notNull())
    .addColumn('population_rows', 'bigint', (c) => c.notNull())
    .addColumn('segment_count', 'integer', (c) => c.notNull())
    .addColumn('duration_ms', 'integer', (c) => c.notNull())
    .addColumn('trigger', 'text', (c) => c.notNull())
    .addColumn('body', 'text', (c) => c.notNull())
    .addUniqueConstraint('report_snapshots_sequence', ['report_id', 'sequence'])
    .execute();

  // One row per scheduled job: when it last ran, and who holds its lock until when.
  await db.schema
    .createTable('scheduled_jobs')
    .addColumn('job_name', 'text', (c) => c.primaryKey())
    .addColumn('last_run_at', 'text')
    .addColumn('lock_holder', 'text')
    .addColumn('lock_expires_at', 'text')
    .execute();

  // The report query reads these columns of every contact of the chosen campaigns and looks each
  // contact's customer up; with them in the index neither lookup has to visit the table rows.
  await db.schema
    .createIndex('campaign_contacts_for_reports')
    .on('campaign_contacts')
    .columns(['campaign_id', 'customer_id', 'converted', 'revenue_cents', 'age_at_contact'])
    .execute();
  await db.schema
    .createIndex('customers_for_reports')
    .on('customers')
    .columns(['customer_id', 'region', 'channel', 'customer_type', 'birth_date'])
    .execute();
  await db.schema.createIndex('sales_for_reports').on('sales').columns(['sold_at', 'customer_id', 'amount_cents']).execute();
}

export async function down(db: Kysely<unknown>): Promise<void> {
  await db.schema.dropIndex('sales_for_reports').execute();
  await db.schema.dropIndex('customers_for_reports').execute();
  await db.schema.dropIndex('campaign_contacts_for_reports').execute();
  for (const table of ['scheduled_jobs', 'report_snapshots', 'reports']) {
    await db.schema.dropTable(table).execute();
  }
}
