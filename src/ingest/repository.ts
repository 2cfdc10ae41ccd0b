/**
 * Every SQL statement of the ingest path. Functions take the transaction they run in, so
 * one upload is one transaction however many batches it has.
 */
import { sql, type Kysely, type Transaction } from 'kysely';
import type { CampaignContactsTable, CustomersTable, Database, IngestsTable, RejectedRowsTable, SalesTable } from '../db/tables.js';

export type Executor = Kysely<Database> | Transaction<Database>;

// Portable across SQLite and PostgreSQL: bound parameters per statement stay well below
// SQLite's 32,766 and PostgreSQL's 65,535.
const MAX_PARAMETERS_PER_STATEMENT = 30_000;

function chunk<T>(items: readonly T[], size: number): T[][] {
  const chunks: T[][] = [];
  for (let start = 0; start < items.length; start += size) chunks.push(items.slice(start, start + size));
  return chunks;
}

async function insertMany<T extends keyof Database>(db: Executor, table: T, rows: Array<Database[T]>): Promise<void> {
  if (rows.length === 0) return;
  const columns = Object.keys(rows[0] as object).length;
  for (const part of chunk(rows, Math.max(1, Math.floor(MAX_PARAMETERS_PER_STATEMENT / columns)))) {
    // kysely's generic insert typing cannot follow a table name held in a type parameter.
    await db.insertInto(table).values(part as never).execute();
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

export async function findCustomers(db: Executor, ids: readonly string[]): Promise<Map<string, StoredCustomer>> {
  const found = new Map<string, StoredCustomer>();
  if (ids.length === 0) return found;
  for (const part of chunk(ids, 1000)) {
    const rows = await db
      .selectFrom('customers')
      .select(['customer_id', 'birth_date', 'region', 'channel', 'customer_type'])
      .where('customer_id', 'in', part)
      .execute();
    for (const row of rows) found.set(row.customer_id, { ...row, attributes: new Map() });
    const attributes = await db.selectFrom('customer_attributes').select(['customer_id', 'name', 'value']).where('customer_id', 'in', part).execute();
    for (const attribute of attributes) found.get(attribute.customer_id)?.attributes.set(attribute.name, attribute.value);
  }
  return found;
}

/** Birth dates of the known customers among `ids` (null birth date = known, age unknown). */
export async function findBirthDates(db: Executor, ids: readonly string[]): Promise<Map<string, string | null>> {
  const found = new Map<string, string | null>();
  for (const part of chunk(ids, 1000)) {
    const rows = await db.selectFrom('customers').select(['customer_id', 'birth_date']).where('customer_id', 'in', part).execute();
    for (const row of rows) found.set(row.customer_id, row.birth_date);
  }
  return found;
}

export async function insertCustomers(db: Executor, rows: CustomersTable[]): Promise<void> {
  await insertMany(db, 'customers', rows);
}

export async function updateCustomer(db: Executor, row: CustomersTable): Promise<void> {
  const { customer_id, created_at: _createdAt, ...changes } = row;
  await db.updateTable('customers').set(changes).where('customer_id', '=', customer_id).execute();
}

export async function setCustomerAttributes(db: Executor, customerId: string, attributes: Map<string, string | null>): Promise<void> {
  const names = [...attributes.keys()];
  if (names.length === 0) return;
  await db.deleteFrom('customer_attributes').where('customer_id', '=', customerId).where('name', 'in', names).execute();
  const rows = [...attributes].filter((entry): entry is [string, string] => entry[1] !== null).map(([name, value]) => ({ customer_id: customerId, name, value }));
  await insertMany(db, 'customer_attributes', rows);
}

export async function insertCustomerAttributes(db: Executor, rows: Array<{ customer_id: string; name: string; value: string }>): Promise<void> {
  await insertMany(db, 'customer_attributes', rows);
}

/**
 * Recomputes the stored age at contact after birth dates changed, by the same exact birthday
 * arithmetic as `ageInYears`, written in SQL that SQLite and PostgreSQL both run.
 */
export async function refreshContactAges(db: Executor, customerIds: readonly string[]): Promise<void> {
  for (const part of chunk(customerIds, 1000)) {
    await db
      .updateTable('campaign_contacts')
      .set({
        age_at_contact: sql<number | null>`(
          select cast(substr(campaign_contacts.contacted_at, 1, 4) as integer) - cast(substr(c.birth_date, 1, 4) as integer)
            - case when substr(campaign_contacts.contacted_at, 6, 5) < substr(c.birth_date, 6, 5) then 1 else 0 end
          from customers c where c.customer_id = campaign_contacts.customer_id)`,
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

export async function findSales(db: Executor, ids: readonly string[]): Promise<Map<string, SalesTable>> {
  const found = new Map<string, SalesTable>();
  for (const part of chunk(ids, 1000)) {
    const rows = await db.selectFrom('sales').selectAll().where('sale_id', 'in', part).execute();
    for (const row of rows) found.set(row.sale_id, row);
  }
  return found;
}

export async function insertSales(db: Executor, rows: SalesTable[]): Promise<void> {
  await insertMany(db, 'sales', rows);
}

export async function updateSale(db: Executor, row: SalesTable): Promise<void> {
  const { sale_id, ...changes } = row;
  await db.updateTable('sales').set(changes).where('sale_id', '=', sale_id).execute();
}

export async function ensureCampaign(db: Executor, campaignId: string, now: string): Promise<void> {
  await db
    .insertInto('campaigns')
    .values({ campaign_id: campaignId, created_at: now })
    .onConflict((conflict) => conflict.column('campaign_id').doNothing())
    .execute();
}

export async function findContacts(db: Executor, campaignId: string, customerIds: readonly string[]): Promise<Map<string, CampaignContactsTable>> {
  const found = new Map<string, CampaignContactsTable>();
  for (const part of chunk(customerIds, 1000)) {
    const rows = await db.selectFrom('campaign_contacts').selectAll().where('campaign_id', '=', campaignId).where('customer_id', 'in', part).execute();
    for (const row of rows) found.set(row.customer_id, row);
  }
  return found;
}

export async function insertContacts(db: Executor, rows: CampaignContactsTable[]): Promise<void> {
  await insertMany(db, 'campaign_contacts', rows);
}

export async function updateContact(db: Executor, row: CampaignContactsTable): Promise<void> {
  const { campaign_id, customer_id, ...changes } = row;
  await db.updateTable('campaign_contacts').set(changes).where('campaign_id', '=', campaign_id).where('customer_id', '=', customer_id).execute();
}

export async function insertIngest(db: Executor, receipt: IngestsTable): Promise<void> {
  await db.insertInto('ingests').values(receipt).execute();
}

export async function insertRejectedRows(db: Executor, rows: RejectedRowsTable[]): Promise<void> {
  await insertMany(db, 'rejected_rows', rows);
}

export async function findIngest(db: Executor, ingestId: string): Promise<IngestsTable | undefined> {
  return db.selectFrom('ingests').selectAll().where('ingest_id', '=', ingestId).executeTakeFirst();
}

export async function findIngestByIdempotencyKey(db: Executor, key: string): Promise<IngestsTable | undefined> {
  return db.selectFrom('ingests').selectAll().where('idempotency_key', '=', key).executeTakeFirst();
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

/** Erases one customer and every row about them; returns false when there was no such customer. */
export async function eraseCustomer(db: Executor, customerId: string): Promise<boolean> {
  await db.deleteFrom('campaign_contacts').where('customer_id', '=', customerId).execute();
  await db.deleteFrom('sales').where('customer_id', '=', customerId).execute();
  await db.deleteFrom('customer_attributes').where('customer_id', '=', customerId).execute();
  await db.deleteFrom('rejected_rows').where('customer_id', '=', customerId).execute();
  const result = await db.deleteFrom('customers').where('customer_id', '=', customerId).executeTakeFirst();
  return Number(result.numDeletedRows) > 0;
}
