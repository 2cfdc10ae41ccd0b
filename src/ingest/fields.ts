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
// Control characters in identifiers break CSV exports and log lines and are never intended.
// eslint-disable-next-line no-control-regex
const CONTROL_CHARACTERS = /[\u0000-\u001f\u007f]/;
// A JSON escape such as "\ud800" decodes to half a surrogate pair, which no encoding can store:
// both databases would keep U+FFFD instead, so the value would not read back as it was sent.
const LONE_SURROGATE = /\p{Cs}/u;

export function readIdentifier(raw: unknown): FieldResult<string> {
  if (typeof raw === 'number' && Number.isSafeInteger(raw)) return ok(String(raw));
  if (typeof raw !== 'string') return bad('must be text');
  const value = raw.trim();
  if (value === '') return bad('is required');
  if (value.length > MAX_IDENTIFIER_LENGTH) return bad(`must be at most ${MAX_IDENTIFIER_LENGTH} characters`);
  if (CONTROL_CHARACTERS.test(value)) return bad('must not contain control characters');
  if (LONE_SURROGATE.test(value)) return bad('must be valid Unicode text (it holds half of a surrogate pair)');
  return ok(value);
}

export function readLabel(raw: unknown, maxLength = 100): FieldResult<string> {
  if (typeof raw === 'number' && Number.isFinite(raw)) return ok(String(raw));
  if (typeof raw === 'boolean') return ok(String(raw));
  if (typeof raw !== 'string') return bad('must be text');
  const value = raw.trim();
  if (value === '') return bad('is required');
  if (value.length > maxLength) return bad(`must be at most ${maxLength} characters`);
  if (CONTROL_CHARACTERS.test(value)) return bad('must not contain control characters');
  if (LONE_SURROGATE.test(value)) return bad('must be valid Unicode text (it holds half of a surrogate pair)');
  return ok(value);
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
  if (typeof raw !== 'string') return bad('must be a date written YYYY-MM-DD');
  const text = raw.trim();
  const time = ISO_DATE_TIME.exec(text);
  if (time && !isClockTime(time)) return bad('has a time of day that does not exist (hours 00–23, minutes 00–59, seconds 00–60, offsets up to ±23:59)');
  const datePart = time ? text.slice(0, 10) : text;
  const match = ISO_DATE.exec(datePart);
  if (!match) return bad('must be a date written YYYY-MM-DD');
  const year = Number(match[1]);
  const month = Number(match[2]);
  const day = Number(match[3]);
  if (year < 1800) return bad('year must be 1800 or later');
  if (month < 1 || month > 12) return bad('month must be from 01 to 12');
  if (day < 1 || day > daysInMonth(year, month)) return bad(`is not a calendar date: ${monthName(month)} ${year} has ${daysInMonth(year, month)} days`);
  return ok(datePart);
}

export function daysInMonth(year: number, month: number): number {
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

export const MAX_AMOUNT_CENTS = 100_000_000_000_000; // one trillion in major units; far below 2^53

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
