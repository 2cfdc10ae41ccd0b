/**
 * Field readers. Expected ages and calendar facts are worked by hand from the Gregorian calendar
 * (common practice: the age goes up on the birthday; 29 February birthdays count from 1 March in
 * common years).
 */
import { describe, expect, it } from 'vitest';
import { ageInYears, daysInMonth, isBlank, readChoice, readDate, readFlag, readIdentifier, readLabel, readMoneyCents, showValue } from '../../src/ingest/fields.js';

describe('readDate', () => {
  it('refuses digits other than ASCII', () => {
    expect(readDate('٢٠٢٤-٠٣-٠١')).toEqual({ ok: false, reason: 'must be a date written YYYY-MM-DD' });
  });

  it('accepts a calendar date written YYYY-MM-DD', () => {
    expect(readDate('2024-03-01')).toEqual({ ok: true, value: '2024-03-01' });
  });

  it('trims surrounding spaces', () => {
    expect(readDate(' 2024-03-01 ')).toEqual({ ok: true, value: '2024-03-01' });
  });

  it('accepts 29 February in a leap year', () => {
    expect(readDate('2024-02-29')).toEqual({ ok: true, value: '2024-02-29' });
  });

  it('accepts 29 February 2000, a leap year although divisible by 100', () => {
    expect(readDate('2000-02-29')).toEqual({ ok: true, value: '2000-02-29' });
  });

  it('refuses 29 February 1900, a common year because divisible by 100 but not 400', () => {
    expect(readDate('1900-02-29')).toEqual({ ok: false, reason: 'is not a calendar date: February 1900 has 28 days' });
  });

  it('refuses 30 February as not a calendar date', () => {
    expect(readDate('2023-02-30')).toEqual({ ok: false, reason: 'is not a calendar date: February 2023 has 28 days' });
  });

  it('refuses 31 April as not a calendar date', () => {
    expect(readDate('2023-04-31')).toEqual({ ok: false, reason: 'is not a calendar date: April 2023 has 30 days' });
  });

  it('refuses day 00', () => {
    expect(readDate('2023-04-00')).toMatchObject({ ok: false, reason: expect.stringContaining('is not a calendar date') });
  });

  it('refuses month 13', () => {
    expect(readDate('2023-13-01')).toEqual({ ok: false, reason: 'month must be from 01 to 12' });
  });

  it('refuses a year before 1800', () => {
    expect(readDate('1799-12-31')).toEqual({ ok: false, reason: 'year must be 1800 or later' });
  });

  it('refuses a day-first date', () => {
    expect(readDate('15/06/2024')).toEqual({ ok: false, reason: 'must be a date written YYYY-MM-DD' });
  });

  it('refuses a date without leading zeros', () => {
    expect(readDate('2024-3-1')).toEqual({ ok: false, reason: 'must be a date written YYYY-MM-DD' });
  });

  it('refuses a number', () => {
    expect(readDate(20240301)).toEqual({ ok: false, reason: 'must be a date written YYYY-MM-DD' });
  });

  it('keeps the day as written of a date-time with an offset', () => {
    expect(readDate('2024-03-01T23:30:00-05:00')).toEqual({ ok: true, value: '2024-03-01' });
  });

  it('keeps the day of a UTC date-time', () => {
    expect(readDate('2024-03-01T10:00:00Z')).toEqual({ ok: true, value: '2024-03-01' });
  });

  it('checks the calendar date inside a date-time', () => {
    expect(readDate('2023-02-30T10:00:00Z')).toMatchObject({ ok: false });
  });
});

describe('daysInMonth', () => {
  it('gives 29 for February of a leap year and 28 otherwise', () => {
    expect([daysInMonth(2024, 2), daysInMonth(2023, 2), daysInMonth(2000, 2), daysInMonth(2100, 2)]).toEqual([29, 28, 29, 28]);
  });

  it('agrees with the calendar for every month from 1800 to 2400', () => {
    for (let year = 1800; year <= 2400; year++) {
      for (let month = 1; month <= 12; month++) {
        expect(daysInMonth(year, month), `${year}-${month}`).toBe(new Date(Date.UTC(year, month, 0)).getUTCDate());
      }
    }
  });
});

