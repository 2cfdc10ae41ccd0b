/**
 * The three kinds of upload. Each knows its key, its field checks, the checks that need stored
 * data, and how to write a batch: insert what is new, update what changed, count what did not.
 */
import type { CellDeltas } from '../aggregates/cell-deltas.js';
import { gatherContactsOfCustomers } from '../aggregates/customer-contacts.js';
import type { Database, IngestKind } from '../db/tables.js';
import { ageInYears } from './fields.js';
import * as repository from './repository.js';
import { checkContactFields, checkCustomerFields, checkSaleFields, type ContactRow, type CustomerRow, type RowCheck, type RowError, type SaleRow } from './row-checks.js';

export interface PendingRow<Row> {
  row: Row;
  line: number;
  rowNumber: number;
}

export interface BatchOutcome {
  inserted: number;
  updated: number;
  unchanged: number;
  /** Stored rows (inserted, updated or unchanged) that are holdout contacts. */
  holdout: number;
  /** Rows refused by a check against stored data, with the customer each was about (kept for erasure). */
  rejected: Array<{ line: number; rowNumber: number; customerId: string; error: RowError }>;
}

export interface BatchContext {
  store: repository.UploadStore;
  /**
   * False once an all-or-nothing upload has a bad row: later batches are still checked, never
   * written, and their counts are never reported, so stored rows are looked up only as far as
   * the checks need them.
   */
  write: boolean;
  /**
   * False when nothing this upload could collide with was stored when it began (no customers,
   * no sales, or no contacts of this campaign): every row is then new, since keys are unique
   * within one upload, and stored rows need no lookup.
   */
  mayExist: boolean;
  ingestId: string;
  now: string;
  campaignId: string | null;
  /**
   * The upload's changes to `contact_value_counts`, gathered batch by batch while `write` holds
   * and written by the upload (src/ingest/service.ts) in one key order.
   */
  cellDeltas: CellDeltas;
}

export interface UploadKind<Row> {
  kind: IngestKind;
  keyColumn: string;
  check(fields: Map<string, unknown>, today: string): RowCheck<Row>;
  key(row: Row): string;
  /** The dimension labels a row sets (customers only: region, channel and extra attributes, null when cleared). */
  labels?(row: Row): Iterable<readonly [dimension: string, label: string | null]>;
  applyBatch(context: BatchContext, rows: Array<PendingRow<Row>>): Promise<BatchOutcome>;
}

function emptyOutcome(): BatchOutcome {
  return { inserted: 0, updated: 0, unchanged: 0, holdout: 0, rejected: [] };
}

export const customersKind: UploadKind<CustomerRow> = {
  kind: 'customers',
  keyColumn: 'customer_id',
  check: checkCustomerFields,
  key: (row) => row.customer_id,
  labels: (row) => [['region', row.region], ['channel', row.channel], ...row.attributes],
  async applyBatch({ store, write, mayExist, ingestId, now, cellDeltas }, pending) {
    const outcome = emptyOutcome();
    const stored = mayExist ? await repository.findCustomers(store, pending.map((item) => item.row.customer_id)) : new Map<string, repository.StoredCustomer>();
    const birthDateMoves = pending.filter(({ row }) => {
      const existing = stored.get(row.customer_id);
      return existing !== undefined && row.birth_date !== null && row.birth_date !== existing.birth_date;
    });
    const earliestEvents = await repository.findEarliestEventDates(store.trx, birthDateMoves.map((item) => item.row.customer_id));
    const inserts: Database['customers'][] = [];
    const attributeInserts: Array<{ customer_id: string; name: string; value: string }> = [];
    const copiedValuesChanged: string[] = [];
    for (const { row, line, rowNumber } of pending) {
      const existing = stored.get(row.customer_id);
      // Sales and contacts may not precede the birth date; a new birth date may not overtake them either.
      const earliestEvent = earliestEvents.get(row.customer_id);
      if (row.birth_date !== null && earliestEvent !== undefined && earliestEvent < row.birth_date) {
        outcome.rejected.push({
          line,
          rowNumber,
          customerId: row.customer_id,
          error: { column: 'birth_date', value: row.birth_date, reason: `birth_date ${row.birth_date} is after this customer's earliest stored sale or contact (${earliestEvent})` },
        });
        continue;
      }
      const record = {
        customer_id: row.customer_id,
        birth_date: row.birth_date,
        region: row.region,
        channel: row.channel,
        customer_type: row.customer_type,
        created_at: now,
        updated_at: now,
        last_ingest_id: ingestId,
      };
      if (!existing) {
        outcome.inserted += 1;
        inserts.push(record);
        for (const [name, value] of row.attributes) if (value !== null) attributeInserts.push({ customer_id: row.customer_id, name, value });
        continue;
      }
      const attributesChanged = [...row.attributes].some(([name, value]) => (existing.attributes.get(name) ?? null) !== value);
      const fieldsChanged =
        existing.birth_date !== row.birth_date || existing.region !== row.region || existing.channel !== row.channel || existing.customer_type !== row.customer_type;
      if (!fieldsChanged && !attributesChanged) {
        outcome.unchanged += 1;
        continue;
      }
      outcome.updated += 1;
      if (!write) continue;
      // Also on an attribute-only change, so that last_ingest_id names the upload that changed the customer.
      await repository.updateCustomer(store, record);
      if (attributesChanged) await repository.setCustomerAttributes(store, row.customer_id, row.attributes);
      if (fieldsChanged) copiedValuesChanged.push(row.customer_id);
    }
    if (write) {
      await repository.insertCustomers(store, inserts);
      await repository.insertCustomerAttributes(store, attributeInserts);
      // The customers' contacts move between cells: counted out as stored, then in as refreshed.
      await gatherContactsOfCustomers(store.trx, copiedValuesChanged, -1, cellDeltas);
      await repository.refreshContactCustomerValues(store.trx, copiedValuesChanged);
      await gatherContactsOfCustomers(store.trx, copiedValuesChanged, 1, cellDeltas);
    }
    return outcome;
  },
};

