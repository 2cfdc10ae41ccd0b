/**
 * What a valid row of each upload kind looks like, checked field by field without the
 * database. Checks that need stored data (known customer, dates after the birth date) are
 * made afterwards, a batch at a time, in the ingest service.
 */
import {
  ageInYears,
  isBlank,
  readChoice,
  readDate,
  readFlag,
  readIdentifier,
  readLabel,
  readMoneyCents,
  showValue,
  type FieldResult,
} from './fields.js';

export interface RowError {
  column: string | null;
  value: string | null;
  reason: string;
}

export interface CustomerRow {
  customer_id: string;
  birth_date: string | null;
  region: string;
  channel: string;
  customer_type: 'individual' | 'company';
  /** Extra columns of this upload: name → value, null when the cell was empty (clears the attribute). */
  attributes: Map<string, string | null>;
}

export interface SaleRow {
  sale_id: string;
  customer_id: string;
  sold_at: string;
  amount_cents: number;
}

export interface ContactRow {
  customer_id: string;
  contacted_at: string;
  converted: 0 | 1;
  revenue_cents: number;
  /** 1: kept out of the campaign on purpose; `contacted_at` is then the date it would have been contacted. */
  holdout: 0 | 1;
}

export type RowCheck<Row> = { ok: true; row: Row } | { ok: false; errors: RowError[] };

export const CUSTOMER_COLUMNS = ['customer_id', 'birth_date', 'region', 'channel', 'customer_type'] as const;
export const SALE_COLUMNS = ['sale_id', 'customer_id', 'sold_at', 'amount'] as const;
export const CONTACT_COLUMNS = ['customer_id', 'contacted_at', 'converted', 'revenue', 'holdout'] as const;
const CUSTOMER_TYPES = ['individual', 'company'] as const;

/** Oldest plausible age; an older birth date is far likelier a typing error than a customer. */
const MAX_AGE_YEARS = 120;
const MAX_ATTRIBUTES = 50;
const ATTRIBUTE_NAME = /^[a-z][a-z0-9_]{0,62}$/;
/** Names a report uses for its own derived dimensions; an extra column may not shadow them. */
const RESERVED_ATTRIBUTE_NAMES = new Set(['age_band', 'age', 'region', 'channel', 'customer_type', 'segment', 'campaign_id']);

class FieldCollector {
  readonly errors: RowError[] = [];
  constructor(private readonly fields: Map<string, unknown>) {}

  take<T>(column: string, reader: (raw: unknown) => FieldResult<T>): T | undefined {
    const raw = this.fields.get(column);
    if (isBlank(raw)) {
      this.errors.push({ column, value: showValue(raw), reason: `${column} is required` });
      return undefined;
    }
    return this.read(column, raw, reader);
  }

  takeOptional<T>(column: string, reader: (raw: unknown) => FieldResult<T>): T | null | undefined {
    const raw = this.fields.get(column);
    if (isBlank(raw)) return null;
    return this.read(column, raw, reader);
  }

  private read<T>(column: string, raw: unknown, reader: (raw: unknown) => FieldResult<T>): T | undefined {
    const result = reader(raw);
    if (result.ok) return result.value;
    this.errors.push({ column, value: showValue(raw), reason: `${column} ${result.reason}` });
    return undefined;
  }
}

// Made once rather than for every row.
const readShortLabel = (raw: unknown) => readLabel(raw);
const readCustomerType = (raw: unknown) => readChoice(raw, CUSTOMER_TYPES);

export function checkCustomerFields(fields: Map<string, unknown>, today: string): RowCheck<CustomerRow> {
  const collect = new FieldCollector(fields);
  const customerId = collect.take('customer_id', readIdentifier);
  const birthDate = collect.takeOptional('birth_date', readDate);
  const region = collect.take('region', readShortLabel);
  const channel = collect.take('channel', readShortLabel);
  const customerType = collect.take('customer_type', readCustomerType);
  if (birthDate) {
    if (birthDate > today) {
      collect.errors.push({ column: 'birth_date', value: birthDate, reason: `birth_date ${birthDate} is in the future` });
    } else if (ageInYears(birthDate, today) > MAX_AGE_YEARS) {
      collect.errors.push({ column: 'birth_date', value: birthDate, reason: `birth_date ${birthDate} gives an age over ${MAX_AGE_YEARS}` });
    }
  }
  // Most uploads have no extra columns, and then the fields need not be walked a second time.
  const attributes = hasExtraColumns(fields) ? readAttributes(fields, collect.errors) : new Map<string, string | null>();
  if (attributes.size > MAX_ATTRIBUTES) {
    collect.errors.push({ column: null, value: null, reason: `at most ${MAX_ATTRIBUTES} extra attribute columns are accepted` });
  }
  if (collect.errors.length > 0) return { ok: false, errors: collect.errors };
  return {
    ok: true,
    row: {
      customer_id: customerId as string,
      birth_date: birthDate ?? null,
      region: region as string,
      channel: channel as string,
      customer_type: customerType as CustomerRow['customer_type'],
      attributes,
    },
  };
}

