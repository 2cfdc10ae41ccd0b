import { SqliteAdapter, sql, type Kysely } from 'kysely';

/**
 * An Idempotency-Key belongs to the API key that sent it: two clients that happen to pick the
 * same key each get their own upload, and neither can read the other's receipt by replaying
 * it. `idempotency_scope` holds the sending key's id ("open" without keys), and the
 * uniqueness moves from the key alone to (scope, key). Uploads stored before have the scope
 * "unscoped", which no request has, so their keys are never replayed: which API key sent them
 * was not recorded, and guessing would hand one client's receipt to another.
 *
 * PostgreSQL drops the column's unique constraint in place. SQLite cannot drop a constraint
 * declared with its column, so there `ingests` is rebuilt, and `rejected_rows` with it: its
 * foreign key must point at the new table, and dropping the old one while rows still refer to
 * it would cascade their deletion.
 */
const UNSCOPED = 'unscoped';

const INGEST_COLUMNS = [
  'ingest_id',
  'kind',
  'campaign_id',
  'on_error',
  'content_type',
  'rows_received',
  'inserted',
  'updated',
  'unchanged',
  'rejected',
  'sha256',
  'idempotency_key',
  'received_at',
  'duration_ms',
  'extra_attributes',
  'warnings',
].join(', ');
const REJECTED_COLUMNS = 'ingest_id, ordinal, row_number, line, customer_id, column_name, value, reason';

function isSqlite(db: Kysely<unknown>): boolean {
  return db.getExecutor().adapter instanceof SqliteAdapter;
}

/** Rebuilds ingests (and rejected_rows, which refers to it) on SQLite, scoped or not. */
async function rebuildOnSqlite(db: Kysely<unknown>, scoped: boolean): Promise<void> {
  await db.transaction().execute(async (trx) => {
    await sql`create table ingests_rebuilt (
        ingest_id text primary key,
        kind text not null,
        campaign_id text,
        on_error text not null,
        content_type text not null,
        rows_received integer not null,
        inserted integer not null,
        updated integer not null,
        unchanged integer not null,
        rejected integer not null,
        sha256 text not null,
        idempotency_key text ${sql.raw(scoped ? '' : 'unique')},
        received_at text not null,
        duration_ms integer not null,
        extra_attributes text not null default '[]',
        warnings text not null default '[]'
        ${sql.raw(scoped ? ', idempotency_scope text' : '')})`.execute(trx);
    await sql`insert into ingests_rebuilt (${sql.raw(INGEST_COLUMNS)}${sql.raw(scoped ? ', idempotency_scope' : '')})
        select ${sql.raw(INGEST_COLUMNS)}${scoped ? sql`, case when idempotency_key is null then null else ${UNSCOPED} end` : sql``} from ingests`.execute(trx);
    await sql`create table rejected_rows_rebuilt (
        ingest_id text not null references ingests_rebuilt (ingest_id) on delete cascade,
        ordinal integer not null,
        row_number integer not null,
        line integer not null,
        customer_id text,
        column_name text,
        value text,
        reason text not null,
        constraint rejected_rows_pk primary key (ingest_id, ordinal))`.execute(trx);
    await sql`insert into rejected_rows_rebuilt (${sql.raw(REJECTED_COLUMNS)}) select ${sql.raw(REJECTED_COLUMNS)} from rejected_rows`.execute(trx);
    await sql`drop table rejected_rows`.execute(trx);
    await sql`drop table ingests`.execute(trx);
    // Renaming a table rewrites the foreign keys that name it (SQLite 3.26+ without legacy_alter_table).
    await sql`alter table ingests_rebuilt rename to ingests`.execute(trx);
    await sql`alter table rejected_rows_rebuilt rename to rejected_rows`.execute(trx);
    await sql`create index rejected_rows_by_customer on rejected_rows (customer_id)`.execute(trx);
    if (scoped) await sql`create unique index ingests_by_idempotency_key on ingests (idempotency_scope, idempotency_key)`.execute(trx);
  });
}

export async function up(db: Kysely<unknown>): Promise<void> {
  if (isSqlite(db)) {
    await rebuildOnSqlite(db, true);
    return;
  }
  await sql`alter table ingests drop constraint ingests_idempotency_key_key`.execute(db);
  await db.schema.alterTable('ingests').addColumn('idempotency_scope', 'text').execute();
  await sql`update ingests set idempotency_scope = ${UNSCOPED} where idempotency_key is not null`.execute(db);
  await db.schema.createIndex('ingests_by_idempotency_key').on('ingests').columns(['idempotency_scope', 'idempotency_key']).unique().execute();
}

export async function down(db: Kysely<unknown>): Promise<void> {
  // Going back makes keys global again, which fails if two API keys have used the same one.
  if (isSqlite(db)) {
    await rebuildOnSqlite(db, false);
    return;
  }
  await db.schema.dropIndex('ingests_by_idempotency_key').execute();
  await db.schema.alterTable('ingests').dropColumn('idempotency_scope').execute();
  await sql`alter table ingests add constraint ingests_idempotency_key_key unique (idempotency_key)`.execute(db);
}