describe('ageInYears', () => {
  it('goes up on the birthday itself', () => {
    expect(ageInYears('1990-06-15', '2026-06-15')).toBe(36);
  });

  it('stays lower on the day before the birthday', () => {
    expect(ageInYears('1990-06-15', '2026-06-14')).toBe(35);
  });

  it('is zero on the day of birth', () => {
    expect(ageInYears('2026-06-15', '2026-06-15')).toBe(0);
  });

  it('uses exact birthday arithmetic, not year minus year, late in the year', () => {
    expect(ageInYears('1990-12-31', '2026-01-01')).toBe(35);
  });

  it('keeps a 29 February birthday one year lower on 28 February of a common year', () => {
    expect(ageInYears('2000-02-29', '2023-02-28')).toBe(22);
  });

  it('raises a 29 February birthday on 1 March of a common year', () => {
    expect(ageInYears('2000-02-29', '2023-03-01')).toBe(23);
  });

  it('raises a 29 February birthday on 29 February of a leap year', () => {
    expect(ageInYears('2000-02-29', '2024-02-29')).toBe(24);
  });

  it('keeps a 29 February birthday lower on 28 February of a leap year', () => {
    expect(ageInYears('2000-02-29', '2024-02-28')).toBe(23);
  });

  it('reaches 120 on the 120th birthday', () => {
    expect(ageInYears('1906-06-15', '2026-06-15')).toBe(120);
  });
});

describe('readMoneyCents', () => {
  it('reads a string with two decimals into cents', () => {
    expect(readMoneyCents('12.50')).toEqual({ ok: true, value: 1250 });
  });

  it('reads a string with one decimal', () => {
    expect(readMoneyCents('12.5')).toEqual({ ok: true, value: 1250 });
  });

  it('reads a whole number string', () => {
    expect(readMoneyCents('12')).toEqual({ ok: true, value: 1200 });
  });

  it('reads a JSON number whose binary value is not exact (19.99)', () => {
    expect(readMoneyCents(19.99)).toEqual({ ok: true, value: 1999 });
  });

  it('reads zero', () => {
    expect(readMoneyCents(0)).toEqual({ ok: true, value: 0 });
  });

  it('reads "-0" as zero, not as a negative amount', () => {
    const result = readMoneyCents('-0');
    expect(result).toEqual({ ok: true, value: 0 });
    expect(result.ok && Object.is(result.value, -0)).toBe(false);
  });

  it('reads the number -0 as a positive zero', () => {
    const result = readMoneyCents(-0);
    expect(result.ok && Object.is(result.value, 0)).toBe(true);
  });

  it('refuses "1e309" as text that is not a plain number', () => {
    expect(readMoneyCents('1e309')).toEqual({ ok: false, reason: 'must be a plain number such as 12.50 (no currency signs or thousands separators)' });
  });

  it('refuses the number 1e309 (Infinity after JSON parsing) as not finite', () => {
    expect(readMoneyCents(JSON.parse('1e309'))).toEqual({ ok: false, reason: 'must be a finite number' });
  });

  it('refuses NaN as not finite', () => {
    expect(readMoneyCents(Number.NaN)).toEqual({ ok: false, reason: 'must be a finite number' });
  });

  it('refuses "12.345" for having three decimals', () => {
    expect(readMoneyCents('12.345')).toEqual({ ok: false, reason: 'must have at most two decimals' });
  });

  it('refuses the number 12.345 for having three decimals', () => {
    expect(readMoneyCents(12.345)).toEqual({ ok: false, reason: 'must have at most two decimals' });
  });

  it('refuses three decimals on a large JSON number instead of rounding it (12345.675 is not 1234568 cents)', () => {
    expect(readMoneyCents(12345.675)).toEqual({ ok: false, reason: 'must have at most two decimals' });
  });

  it('refuses a tiny JSON number written in exponent form as having too many decimals', () => {
    expect(readMoneyCents(1e-7)).toEqual({ ok: false, reason: 'must have at most two decimals' });
  });

  it('refuses a negative string', () => {
    expect(readMoneyCents('-5.00')).toEqual({ ok: false, reason: 'must not be negative' });
  });

  it('refuses a negative number', () => {
    expect(readMoneyCents(-0.01)).toEqual({ ok: false, reason: 'must not be negative' });
  });

  it('refuses a currency sign', () => {
    expect(readMoneyCents('$12.50')).toMatchObject({ ok: false, reason: expect.stringContaining('no currency signs') });
  });

  it('refuses a thousands separator', () => {
    expect(readMoneyCents('1,250.00')).toMatchObject({ ok: false, reason: expect.stringContaining('thousands separators') });
  });

  it('refuses an amount above one trillion', () => {
    expect(readMoneyCents('1000000000000.01')).toEqual({ ok: false, reason: 'is too large' });
  });

  it('refuses a JSON number written in exponent form above 1e21 as too large', () => {
    expect(readMoneyCents(1e22)).toEqual({ ok: false, reason: 'is too large' });
  });

  it('accepts exactly one trillion', () => {
    expect(readMoneyCents('1000000000000')).toEqual({ ok: true, value: 100_000_000_000_000 });
  });

  it('refuses a boolean', () => {
    expect(readMoneyCents(true)).toEqual({ ok: false, reason: 'must be a number' });
  });

  it('reads leading zeros', () => {
    expect(readMoneyCents('007.5')).toEqual({ ok: true, value: 750 });
  });

  it('refuses a point without digits on both sides', () => {
    const reason = 'must be a plain number such as 12.50 (no currency signs or thousands separators)';
    expect([readMoneyCents('5.'), readMoneyCents('.5')]).toEqual([
      { ok: false, reason },
      { ok: false, reason },
    ]);
  });

  it('refuses digits other than ASCII', () => {
    expect(readMoneyCents('١٢')).toMatchObject({ ok: false, reason: expect.stringContaining('plain number') });
  });

  it('calls a run of digits past 2^53 too large', () => {
    expect(readMoneyCents('9'.repeat(40))).toEqual({ ok: false, reason: 'is too large' });
  });
});

