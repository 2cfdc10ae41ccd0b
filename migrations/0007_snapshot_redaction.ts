import type { Kysely } from 'kysely';

// When an erasure last redacted a stored snapshot (removed what it held about the erased
// customer); null for a snapshot never redacted. Read with the snapshot id to key rendered tables.
export async function up(db: Kysely<unknown>): Promise<void> {
  await db.schema.alterTable('report_snapshots').addColumn('redacted_at', 'text').execute();
}

export async function down(db: Kysely<unknown>): Promise<void> {
  await db.schema.alterTable('report_snapshots').dropColumn('redacted_at').execute();
}
