/**
 * Every SQL statement of the ingest path. Functions take the transaction they run in, so
 * one upload is one transaction however many batches it has.
 *
 * The statements an upload runs once per row (lookups of stored rows, inserts, updates) take
 * an `UploadStore`. On PostgreSQL they go through kysely as multi-row statements, one per
 * batch. On SQLite they run as cached better-sqlite3 prepared statements, one call per row, on
 * the connection that holds the upload's transaction. Measured on an upload of 100,000
 * customers and 100,000 contacts through kysely, building and compiling the 2,000-row
 * statements took about 0.6 s and SQLite's preparation of each new statement text 0.5 s, next
 * to 1.6 s of SQLite actually running them; and inside a transaction a point lookup through a
 * prepared statement costs about 1.2 µs, half the cost per key of an `in (…)` list. Both
 * spellings of each statement sit side by side below and write the same columns.
 *
 * On PostgreSQL the look-ups pass each key list as ONE array parameter (`unnest`), so a batch
 * is one short statement to parse and plan, and the inserts are one COPY per batch. What was
 * left of a contacts upload there was the server's own work per row (two foreign-key triggers
 * and text keys compared by locale), which migration 0011 removes.
 */
import type SqliteDatabase from 'better-sqlite3';
import { sql, type Transaction } from 'kysely';
import { subtractContactsOfCustomers } from '../aggregates/customer-contacts.js';
import type { Executor } from '../db/executor.js';
import { copyRows } from '../db/pg-copy.js';
import { prepared } from '../db/prepared.js';
import type { CampaignContactsTable, CustomersTable, Database, IngestsTable, RejectedRowsTable, SalesTable } from '../db/tables.js';

/** Where the per-row statements of one upload run. */
export interface UploadStore {
  /** The upload's one transaction. */
  trx: Transaction<Database>;
  /** On SQLite, the connection `trx` runs on (for prepared statements); null on PostgreSQL. */
  sqlite: SqliteDatabase.Database | null;
}

function chunk<T>(items: readonly T[], size: number): T[][] {
  const chunks: T[][] = [];
  for (let start = 0; start < items.length; start += size) chunks.push(items.slice(start, start + size));
  return chunks;
}

/**
 * The keys of one look-up as a table `k` with one column `k`, from ONE text-array parameter
 * (`unnest`), joined to the table looked up: one statement per batch whatever its size, read
 * through the table's key index. Measured with 2,000 keys among 250,000 customers (medians of
 * 10, load average about 7): this join 23–26 ms, two `in (…)` lists of 1,000 parameters 29–43
 * ms, `customer_id = any($1)` 61–89 ms (PostgreSQL planned that one as a parallel sequential
 * scan).
 */
function lookupKeys(keys: readonly string[]) {
  return sql<{ k: string }>`unnest(cast(${keys} as text[]))`.as('k');
}

/** The join condition of `lookupKeys` against `column` of the table looked up. */
function matchesKey(column: string) {
  return sql<boolean>`${sql.ref('k.k')} = ${sql.ref(column)}`;
}

/** Keys per array look-up on PostgreSQL: the batch of an upload (2,000 rows) in one statement. */
const KEYS_PER_ARRAY_LOOKUP = 5_000;

/** Inserts rows that all have the same columns, which the first row's keys name. */
async function insertMany<T extends keyof Database>(store: UploadStore, table: T, rows: Array<Database[T]>): Promise<void> {
  if (rows.length === 0) return;
  const columns = Object.keys(rows[0] as object);
  if (store.sqlite !== null) {
    // The same columns kysely would write, bound by position (binding a row object by parameter
    // name costs about 1 µs more per row in better-sqlite3), from one reused array.
    const insert = prepared(store.sqlite, `insert into ${table} (${columns.join(', ')}) values (${columns.map(() => '?').join(', ')})`);
    const values: unknown[] = new Array<unknown>(columns.length);
    for (const row of rows as unknown as Array<Record<string, unknown>>) {
      for (let index = 0; index < columns.length; index++) values[index] = row[columns[index] as string];
      insert.run(...values);
    }
    return;
  }
  // One COPY per batch (src/db/pg-copy.ts): the server parses the rows' text itself, where an
  // INSERT … SELECT FROM unnest(…) of one array parameter per column spent most of its time
  // binding, parsing and casting the arrays.
  await copyRows(store.trx, table, columns, rows as unknown as Array<Record<string, unknown>>);
}