function hasExtraColumns(fields: Map<string, unknown>): boolean {
  let customerColumns = 0;
  for (const name of CUSTOMER_COLUMNS) if (fields.has(name)) customerColumns += 1;
  return fields.size > customerColumns;
}

/** The extra columns of a customer row as attributes; their problems are added to `errors`. */
function readAttributes(fields: Map<string, unknown>, errors: RowError[]): Map<string, string | null> {
  const attributes = new Map<string, string | null>();
  for (const [name, raw] of fields) {
    if ((CUSTOMER_COLUMNS as readonly string[]).includes(name)) continue;
    if (!ATTRIBUTE_NAME.test(name) || RESERVED_ATTRIBUTE_NAMES.has(name)) {
      errors.push({
        column: name,
        value: showValue(raw),
        reason: RESERVED_ATTRIBUTE_NAMES.has(name)
          ? `column ${name} is a reserved name and cannot be an extra attribute`
          : `column name "${name}" must start with a letter and hold only letters, digits and _ (at most 63)`,
      });
      continue;
    }
    if (isBlank(raw)) {
      attributes.set(name, null);
      continue;
    }
    const value = readLabel(raw, 200);
    if (value.ok) attributes.set(name, value.value);
    else errors.push({ column: name, value: showValue(raw), reason: `${name} ${value.reason}` });
  }
  return attributes;
}

export function checkSaleFields(fields: Map<string, unknown>, today: string): RowCheck<SaleRow> {
  const collect = new FieldCollector(fields);
  const saleId = collect.take('sale_id', readIdentifier);
  const customerId = collect.take('customer_id', readIdentifier);
  const soldAt = collect.take('sold_at', readDate);
  const amount = collect.take('amount', readMoneyCents);
  if (soldAt && soldAt > today) collect.errors.push({ column: 'sold_at', value: soldAt, reason: `sold_at ${soldAt} is in the future` });
  rejectUnknownColumns(fields, SALE_COLUMNS, collect.errors);
  if (collect.errors.length > 0) return { ok: false, errors: collect.errors };
  return { ok: true, row: { sale_id: saleId as string, customer_id: customerId as string, sold_at: soldAt as string, amount_cents: amount as number } };
}

export function checkContactFields(fields: Map<string, unknown>, today: string): RowCheck<ContactRow> {
  const collect = new FieldCollector(fields);
  const customerId = collect.take('customer_id', readIdentifier);
  const contactedAt = collect.take('contacted_at', readDate);
  const converted = collect.take('converted', readFlag);
  // A contact that did not convert brought no revenue, so an empty cell means 0.
  const revenue = collect.takeOptional('revenue', readMoneyCents) ?? 0;
  // Most contacts are contacted: an empty or missing holdout cell means 0.
  const holdout = collect.takeOptional('holdout', readFlag) ?? 0;
  if (contactedAt && contactedAt > today) {
    collect.errors.push({ column: 'contacted_at', value: contactedAt, reason: `contacted_at ${contactedAt} is in the future` });
  }
  if (converted === 0 && typeof revenue === 'number' && revenue > 0) {
    collect.errors.push({ column: 'revenue', value: showValue(fields.get('revenue')), reason: 'revenue above 0 needs converted = 1' });
  }
  rejectUnknownColumns(fields, CONTACT_COLUMNS, collect.errors);
  if (collect.errors.length > 0) return { ok: false, errors: collect.errors };
  return {
    ok: true,
    row: {
      customer_id: customerId as string,
      contacted_at: contactedAt as string,
      converted: converted as 0 | 1,
      revenue_cents: revenue as number,
      holdout: holdout as 0 | 1,
    },
  };
}

function rejectUnknownColumns(fields: Map<string, unknown>, known: readonly string[], errors: RowError[]): void {
  for (const name of fields.keys()) {
    if (!known.includes(name)) {
      errors.push({ column: name, value: null, reason: `unknown column "${name}"; expected ${known.join(', ')}` });
    }
  }
}
