import { PostgresAdapter, sql, type Kysely } from 'kysely';

/**
 * PostgreSQL only (on SQLite this migration does nothing): what an upload of contacts costs the
 * server per row.
 *
 * 1. The text keys that uploads insert into B-tree indexes compare by bytes (`COLLATE "C"`)
 *    instead of by the database's locale: a locale comparison goes through strcoll and forgoes
 *    abbreviated keys, and each contact adds two entries of such keys (its primary key and the
 *    customer index). Byte order of UTF-8 is code point order, which is also how a `C.UTF-8`
 *    database already sorted these columns, and how SQLite's BINARY collation orders them
 *    (outside the supplementary planes); nothing the service returns depends on the database's
 *    locale order.
 * 2. The two foreign keys of `campaign_contacts` go: each ran a trigger per inserted contact
 *    (a locking look-up of the customer and of the campaign), more than half of the server's
 *    time per stored contact. What they guarded holds without them: an upload stores a contact
 *    only for a customer it has just read in the same transaction (unknown customers are
 *    refused, src/ingest/kinds.ts) and after creating its campaign, while holding the shared
 *    write lock (src/db/write-lock.ts); an erasure, the only delete of customers, holds the
 *    exclusive lock and deletes the customer's contacts itself; campaigns are never deleted.
 *    SQLite keeps its foreign keys, whose checks there are a plain index look-up.
 */
function isPostgres(db: Kysely<unknown>): boolean {
  return db.getExecutor().adapter instanceof PostgresAdapter;
}

const BYTE_ORDERED_KEYS: ReadonlyArray<readonly [string, readonly string[]]> = [
  ['customers', ['customer_id']],
  ['campaigns', ['campaign_id']],
  ['campaign_contacts', ['campaign_id', 'customer_id']],
  ['contact_value_counts', ['campaign_id', 'region', 'channel', 'customer_type']],
];

const CONTACT_FOREIGN_KEYS = [
  { column: 'campaign_id', references: 'campaigns' },
  { column: 'customer_id', references: 'customers' },
] as const;

/** The name of the foreign key of `campaign_contacts.column`, whatever it was named when created. */
async function contactForeignKeyName(db: Kysely<unknown>, column: string): Promise<string | undefined> {
  const { rows } = await sql<{ name: string }>`
    select c.conname as name
    from pg_constraint c
    join pg_attribute a on a.attrelid = c.conrelid and a.attnum = c.conkey[1]
    where c.contype = 'f' and c.conrelid = 'campaign_contacts'::regclass and a.attname = ${column}`.execute(db);
  return rows[0]?.name;
}

export async function up(db: Kysely<unknown>): Promise<void> {
  if (!isPostgres(db)) return;
  for (const { column } of CONTACT_FOREIGN_KEYS) {
    const name = await contactForeignKeyName(db, column);
    if (name !== undefined) await sql`alter table campaign_contacts drop constraint ${sql.id(name)}`.execute(db);
  }
  for (const [table, columns] of BYTE_ORDERED_KEYS) {
    const changes = columns.map((column) => sql`alter column ${sql.id(column)} type text collate "C"`);
    await sql`alter table ${sql.id(table)} ${sql.join(changes)}`.execute(db);
  }
}

export async function down(db: Kysely<unknown>): Promise<void> {
  if (!isPostgres(db)) return;
  for (const [table, columns] of BYTE_ORDERED_KEYS) {
    const changes = columns.map((column) => sql`alter column ${sql.id(column)} type text collate "default"`);
    await sql`alter table ${sql.id(table)} ${sql.join(changes)}`.execute(db);
  }
  for (const { column, references } of CONTACT_FOREIGN_KEYS) {
    await sql`alter table campaign_contacts add foreign key (${sql.id(column)}) references ${sql.id(references)} (${sql.id(column)}) on delete cascade`.execute(db);
  }
}
