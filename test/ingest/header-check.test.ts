/** The column check an upload gets before its rows: near-misses of known columns and their hints. */
import { describe, expect, it } from 'vitest';
import { checkColumns, editDistance } from '../../src/ingest/header-check.js';

describe('editDistance', () => {
  // Textbook Levenshtein values (common practice, worked by hand): kitten → sitting is 3.
  it.each([
    ['kitten', 'sitting', 3],
    ['', 'abc', 3],
    ['custmerid', 'customerid', 1],
    ['region', 'region', 0],
  ])('%s → %s is %i', (a, b, distance) => {
    expect(editDistance(a, b)).toBe(distance);
  });
});

describe('checkColumns', () => {
  it('accepts the known columns and leaves other customer columns to be attributes', () => {
    expect(checkColumns('customers', ['customer_id', 'birth_date', 'region', 'channel', 'customer_type', 'loyalty_tier'])).toEqual([]);
  });

  it('names the column a typo meant while that column is missing', () => {
    expect(checkColumns('customers', ['custmer_id', 'region', 'channel', 'customer_type'])).toEqual([
      { column: 'custmer_id', suggestion: 'customer_id', reason: 'unknown column "custmer_id": did you mean customer_id?' },
    ]);
  });

  it.each(['birthdate', 'date_of_birth', 'dob', 'birthday'])('refuses %s as a birth date that would be lost as an attribute', (column) => {
    const [issue] = checkColumns('customers', ['customer_id', column, 'region', 'channel', 'customer_type']);
    expect(issue?.suggestion).toBe('birth_date');
    expect(issue?.reason).toBe(`unknown column "${column}": did you mean birth_date? Send birth dates as birth_date (YYYY-MM-DD).`);
  });

  it('refuses an age column in a customer upload, pointing at birth_date', () => {
    const [issue] = checkColumns('customers', ['customer_id', 'age', 'region', 'channel', 'customer_type']);
    expect(issue?.reason).toMatch(/^column "age" would be stored as an extra attribute and not as an age; send the birth date as birth_date/);
  });

  it('says nothing about a near-miss when the known column is there too', () => {
    expect(checkColumns('customers', ['customer_id', 'birth_date', 'birthdate', 'region', 'channel', 'customer_type'])).toEqual([]);
  });

  it('does not mistake an unrelated extra attribute for a known column', () => {
    expect(checkColumns('customers', ['customer_id', 'region', 'channel', 'customer_type', 'tier', 'segment', 'store'])).toEqual([]);
  });

  it('knows each kind its own columns and their other names', () => {
    expect(checkColumns('sales', ['sale_id', 'customer_id', 'date', 'price']).map((issue) => issue.suggestion)).toEqual(['sold_at', 'amount']);
    expect(checkColumns('contacts', ['customer_id', 'contact_date', 'convertd', 'revenue']).map((issue) => issue.suggestion)).toEqual(['contacted_at', 'converted']);
  });
});