/** `update table set c = @c, … where k = @k and …`, for binding a row object by its keys. */
function updateText(table: keyof Database, changedColumns: readonly string[], keyColumns: readonly string[]): string {
  const assignments = changedColumns.map((column) => `${column} = @${column}`).join(', ');
  return `update ${table} set ${assignments} where ${keyColumns.map((column) => `${column} = @${column}`).join(' and ')}`;
}

/**
 * Whether any row of `kind` that an upload could collide with is stored: any customer, any
 * sale, or any contact of `campaignId`. When none is, every row of the upload is new (keys are
 * unique within one upload), so the per-row lookups of stored rows can be skipped and the
 * receipt's counts stay exact. One indexed probe; throws only what the driver throws.
 *
 * @example await hasStoredRows(trx, 'contacts', 'spring-mailing') // → false for a new campaign
 */
export async function hasStoredRows(db: Executor, kind: 'customers' | 'sales' | 'contacts', campaignId: string | null): Promise<boolean> {
  switch (kind) {
    case 'customers':
      return (await db.selectFrom('customers').select('customer_id').limit(1).executeTakeFirst()) !== undefined;
    case 'sales':
      return (await db.selectFrom('sales').select('sale_id').limit(1).executeTakeFirst()) !== undefined;
    case 'contacts':
      if (campaignId === null) throw new Error('a contacts lookup needs its campaign id');
      return (await db.selectFrom('campaign_contacts').select('customer_id').where('campaign_id', '=', campaignId).limit(1).executeTakeFirst()) !== undefined;
  }
}

export interface StoredCustomer {
  customer_id: string;
  birth_date: string | null;
  region: string;
  channel: string;
  customer_type: string;
  attributes: Map<string, string>;
}

export async function findCustomers(store: UploadStore, ids: readonly string[]): Promise<Map<string, StoredCustomer>> {
  const found = new Map<string, StoredCustomer>();
  if (ids.length === 0) return found;
  if (store.sqlite !== null) {
    const customer = prepared(store.sqlite, 'select customer_id, birth_date, region, channel, customer_type from customers where customer_id = ?');
    const attributes = prepared(store.sqlite, 'select name, value from customer_attributes where customer_id = ?', 'values');
    for (const id of ids) {
      const row = customer.get(id) as Omit<StoredCustomer, 'attributes'> | undefined;
      if (row !== undefined) found.set(id, { ...row, attributes: new Map(attributes.all(id) as Array<[string, string]>) });
    }
    return found;
  }
  const db = store.trx;
  for (const part of chunk(ids, KEYS_PER_ARRAY_LOOKUP)) {
    const rows = await db
      .selectFrom('customers')
      .innerJoin(lookupKeys(part), (join) => join.on(matchesKey('customers.customer_id')))
      .select(['customer_id', 'birth_date', 'region', 'channel', 'customer_type'])
      .execute();
    for (const row of rows) found.set(row.customer_id, { ...row, attributes: new Map() });
    const attributes = await db
      .selectFrom('customer_attributes')
      .innerJoin(lookupKeys(part), (join) => join.on(matchesKey('customer_attributes.customer_id')))
      .select(['customer_id', 'name', 'value'])
      .execute();
    for (const attribute of attributes) found.get(attribute.customer_id)?.attributes.set(attribute.name, attribute.value);
  }
  return found;
}

/** Birth dates of the known customers among `ids` (null birth date = known, age unknown). */
export async function findBirthDates(store: UploadStore, ids: readonly string[]): Promise<Map<string, string | null>> {
  const found = new Map<string, string | null>();
  if (store.sqlite !== null) {
    // A missing customer gives undefined; a known one without a birth date gives null.
    const birthDate = prepared(store.sqlite, 'select birth_date from customers where customer_id = ?', 'first column');
    for (const id of ids) {
      const value = birthDate.get(id) as string | null | undefined;
      if (value !== undefined) found.set(id, value);
    }
    return found;
  }
  for (const part of chunk(ids, KEYS_PER_ARRAY_LOOKUP)) {
    const rows = await store.trx
      .selectFrom('customers')
      .innerJoin(lookupKeys(part), (join) => join.on(matchesKey('customers.customer_id')))
      .select(['customer_id', 'birth_date'])
      .execute();
    for (const row of rows) found.set(row.customer_id, row.birth_date);
  }
  return found;
}

const CUSTOMERS_PER_LOOKUP = 100;

