/**
 * Readers for single field values. Each returns the typed value or the reason it cannot be
 * read; none throws, so one bad field never hides the others in the same row.
 */

export type FieldResult<T> = { ok: true; value: T } | { ok: false; reason: string };

const ok = <T>(value: T): FieldResult<T> => ({ ok: true, value });
const bad = (reason: string): FieldResult<never> => ({ ok: false, reason });

/** Empty strings, whitespace and null all mean "no value" in every upload format. */
export function isBlank(raw: unknown): boolean {
  return raw === undefined || raw === null || (typeof raw === 'string' && raw.trim() === '');
}

export function showValue(raw: unknown): string | null {
  if (raw === undefined) return null;
  // String() for numbers: JSON.stringify shows an overflowing 1e309 (Infinity) as "null".
  const text = typeof raw === 'string' ? raw : typeof raw === 'number' ? String(raw) : stringifyForDisplay(raw);
  return text.length > 200 ? `${text.slice(0, 200)}…` : text;
}

function stringifyForDisplay(raw: unknown): string {
  try {
    return JSON.stringify(raw) ?? String(raw);
  } catch {
    // JSON.stringify recurses: a value nested some thousands deep (which JSON.parse reads
    // without trouble) overflows the stack. The row is refused either way; only its display is lost.
    return '(a value nested too deeply to show)';
  }
}

const MAX_IDENTIFIER_LENGTH = 200;
const CONTROL_CHARACTER_REASON = 'must not contain control characters';
const LONE_SURROGATE_REASON = 'must be valid Unicode text (it holds half of a surrogate pair)';
const LAST_CONTROL_CHARACTER = 0x1f;
const DELETE = 0x7f;
const FIRST_HIGH_SURROGATE = 0xd800;
const FIRST_LOW_SURROGATE = 0xdc00;
const LAST_LOW_SURROGATE = 0xdfff;

/**
 * Why `value` cannot be kept as text, or null. Control characters (U+0000–U+001F, U+007F) in
 * identifiers break CSV exports and log lines and are never intended. A JSON escape such as
 * "\ud800" decodes to half a surrogate pair, which no encoding can store: both databases
 * would keep U+FFFD instead, so the value would not read back as it was sent. A control
 * character is named first wherever it stands.
 */
function textProblem(value: string): string | null {
  let loneSurrogate = false;
  for (let index = 0; index < value.length; index++) {
    const code = value.charCodeAt(index);
    if (code <= LAST_CONTROL_CHARACTER || code === DELETE) return CONTROL_CHARACTER_REASON;
    if (code < FIRST_HIGH_SURROGATE || code > LAST_LOW_SURROGATE) continue;
    const next = value.charCodeAt(index + 1);
    if (code < FIRST_LOW_SURROGATE && next >= FIRST_LOW_SURROGATE && next <= LAST_LOW_SURROGATE) index += 1;
    else loneSurrogate = true;
  }
  return loneSurrogate ? LONE_SURROGATE_REASON : null;
}

export function readIdentifier(raw: unknown): FieldResult<string> {
  if (typeof raw === 'number' && Number.isSafeInteger(raw)) return ok(String(raw));
  if (typeof raw !== 'string') return bad('must be text');
  const value = raw.trim();
  if (value === '') return bad('is required');
  if (value.length > MAX_IDENTIFIER_LENGTH) return bad(`must be at most ${MAX_IDENTIFIER_LENGTH} characters`);
  const problem = textProblem(value);
  return problem === null ? ok(value) : bad(problem);
}

export function readLabel(raw: unknown, maxLength = 100): FieldResult<string> {
  if (typeof raw === 'number' && Number.isFinite(raw)) return ok(String(raw));
  if (typeof raw === 'boolean') return ok(String(raw));
  if (typeof raw !== 'string') return bad('must be text');
  const value = raw.trim();
  if (value === '') return bad('is required');
  if (value.length > maxLength) return bad(`must be at most ${maxLength} characters`);
  const problem = textProblem(value);
  return problem === null ? ok(value) : bad(problem);
}

const ISO_DATE = /^(\d{4})-(\d{2})-(\d{2})$/;
// Groups: hour, minute, second, offset hour, offset minute.
const ISO_DATE_TIME = /^\d{4}-\d{2}-\d{2}T(\d{2}):(\d{2})(?::(\d{2})(?:\.\d+)?)?(?:Z|[+-](\d{2}):?(\d{2}))?$/;

