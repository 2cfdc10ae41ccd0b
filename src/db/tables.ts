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
  /** 1: kept out of the campaign on purpose (the holdout arm); 0: contacted. */
  holdout: number;
  /** Whole years from birth date to contact date, derived at ingest and kept current when the birth date changes. */
  age_at_contact: number | null;
  /** The customer's region, channel and type, copied at ingest and kept current, so campaign reports need no join. */
  region: string;
  channel: string;
  customer_type: 'individual' | 'company';
  last_ingest_id: string | null;
}

/**
 * How many contacts share one cell and one revenue value (migration 0009), kept current with
 * the contacts in the same transaction (src/aggregates/). A row with no units does not remain.
 */
export interface ContactValueCountsTable {
  campaign_id: string;
  region: string;
  channel: string;
  customer_type: 'individual' | 'company';
  /** The contact's `age_at_contact`, or -1 when it is unknown (no birth date): a key column cannot be NULL. */
  age: number;
  holdout: number;
  converted: number;
  revenue_cents: number;
  /** Number of contacts with exactly these values; always positive. */
  units: number;
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
  /** Rows of a contacts upload stored (inserted, updated or unchanged) as holdout; 0 for other uploads. */
  holdout_rows: number;
  sha256: string;
  idempotency_key: string | null;
  /** Who may replay the key: the id of the API key that sent it ("open" without keys); null without a key. */
  idempotency_scope: string | null;
  received_at: string;
  duration_ms: number;
  /** JSON array of the extra attribute columns a customer upload stored. */
  extra_attributes: string;
  /** JSON array of the warnings the receipt gave (labels differing only in case or spacing). */
  warnings: string;
}

export interface RejectedRowsTable {
  ingest_id: string;
  ordinal: number;
  /** 1-based data row of the upload (the CSV header is not a row). */
  row_number: number;
  line: number;
  /** The customer the row names, when it names one: erasure removes these rows too. */
  customer_id: string | null;
  column_name: string | null;
  value: string | null;
  reason: string;
}

export interface ApiKeysTable {
  key_id: string;
  name: string;
  role: string;
  secret_sha256: string;
  created_at: string;
  revoked_at: string | null;
}

export interface Database {
  customers: CustomersTable;
  customer_attributes: CustomerAttributesTable;
  sales: SalesTable;
  campaigns: CampaignsTable;
  campaign_contacts: CampaignContactsTable;
  contact_value_counts: ContactValueCountsTable;
  ingests: IngestsTable;
  rejected_rows: RejectedRowsTable;
  api_keys: ApiKeysTable;
}

export type Customer = Selectable<CustomersTable>;
export type NewCustomer = Insertable<CustomersTable>;
export type CustomerUpdate = Updateable<CustomersTable>;
export type Sale = Selectable<SalesTable>;
export type CampaignContact = Selectable<CampaignContactsTable>;
export type Ingest = Selectable<IngestsTable>;
export type RejectedRow = Selectable<RejectedRowsTable>;

export type RefreshMode = 'weekly' | 'manual';
export type SnapshotTrigger = 'manual' | 'schedule' | 'command';

/** A saved report definition; `definition` is the normalized definition as JSON text. */
export interface ReportsTable {
  report_id: string;
  name: string;
  definition: string;
  refresh: RefreshMode;
  created_at: string;
}

/**
 * One computed snapshot of a report; `body` is the whole snapshot as JSON text. Its figures
 * never change; an erasure may only remove from it what it held about the erased customer
 * (src/report/snapshot/redaction.ts), and then sets `redacted_at`.
 */
export interface ReportSnapshotsTable {
  snapshot_id: string;
  report_id: string;
  /** 1, 2, 3 … per report, in the order the snapshots were taken. */
  sequence: number;
  created_at: string;
  fingerprint: string;
  population_rows: number;
  segment_count: number;
  duration_ms: number;
  trigger: SnapshotTrigger;
  body: string;
  /** when an erasure last redacted the body; null if never (migration 0007) */
  redacted_at: string | null;
}

/** Bookkeeping of a scheduled job: its last completed run and the lock that keeps runs from overlapping. */
export interface ScheduledJobsTable {
  job_name: string;
  last_run_at: string | null;
  lock_holder: string | null;
  lock_expires_at: string | null;
}

// Declaration merging adds the report tables to the one Database interface above.
export interface Database {
  reports: ReportsTable;
  report_snapshots: ReportSnapshotsTable;
  scheduled_jobs: ScheduledJobsTable;
}

export type Report = Selectable<ReportsTable>;
export type ReportSnapshot = Selectable<ReportSnapshotsTable>;
