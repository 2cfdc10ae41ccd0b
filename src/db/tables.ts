/**
 * The one description of every table. Row types for reads and writes derive from it
 * (Selectable/Insertable), so a column added here is checked everywhere it is used.
 *
 * Conventions, identical on SQLite and PostgreSQL:
 * - calendar dates are ISO 8601 text `YYYY-MM-DD` (validated at ingest), timestamps are
 *   ISO 8601 UTC text; text compares and sorts correctly and behaves the same on both engines;
 * - money is integer minor units (cents) in a 64-bit integer column: exact, and summed exactly;
 * - booleans are integers 0/1.
 */
import type { Insertable, Selectable, Updateable } from 'kysely';

export interface CustomersTable {
  customer_id: string;
  birth_date: string | null;
  region: string;
  channel: string;
  customer_type: 'individual' | 'company';
  created_at: string;
  updated_at: string;
  last_ingest_id: string | null;
}

/** Extra columns of a customer upload, kept one row per attribute so any of them can be a dimension. */
export interface CustomerAttributesTable {
  customer_id: string;
  name: string;
  value: string;
}

export interface SalesTable {
  sale_id: string;
  customer_id: string;
  sold_at: string;
  amount_cents: number;
  last_ingest_id: string | null;
}

export interface CampaignsTable {
  campaign_id: string;
  created_at: string;
}

export interface CampaignContactsTable {
  campaign_id: string;
  customer_id: string;
  contacted_at: string;
  converted: number;
  revenue_cents: number;
  /** Whole years from birth date to contact date, derived at ingest and kept current when the birth date changes. */
  age_at_contact: number | null;
  last_ingest_id: string | null;
}

export type IngestKind = 'customers' | 'sales' | 'contacts';
export type OnError = 'reject' | 'skip';

export interface IngestsTable {
  ingest_id: string;
  kind: IngestKind;
  campaign_id: string | null;
  on_error: OnError;
  content_type: string;
  rows_received: number;
  inserted: number;
  updated: number;
  unchanged: number;
  rejected: number;
  sha256: string;
  idempotency_key: string | null;
  received_at: string;
  duration_ms: number;
}

export interface RejectedRowsTable {
  ingest_id: string;
  ordinal: number;
  line: number;
  column_name: string | null;
  value: string | null;
  reason: string;
}

export interface Database {
  customers: CustomersTable;
  customer_attributes: CustomerAttributesTable;
  sales: SalesTable;
  campaigns: CampaignsTable;
  campaign_contacts: CampaignContactsTable;
  ingests: IngestsTable;
  rejected_rows: RejectedRowsTable;
}

export type Customer = Selectable<CustomersTable>;
export type NewCustomer = Insertable<CustomersTable>;
export type CustomerUpdate = Updateable<CustomersTable>;
export type Sale = Selectable<SalesTable>;
export type CampaignContact = Selectable<CampaignContactsTable>;
export type Ingest = Selectable<IngestsTable>;
export type RejectedRow = Selectable<RejectedRowsTable>;
