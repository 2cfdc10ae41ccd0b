/**
 * Every migration, in order. Listed statically (not read from the folder at run time) so the
 * same list works under tsx, vitest and a compiled build alike.
 */
import type { Migration } from 'kysely';
import * as records from './0001_records.js';
import * as reports from './0002_reports.js';
import * as apiKeys from './0003_api_keys.js';
import * as contactDimensions from './0004_contact_dimensions.js';
import * as receiptNotes from './0005_receipt_notes.js';
import * as idempotencyPerKey from './0006_idempotency_per_key.js';
import * as snapshotRedaction from './0007_snapshot_redaction.js';
import * as contactHoldout from './0008_contact_holdout.js';
import * as contactValueCounts from './0009_contact_value_counts.js';
import * as dropContactCellIndex from './0010_drop_contact_cell_index.js';
import * as postgresContactKeys from './0011_postgres_contact_keys.js';

export const migrations: Record<string, Migration> = {
  '0001_records': records,
  '0002_reports': reports,
  '0003_api_keys': apiKeys,
  '0004_contact_dimensions': contactDimensions,
  '0005_receipt_notes': receiptNotes,
  '0006_idempotency_per_key': idempotencyPerKey,
  '0007_snapshot_redaction': snapshotRedaction,
  '0008_contact_holdout': contactHoldout,
  '0009_contact_value_counts': contactValueCounts,
  '0010_drop_contact_cell_index': dropContactCellIndex,
  '0011_postgres_contact_keys': postgresContactKeys,
};