/** What a contact copies from its customer: the birth date (for the age at contact), region, channel and type. */
export type ContactCustomer = Pick<CustomersTable, 'birth_date' | 'region' | 'channel' | 'customer_type'>;

/** The values of the known customers among `ids` that their contacts copy. */
export async function findContactCustomers(store: UploadStore, ids: readonly string[]): Promise<Map<string, ContactCustomer>> {
  const found = new Map<string, ContactCustomer>();
  if (store.sqlite !== null) {
    // A hundred keys per statement: half the time of one lookup per key (measured over 200,000).
    for (const part of chunk(ids, CUSTOMERS_PER_LOOKUP)) {
      const select = prepared(
        store.sqlite,
        `select customer_id, birth_date, region, channel, customer_type from customers where customer_id in (${part.map(() => '?').join(', ')})`,
        'values',
      );
      for (const [customerId, birthDate, region, channel, customerType] of select.all(...part) as Array<[string, string | null, string, string, ContactCustomer['customer_type']]>) {
        found.set(customerId, { birth_date: birthDate, region, channel, customer_type: customerType });
      }
    }
    return found;
  }
  for (const part of chunk(ids, KEYS_PER_ARRAY_LOOKUP)) {
    const rows = await store.trx
      .selectFrom('customers')
      .innerJoin(lookupKeys(part), (join) => join.on(matchesKey('customers.customer_id')))
      .select(['customer_id', 'birth_date', 'region', 'channel', 'customer_type'])
      .execute();
    for (const { customer_id: customerId, ...row } of rows) found.set(customerId, row);
  }
  return found;
}

export async function insertCustomers(store: UploadStore, rows: CustomersTable[]): Promise<void> {
  await insertMany(store, 'customers', rows);
}

/** Writes every field of the customer but its key and creation time. */
export async function updateCustomer(store: UploadStore, row: CustomersTable): Promise<void> {
  const { customer_id, created_at: _createdAt, ...changes } = row;
  if (store.sqlite !== null) {
    prepared(store.sqlite, updateText('customers', Object.keys(changes), ['customer_id'])).run(row);
    return;
  }
  await store.trx.updateTable('customers').set(changes).where('customer_id', '=', customer_id).execute();
}

export async function setCustomerAttributes(store: UploadStore, customerId: string, attributes: Map<string, string | null>): Promise<void> {
  const names = [...attributes.keys()];
  if (names.length === 0) return;
  if (store.sqlite !== null) {
    const remove = prepared(store.sqlite, 'delete from customer_attributes where customer_id = ? and name = ?');
    for (const name of names) remove.run(customerId, name);
  } else {
    await store.trx.deleteFrom('customer_attributes').where('customer_id', '=', customerId).where('name', 'in', names).execute();
  }
  const rows = [...attributes].filter((entry): entry is [string, string] => entry[1] !== null).map(([name, value]) => ({ customer_id: customerId, name, value }));
  await insertMany(store, 'customer_attributes', rows);
}

export async function insertCustomerAttributes(store: UploadStore, rows: Array<{ customer_id: string; name: string; value: string }>): Promise<void> {
  await insertMany(store, 'customer_attributes', rows);
}

/**
 * Brings the values copied onto campaign contacts up to date after customers changed: the age
 * at contact (by the same exact birthday arithmetic as `ageInYears`) and the region, channel
 * and type, written in SQL that SQLite and PostgreSQL both run.
 */
export async function refreshContactCustomerValues(db: Executor, customerIds: readonly string[]): Promise<void> {
  const fromCustomer = (column: 'region' | 'channel' | 'customer_type') =>
    sql<string>`(select ${sql.ref(`c.${column}`)} from customers c where c.customer_id = campaign_contacts.customer_id)`;
  for (const part of chunk(customerIds, 1000)) {
    await db
      .updateTable('campaign_contacts')
      .set({
        age_at_contact: sql<number | null>`(
          select cast(substr(campaign_contacts.contacted_at, 1, 4) as integer) - cast(substr(c.birth_date, 1, 4) as integer)
            - case when substr(campaign_contacts.contacted_at, 6, 5) < substr(c.birth_date, 6, 5) then 1 else 0 end
          from customers c where c.customer_id = campaign_contacts.customer_id)`,
        region: fromCustomer('region'),
        channel: fromCustomer('channel'),
        customer_type: sql<'individual' | 'company'>`${fromCustomer('customer_type')}`,
      })
      .where('customer_id', 'in', part)
      .execute();
  }
}

