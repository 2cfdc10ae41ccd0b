/**
 * The columns of an upload, checked once before its rows: a name that is almost a known column
 * (a typo, a common other name such as `dob` for `birth_date`) while that column is missing is
 * refused with "did you mean", since every row would otherwise fail on the missing column, or —
 * for customers — the misspelt column would quietly become an extra attribute and its data lost.
 */
import type { IngestKind } from '../db/tables.js';
import { CONTACT_COLUMNS, CUSTOMER_COLUMNS, SALE_COLUMNS } from './row-checks.js';

export interface ColumnIssue {
  column: string;
  reason: string;
  /** The known column the name most likely meant, when there is one. */
  suggestion: string | null;
}

/** The columns of the upload cannot be read as the kind's columns; no row was looked at. */
export class InvalidColumnsError extends Error {
  override name = 'InvalidColumnsError';
  constructor(
    readonly issues: ColumnIssue[],
    /** The line of the upload the columns were read from (the header of a CSV, the first row of JSON). */
    readonly line: number,
  ) {
    super(issues.length === 1 && issues[0] ? issues[0].reason : `${issues.length} columns are not known: ${issues.map((issue) => issue.reason).join('; ')}`);
  }
}

const KNOWN_COLUMNS: Record<IngestKind, readonly string[]> = {
  customers: CUSTOMER_COLUMNS,
  sales: SALE_COLUMNS,
  contacts: CONTACT_COLUMNS,
};

/**
 * Other names people give the known columns, after normalization (lower case, `_` for spaces).
 * Written from common spreadsheet headings; a name listed here is refused only while the column
 * it stands for is missing from the upload.
 */
const SYNONYMS: Record<string, readonly string[]> = {
  customer_id: ['customer', 'customer_no', 'customer_number', 'cust_id', 'client_id', 'id'],
  birth_date: ['birthdate', 'birthday', 'date_of_birth', 'dob', 'born', 'born_on', 'birth'],
  region: ['area', 'territory'],
  channel: ['source', 'acquisition_channel'],
  customer_type: ['type', 'kind', 'customer_kind'],
  sale_id: ['id', 'order_id', 'sale_no', 'sale_number'],
  sold_at: ['date', 'sale_date', 'sold_on', 'sold'],
  amount: ['total', 'value', 'price', 'sum', 'sale_amount'],
  contacted_at: ['date', 'contact_date', 'contacted_on', 'sent_at', 'contacted'],
  converted: ['conversion', 'responded', 'response', 'purchased', 'bought'],
  revenue: ['value', 'amount', 'sales', 'revenue_amount'],
};

/** Columns that hold a birth date in another form; its ages would be lost as an attribute. */
const AGE_LIKE = new Set(['age', 'age_years', 'year_of_birth', 'birth_year']);

/** The problems of an upload's column names (normalized), for the given kind; empty when they are fine. */
export function checkColumns(kind: IngestKind, columns: readonly string[]): ColumnIssue[] {
  const known = KNOWN_COLUMNS[kind];
  const present = new Set(columns);
  const missing = known.filter((column) => !present.has(column));
  const issues: ColumnIssue[] = [];
  for (const column of columns) {
    if (known.includes(column)) continue;
    const meant = nearestMissing(column, missing);
    if (meant !== null) {
      issues.push({ column, suggestion: meant, reason: `unknown column "${column}": did you mean ${meant}?${meant === 'birth_date' ? ' Send birth dates as birth_date (YYYY-MM-DD).' : ''}` });
    } else if (kind === 'customers' && AGE_LIKE.has(column)) {
      issues.push({
        column,
        suggestion: 'birth_date',
        reason: `column "${column}" would be stored as an extra attribute and not as an age; send the birth date as birth_date (YYYY-MM-DD) instead`,
      });
    }
  }
  return issues;
}

/** The missing known column `column` most likely stands for, or null. */
function nearestMissing(column: string, missing: readonly string[]): string | null {
  const squeezed = column.replaceAll('_', '');
  for (const candidate of missing) {
    if (squeezed === candidate.replaceAll('_', '')) return candidate;
    if (SYNONYMS[candidate]?.includes(column)) return candidate;
  }
  let best: { candidate: string; distance: number } | null = null;
  for (const candidate of missing) {
    // One edit in six letters, two at most: close enough to be a typo, far enough that a real
    // extra attribute (`tier`, `segment`) is not mistaken for a known column.
    const allowed = Math.min(2, Math.floor(candidate.length / 5));
    if (allowed === 0) continue;
    const distance = editDistance(squeezed, candidate.replaceAll('_', ''));
    if (distance <= allowed && (best === null || distance < best.distance)) best = { candidate, distance };
  }
  return best?.candidate ?? null;
}

/** Levenshtein distance (insertions, deletions, substitutions), by code unit. */
export function editDistance(a: string, b: string): number {
  let previous = Array.from({ length: b.length + 1 }, (_, index) => index);
  for (let i = 1; i <= a.length; i++) {
    const current = [i];
    for (let j = 1; j <= b.length; j++) {
      const substitution = (previous[j - 1] as number) + (a[i - 1] === b[j - 1] ? 0 : 1);
      current.push(Math.min((previous[j] as number) + 1, (current[j - 1] as number) + 1, substitution));
    }
    previous = current;
  }
  return previous[b.length] as number;
}