describe('readFlag', () => {
  it.each([
    ['1', 1],
    ['0', 0],
    ['true', 1],
    ['false', 0],
    ['yes', 1],
    ['no', 0],
    [' YES ', 1],
    ['False', 0],
    [true, 1],
    [false, 0],
    [1, 1],
    [0, 0],
  ] as const)('reads %j as %i', (raw, expected) => {
    expect(readFlag(raw)).toEqual({ ok: true, value: expected });
  });

  it.each(['2', 'y', 'n', 'maybe', '', '1.0'])('refuses the text %j', (raw) => {
    expect(readFlag(raw)).toEqual({ ok: false, reason: 'must be one of 0, 1, true, false, yes, no' });
  });

  it('refuses the number 2', () => {
    expect(readFlag(2)).toEqual({ ok: false, reason: 'must be one of 0, 1, true, false, yes, no' });
  });

  it('refuses null', () => {
    expect(readFlag(null)).toMatchObject({ ok: false });
  });
});

describe('readIdentifier', () => {
  it('trims the identifier', () => {
    expect(readIdentifier('  C-001 ')).toEqual({ ok: true, value: 'C-001' });
  });

  it('accepts a whole JSON number as text', () => {
    expect(readIdentifier(1001)).toEqual({ ok: true, value: '1001' });
  });

  it('refuses a fractional JSON number', () => {
    expect(readIdentifier(10.5)).toEqual({ ok: false, reason: 'must be text' });
  });

  it('refuses control characters', () => {
    expect(readIdentifier('C\u00071')).toEqual({ ok: false, reason: 'must not contain control characters' });
  });

  it('refuses more than 200 characters', () => {
    expect(readIdentifier('x'.repeat(201))).toEqual({ ok: false, reason: 'must be at most 200 characters' });
  });

  it('accepts a character outside the Basic Multilingual Plane (a whole surrogate pair)', () => {
    expect(readIdentifier('C😀1')).toEqual({ ok: true, value: 'C😀1' });
  });

  it.each(['C\ud8001', 'C\udc001', 'C\udc00\ud800'])('refuses half of a surrogate pair in %j', (raw) => {
    expect(readIdentifier(raw)).toEqual({ ok: false, reason: 'must be valid Unicode text (it holds half of a surrogate pair)' });
  });

  it('names a control character before half of a surrogate pair that precedes it', () => {
    expect(readIdentifier('C\ud800\u007f')).toEqual({ ok: false, reason: 'must not contain control characters' });
  });
});

describe('readLabel', () => {
  it('refuses an object', () => {
    expect(readLabel({ name: 'North' })).toEqual({ ok: false, reason: 'must be text' });
  });

  it('refuses text longer than the limit', () => {
    expect(readLabel('x'.repeat(101))).toEqual({ ok: false, reason: 'must be at most 100 characters' });
  });
});

describe('readChoice', () => {
  it('matches case-insensitively', () => {
    expect(readChoice(' Company ', ['individual', 'company'])).toEqual({ ok: true, value: 'company' });
  });

  it('lists the choices when the word is not one of them', () => {
    expect(readChoice('person', ['individual', 'company'])).toEqual({ ok: false, reason: 'must be one of individual, company' });
  });
});

describe('isBlank and showValue', () => {
  it('treats empty text, spaces, null and a missing value as blank', () => {
    expect([isBlank(''), isBlank('  '), isBlank(null), isBlank(undefined), isBlank(0), isBlank('0')]).toEqual([true, true, true, true, false, false]);
  });

  it('shows JSON values as JSON text and cuts long values at 200 characters', () => {
    expect(showValue({ a: 1 })).toBe('{"a":1}');
    expect(showValue('y'.repeat(300))).toBe(`${'y'.repeat(200)}…`);
    expect(showValue(undefined)).toBeNull();
  });
});