/**
 * The earliest sale or contact date stored for each of `customerIds` that has any: a birth
 * date may not move past it. SQL MIN over ISO date text (which sorts as dates), grouped by
 * customer, on sales and on contacts; the smaller of the two wins. Throws only what the
 * database driver throws.
 *
 * @example a customer with a sale on 2020-05-01 and a contact on 2019-03-02 maps to '2019-03-02';
 * a customer with neither is absent from the map.
 */
export async function findEarliestEventDates(db: Executor, customerIds: readonly string[]): Promise<Map<string, string>> {
  const found = new Map<string, string>();
  for (const part of chunk(customerIds, 1000)) {
    const sales = await db
      .selectFrom('sales')
      .select((eb) => ['customer_id', eb.fn.min('sold_at').as('earliest')])
      .where('customer_id', 'in', part)
      .groupBy('customer_id')
      .execute();
    const contacts = await db
      .selectFrom('campaign_contacts')
      .select((eb) => ['customer_id', eb.fn.min('contacted_at').as('earliest')])
      .where('customer_id', 'in', part)
      .groupBy('customer_id')
      .execute();
    for (const { customer_id: customerId, earliest } of [...sales, ...contacts]) {
      const known = found.get(customerId);
      if (known === undefined || earliest < known) found.set(customerId, earliest);
    }
  }
  return found;
}

export async function findSales(store: UploadStore, ids: readonly string[]): Promise<Map<string, SalesTable>> {
  const found = new Map<string, SalesTable>();
  if (store.sqlite !== null) {
    const sale = prepared(store.sqlite, 'select * from sales where sale_id = ?');
    for (const id of ids) {
      const row = sale.get(id) as SalesTable | undefined;
      if (row !== undefined) found.set(id, row);
    }
    return found;
  }
  for (const part of chunk(ids, KEYS_PER_ARRAY_LOOKUP)) {
    const rows = await store.trx
      .selectFrom('sales')
      .innerJoin(lookupKeys(part), (join) => join.on(matchesKey('sales.sale_id')))
      .selectAll('sales')
      .execute();
    for (const row of rows) found.set(row.sale_id, row);
  }
  return found;
}

export async function insertSales(store: UploadStore, rows: SalesTable[]): Promise<void> {
  await insertMany(store, 'sales', rows);
}

/** Writes every field of the sale but its key. */
export async function updateSale(store: UploadStore, row: SalesTable): Promise<void> {
  const { sale_id, ...changes } = row;
  if (store.sqlite !== null) {
    prepared(store.sqlite, updateText('sales', Object.keys(changes), ['sale_id'])).run(row);
    return;
  }
  await store.trx.updateTable('sales').set(changes).where('sale_id', '=', sale_id).execute();
}

export async function ensureCampaign(db: Executor, campaignId: string, now: string): Promise<void> {
  await db
    .insertInto('campaigns')
    .values({ campaign_id: campaignId, created_at: now })
    .onConflict((conflict) => conflict.column('campaign_id').doNothing())
    .execute();
}

export async function findContacts(store: UploadStore, campaignId: string, customerIds: readonly string[]): Promise<Map<string, CampaignContactsTable>> {
  const found = new Map<string, CampaignContactsTable>();
  if (store.sqlite !== null) {
    const contact = prepared(store.sqlite, 'select * from campaign_contacts where campaign_id = ? and customer_id = ?');
    for (const id of customerIds) {
      const row = contact.get(campaignId, id) as CampaignContactsTable | undefined;
      if (row !== undefined) found.set(id, row);
    }
    return found;
  }
  for (const part of chunk(customerIds, KEYS_PER_ARRAY_LOOKUP)) {
    // Locked until the upload commits: another upload changing the same contacts at the same
    // time waits, then reads what this one wrote, so each counts its change from the stored row
    // it replaces (the contact value counts would otherwise lose or double a change).
    const rows = await store.trx
      .selectFrom('campaign_contacts')
      .innerJoin(lookupKeys(part), (join) => join.on(matchesKey('campaign_contacts.customer_id')))
      .selectAll('campaign_contacts')
      .where('campaign_id', '=', campaignId)
      .forUpdate('campaign_contacts')
      .execute();
    for (const row of rows) found.set(row.customer_id, row);
  }
  return found;
}

export async function insertContacts(store: UploadStore, rows: CampaignContactsTable[]): Promise<void> {
  await insertMany(store, 'campaign_contacts', rows);
}