/** A date-time whose clock reads 25:00 or whose offset is +24:00 is a typing error, not a day to keep. */
function isClockTime(match: RegExpExecArray): boolean {
  const [, hour, minute, second, offsetHour, offsetMinute] = match;
  // Second 60 is a leap second (ISO 8601 and RFC 3339 allow it).
  return Number(hour) <= 23 && Number(minute) <= 59 && Number(second ?? 0) <= 60 && Number(offsetHour ?? 0) <= 23 && Number(offsetMinute ?? 0) <= 59;
}

/**
 * A calendar date written `YYYY-MM-DD`. A date-time is accepted when it is plainly the same
 * day (`2024-03-01T10:00:00Z`); the day as written is kept, not shifted to another zone. Its
 * clock must be one that exists (ISO 8601 / RFC 3339 ranges), so `2024-03-01T25:00:00Z` is refused
 * rather than kept as 1 March. Never throws.
 *
 * @example readDate('2024-03-01T23:30:00-05:00') → { ok: true, value: '2024-03-01' }
 */
export function readDate(raw: unknown): FieldResult<string> {
  if (typeof raw !== 'string') return bad(NOT_A_DATE);
  const text = raw.trim();
  // Nearly every date arrives as a plain YYYY-MM-DD, which is read digit by digit rather than
  // by the two patterns below.
  if (isPlainDate(text)) return checkCalendarDate(text, digitsValue(text, 0, 4), digitsValue(text, 5, 7), digitsValue(text, 8, 10));
  const time = ISO_DATE_TIME.exec(text);
  if (time && !isClockTime(time)) return bad('has a time of day that does not exist (hours 00–23, minutes 00–59, seconds 00–60, offsets up to ±23:59)');
  const datePart = time ? text.slice(0, 10) : text;
  const match = ISO_DATE.exec(datePart);
  if (!match) return bad(NOT_A_DATE);
  return checkCalendarDate(datePart, Number(match[1]), Number(match[2]), Number(match[3]));
}

const NOT_A_DATE = 'must be a date written YYYY-MM-DD';
const HYPHEN = 0x2d;
const DIGIT_ZERO = 0x30;

/** Whether `text` is exactly what ISO_DATE matches: four, two and two ASCII digits joined by hyphens. */
function isPlainDate(text: string): boolean {
  return text.length === 10 && text.charCodeAt(4) === HYPHEN && text.charCodeAt(7) === HYPHEN && digitsValue(text, 0, 4) >= 0 && digitsValue(text, 5, 7) >= 0 && digitsValue(text, 8, 10) >= 0;
}

/** The number that `text` writes from `start` up to `end` in ASCII digits, or -1 if another character is among them. */
function digitsValue(text: string, start: number, end: number): number {
  let value = 0;
  for (let index = start; index < end; index++) {
    const digit = text.charCodeAt(index) - DIGIT_ZERO;
    if (digit < 0 || digit > 9) return -1;
    value = value * 10 + digit;
  }
  return value;
}

function checkCalendarDate(datePart: string, year: number, month: number, day: number): FieldResult<string> {
  if (year < 1800) return bad('year must be 1800 or later');
  if (month < 1 || month > 12) return bad('month must be from 01 to 12');
  const monthLength = daysInMonth(year, month);
  if (day < 1 || day > monthLength) return bad(`is not a calendar date: ${monthName(month)} ${year} has ${monthLength} days`);
  return ok(datePart);
}

const DAYS_IN_COMMON_YEAR_MONTHS = [31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31];

export function daysInMonth(year: number, month: number): number {
  // Date.UTC reads the years 0–99 as 1900–1999 and carries a month outside 1–12 into another
  // year; the arithmetic below covers the four-digit years that dates are written with.
  if (Number.isInteger(year) && Number.isInteger(month) && year >= 100 && year <= 9999 && month >= 1 && month <= 12) {
    if (month === 2 && year % 4 === 0 && (year % 100 !== 0 || year % 400 === 0)) return 29;
    return DAYS_IN_COMMON_YEAR_MONTHS[month - 1] as number;
  }
  return new Date(Date.UTC(year, month, 0)).getUTCDate();
}

