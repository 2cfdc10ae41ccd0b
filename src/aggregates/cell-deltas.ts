/**
 * Changes to `contact_value_counts` gathered in memory while an upload writes its contacts, one
 * entry per key (the table's eight key columns) with the net change of its units, so that each
 * key is written once however many contacts moved into or out of it.
 */
import type { ContactValueCountsTable } from '../db/tables.js';

/** The key of one row of `contact_value_counts`. */
export type CellKey = Omit<ContactValueCountsTable, 'units'>;

/** What a stored or new contact contributes to the counts: its key columns (`age_at_contact` null when unknown). */
export interface ContactCellValues {
  campaign_id: string;
  region: string;
  channel: string;
  customer_type: ContactValueCountsTable['customer_type'];
  age_at_contact: number | null;
  holdout: number;
  converted: number;
  revenue_cents: number;
}

/** The age column's value for an unknown age (no birth date); see migration 0009. */
export const UNKNOWN_AGE = -1;

/** The key a contact counts under. Numbers are normalised, since PostgreSQL may hand 64-bit columns over as text. */
export function cellKeyOf(contact: ContactCellValues): CellKey {
  return {
    campaign_id: contact.campaign_id,
    region: contact.region,
    channel: contact.channel,
    customer_type: contact.customer_type,
    age: contact.age_at_contact === null ? UNKNOWN_AGE : Number(contact.age_at_contact),
    holdout: Number(contact.holdout),
    converted: Number(contact.converted),
    revenue_cents: Number(contact.revenue_cents),
  };
}

function textOf(key: CellKey): string {
  return JSON.stringify([key.campaign_id, key.region, key.channel, key.customer_type, key.age, key.holdout, key.converted, key.revenue_cents]);
}

function compareText(left: string, right: string): number {
  return left < right ? -1 : left > right ? 1 : 0;
}

/**
 * The one fixed order of keys, column by column in the key's order (text by code units,
 * numbers by value). Every writer touches keys in this order.
 */
export function compareCellKeys(left: CellKey, right: CellKey): number {
  return (
    compareText(left.campaign_id, right.campaign_id) ||
    compareText(left.region, right.region) ||
    compareText(left.channel, right.channel) ||
    compareText(left.customer_type, right.customer_type) ||
    left.age - right.age ||
    left.holdout - right.holdout ||
    left.converted - right.converted ||
    left.revenue_cents - right.revenue_cents
  );
}

export class CellDeltas {
  private readonly entries = new Map<string, { key: CellKey; units: number }>();

  /** Counts `contact` into its key (`sign` +1) or out of it (−1). */
  add(contact: ContactCellValues, sign: 1 | -1): void {
    this.addUnits(cellKeyOf(contact), sign);
  }

  /** Adds `units` (negative to subtract) to `key`. */
  addUnits(key: CellKey, units: number): void {
    const text = textOf(key);
    const entry = this.entries.get(text);
    if (entry === undefined) this.entries.set(text, { key, units });
    else entry.units += units;
  }

  /** Keys held, including those whose changes cancelled out. */
  get size(): number {
    return this.entries.size;
  }

  /** The non-zero changes, each key once, in `compareCellKeys` order. */
  sorted(): Array<{ key: CellKey; units: number }> {
    return [...this.entries.values()].filter((entry) => entry.units !== 0).sort((left, right) => compareCellKeys(left.key, right.key));
  }

  clear(): void {
    this.entries.clear();
  }
}