/** Writes every field of the contact but its key (campaign and customer). */
export async function updateContact(store: UploadStore, row: CampaignContactsTable): Promise<void> {
  const { campaign_id, customer_id, ...changes } = row;
  if (store.sqlite !== null) {
    prepared(store.sqlite, updateText('campaign_contacts', Object.keys(changes), ['campaign_id', 'customer_id'])).run(row);
    return;
  }
  await store.trx.updateTable('campaign_contacts').set(changes).where('campaign_id', '=', campaign_id).where('customer_id', '=', customer_id).execute();
}

export async function insertIngest(db: Executor, receipt: IngestsTable): Promise<void> {
  await db.insertInto('ingests').values(receipt).execute();
}

export async function insertRejectedRows(store: UploadStore, rows: RejectedRowsTable[]): Promise<void> {
  await insertMany(store, 'rejected_rows', rows);
}

/**
 * The stored labels of one customer dimension (a built-in column or an extra attribute), at most
 * `limit` of them: the receipt compares an upload's labels with these.
 */
export async function findStoredLabels(db: Executor, dimension: string, limit: number): Promise<string[]> {
  if (dimension === 'region' || dimension === 'channel') {
    const rows = await db.selectFrom('customers').select(dimension).distinct().limit(limit).execute();
    return rows.map((row) => (dimension === 'region' ? (row as { region: string }).region : (row as { channel: string }).channel));
  }
  const rows = await db.selectFrom('customer_attributes').select('value').distinct().where('name', '=', dimension).limit(limit).execute();
  return rows.map((row) => row.value);
}

export async function findIngest(db: Executor, ingestId: string): Promise<IngestsTable | undefined> {
  return db.selectFrom('ingests').selectAll().where('ingest_id', '=', ingestId).executeTakeFirst();
}

export async function findIngestByIdempotencyKey(db: Executor, scope: string, key: string): Promise<IngestsTable | undefined> {
  return db.selectFrom('ingests').selectAll().where('idempotency_scope', '=', scope).where('idempotency_key', '=', key).executeTakeFirst();
}

export async function listRejectedRows(db: Executor, ingestId: string, page: { limit: number; offset: number }): Promise<RejectedRowsTable[]> {
  return db
    .selectFrom('rejected_rows')
    .selectAll()
    .where('ingest_id', '=', ingestId)
    .orderBy('ordinal')
    .limit(page.limit)
    .offset(page.offset)
    .execute();
}

/**
 * What the reports may hold about one customer, read before erasing them: the labels the
 * customer has in each customer dimension (built-in columns and extra attributes) and the
 * campaigns they were contacted in. Undefined when there is no such customer.
 */
export async function customerLabels(db: Executor, customerId: string): Promise<{ labels: Record<string, string>; campaignIds: string[] } | undefined> {
  const customer = await db.selectFrom('customers').select(['region', 'channel', 'customer_type']).where('customer_id', '=', customerId).executeTakeFirst();
  if (!customer) return undefined;
  const attributes = await db.selectFrom('customer_attributes').select(['name', 'value']).where('customer_id', '=', customerId).execute();
  const campaigns = await db.selectFrom('campaign_contacts').select('campaign_id').distinct().where('customer_id', '=', customerId).execute();
  const labels: Record<string, string> = {};
  for (const attribute of attributes) labels[attribute.name] = attribute.value;
  Object.assign(labels, { region: customer.region, channel: customer.channel, customer_type: customer.customer_type });
  return { labels, campaignIds: campaigns.map((row) => row.campaign_id) };
}

/** Erases one customer and every row about them; returns false when there was no such customer. */
export async function eraseCustomer(db: Executor, customerId: string): Promise<boolean> {
  // An id that names no customer touches nothing, not even rejected rows that mention it.
  const stored = await db.selectFrom('customers').select('customer_id').where('customer_id', '=', customerId).executeTakeFirst();
  if (stored === undefined) return false;
  await subtractContactsOfCustomers(db, [customerId]);
  await db.deleteFrom('campaign_contacts').where('customer_id', '=', customerId).execute();
  await db.deleteFrom('sales').where('customer_id', '=', customerId).execute();
  await db.deleteFrom('customer_attributes').where('customer_id', '=', customerId).execute();
  await db.deleteFrom('rejected_rows').where('customer_id', '=', customerId).execute();
  const result = await db.deleteFrom('customers').where('customer_id', '=', customerId).executeTakeFirst();
  return Number(result.numDeletedRows) > 0;
}
