import type { Kysely } from 'kysely';

/**
 * What a receipt notes beside its counts: the extra attribute columns a customer upload stored,
 * and warnings that did not stop it (labels differing from stored ones only in case or spacing).
 * Both are JSON arrays of strings; uploads stored before this migration noted nothing.
 */
export async function up(db: Kysely<unknown>): Promise<void> {
  // SQLite adds one column per ALTER TABLE statement.
  await db.schema.alterTable('ingests').addColumn('extra_attributes', 'text', (column) => column.notNull().defaultTo('[]')).execute();
  await db.schema.alterTable('ingests').addColumn('warnings', 'text', (column) => column.notNull().defaultTo('[]')).execute();
}

export async function down(db: Kysely<unknown>): Promise<void> {
  await db.schema.alterTable('ingests').dropColumn('warnings').execute();
  await db.schema.alterTable('ingests').dropColumn('extra_attributes').execute();
}