export const salesKind: UploadKind<SaleRow> = {
  kind: 'sales',
  keyColumn: 'sale_id',
  check: checkSaleFields,
  key: (row) => row.sale_id,
  async applyBatch({ store, write, mayExist, ingestId }, pending) {
    const outcome = emptyOutcome();
    const birthDates = await repository.findBirthDates(store, unique(pending.map((item) => item.row.customer_id)));
    const stored = mayExist && write ? await repository.findSales(store, pending.map((item) => item.row.sale_id)) : new Map<string, Database['sales']>();
    const inserts: Database['sales'][] = [];
    for (const { row, line, rowNumber } of pending) {
      const problem = checkAgainstCustomer(row.customer_id, row.sold_at, 'sold_at', birthDates.get(row.customer_id));
      if (problem) {
        outcome.rejected.push({ line, rowNumber, customerId: row.customer_id, error: problem });
        continue;
      }
      const record = { ...row, last_ingest_id: ingestId };
      const existing = stored.get(row.sale_id);
      if (!existing) {
        outcome.inserted += 1;
        inserts.push(record);
      } else if (existing.customer_id === row.customer_id && existing.sold_at === row.sold_at && Number(existing.amount_cents) === row.amount_cents) {
        outcome.unchanged += 1;
      } else {
        outcome.updated += 1;
        if (write) await repository.updateSale(store, record);
      }
    }
    if (write) await repository.insertSales(store, inserts);
    return outcome;
  },
};

export const contactsKind: UploadKind<ContactRow> = {
  kind: 'contacts',
  keyColumn: 'customer_id',
  check: checkContactFields,
  key: (row) => row.customer_id,
  async applyBatch({ store, write, mayExist, ingestId, campaignId, cellDeltas }, pending) {
    if (campaignId === null) throw new Error('a contacts upload needs its campaign id');
    const outcome = emptyOutcome();
    const customerIds = pending.map((item) => item.row.customer_id);
    const customers = await repository.findContactCustomers(store, customerIds);
    const stored = mayExist && write ? await repository.findContacts(store, campaignId, customerIds) : new Map<string, Database['campaign_contacts']>();
    const inserts: Database['campaign_contacts'][] = [];
    for (const { row, line, rowNumber } of pending) {
      const customer = customers.get(row.customer_id);
      const problem = checkAgainstCustomer(row.customer_id, row.contacted_at, 'contacted_at', customer?.birth_date);
      if (problem || customer === undefined) {
        outcome.rejected.push({ line, rowNumber, customerId: row.customer_id, error: problem ?? unknownCustomer(row.customer_id) });
        continue;
      }
      const record = {
        campaign_id: campaignId,
        ...row,
        age_at_contact: customer.birth_date === null ? null : ageInYears(customer.birth_date, row.contacted_at),
        region: customer.region,
        channel: customer.channel,
        customer_type: customer.customer_type,
        last_ingest_id: ingestId,
      };
      const existing = stored.get(row.customer_id);
      outcome.holdout += row.holdout;
      if (!existing) {
        outcome.inserted += 1;
        inserts.push(record);
      } else if (
        existing.contacted_at === row.contacted_at &&
        Number(existing.converted) === row.converted &&
        Number(existing.revenue_cents) === row.revenue_cents &&
        Number(existing.holdout) === row.holdout
      ) {
        outcome.unchanged += 1;
      } else {
        outcome.updated += 1;
        if (write) {
          await repository.updateContact(store, record);
          cellDeltas.add(existing, -1);
          cellDeltas.add(record, 1);
        }
      }
    }
    if (write) {
      await repository.insertContacts(store, inserts);
      for (const insert of inserts) cellDeltas.add(insert, 1);
    }
    return outcome;
  },
};

function unknownCustomer(customerId: string): RowError {
  return { column: 'customer_id', value: customerId, reason: `customer_id ${customerId} is not a known customer; upload the customer first` };
}

/** `birthDate`: undefined when the customer is unknown, null when known without a birth date. */
function checkAgainstCustomer(customerId: string, eventDate: string, dateColumn: string, birthDate: string | null | undefined): RowError | null {
  if (birthDate === undefined) return unknownCustomer(customerId);
  if (birthDate !== null && eventDate < birthDate) {
    return { column: dateColumn, value: eventDate, reason: `${dateColumn} ${eventDate} is before the customer's birth date ${birthDate}` };
  }
  return null;
}

function unique(values: string[]): string[] {
  return [...new Set(values)];
}