function monthName(month: number): string {
  return new Date(Date.UTC(2000, month - 1, 1)).toLocaleString('en', { month: 'long', timeZone: 'UTC' });
}

/**
 * Whole years from `birthDate` to `onDate` (both `YYYY-MM-DD`), by exact birthday arithmetic:
 * the age goes up on the birthday itself. Someone born on 29 February has their birthday on
 * 1 March in common years (month-day text '03-01' sorts after '02-29').
 */
export function ageInYears(birthDate: string, onDate: string): number {
  const years = Number(onDate.slice(0, 4)) - Number(birthDate.slice(0, 4));
  return onDate.slice(5) < birthDate.slice(5) ? years - 1 : years;
}

const MAX_AMOUNT_CENTS = 100_000_000_000_000; // one trillion in major units; far below 2^53

/** A money amount ≥ 0 with at most two decimals, returned in integer cents. */
export function readMoneyCents(raw: unknown): FieldResult<number> {
  if (typeof raw === 'number') {
    if (!Number.isFinite(raw)) return bad('must be a finite number');
    if (raw < 0) return bad('must not be negative');
    // The shortest decimal that reads back as this number is what the sender wrote (12.5 for
    // 12.50), so its digits decide the decimals exactly; a tolerance on raw * 100 would let
    // 12345.675 through as 1234568 cents. Exponent forms appear only below 1e-6 and from 1e21.
    const text = String(raw);
    if (text.includes('e')) return raw >= 1 ? bad('is too large') : bad('must have at most two decimals');
    return readMoneyCents(text);
  }
  if (typeof raw !== 'string') return bad('must be a number');
  const text = raw.trim();
  const plainCents = centsOfPlainAmount(text);
  if (plainCents !== -1) return plainCents > MAX_AMOUNT_CENTS ? bad('is too large') : ok(plainCents);
  if (/^-/.test(text) && !/^-0*(\.0*)?$/.test(text)) return bad('must not be negative');
  const match = /^[-+]?(\d+)(?:\.(\d{1,2}))?$/.exec(text);
  if (!match) {
    if (/^[-+]?\d+\.\d{3,}$/.test(text)) return bad('must have at most two decimals');
    return bad('must be a plain number such as 12.50 (no currency signs or thousands separators)');
  }
  const cents = Number(match[1]) * 100 + Number((match[2] ?? '').padEnd(2, '0'));
  if (cents > MAX_AMOUNT_CENTS) return bad('is too large');
  return ok(cents === 0 ? 0 : cents); // folds -0 into 0
}

/**
 * Cents of an amount written as ASCII digits with an optional point and one or two decimals
 * (what nearly every upload sends), read without the patterns of readMoneyCents; -1 for any
 * other text. Past 2^53 the digits are not added exactly, but such an amount is too large anyway.
 */
function centsOfPlainAmount(text: string): number {
  const point = text.indexOf('.');
  const wholeEnd = point === -1 ? text.length : point;
  if (wholeEnd === 0) return -1;
  const whole = digitsValue(text, 0, wholeEnd);
  if (whole === -1) return -1;
  if (point === -1) return whole * 100;
  const decimals = text.length - point - 1;
  if (decimals < 1 || decimals > 2) return -1;
  const fraction = digitsValue(text, point + 1, text.length);
  if (fraction === -1) return -1;
  return whole * 100 + (decimals === 1 ? fraction * 10 : fraction);
}

const TRUE_WORDS = new Set(['1', 'true', 'yes']);
const FALSE_WORDS = new Set(['0', 'false', 'no']);

export function readFlag(raw: unknown): FieldResult<0 | 1> {
  if (raw === true || raw === 1) return ok(1);
  if (raw === false || raw === 0) return ok(0);
  if (typeof raw === 'string') {
    const word = raw.trim().toLowerCase();
    if (TRUE_WORDS.has(word)) return ok(1);
    if (FALSE_WORDS.has(word)) return ok(0);
  }
  return bad('must be one of 0, 1, true, false, yes, no');
}

export function readChoice<T extends string>(raw: unknown, choices: readonly T[]): FieldResult<T> {
  if (typeof raw !== 'string') return bad(`must be one of ${choices.join(', ')}`);
  const word = raw.trim().toLowerCase();
  const match = choices.find((choice) => choice === word);
  return match === undefined ? bad(`must be one of ${choices.join(', ')}`) : ok(match);
}
