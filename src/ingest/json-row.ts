/**
 * One row of a JSON upload (an element of an array, or an NDJSON line) → a record. A row that
 * names a column twice, or holds a NUL character, is kept with a defect rather than trusted.
 */
import { normalizeColumnName } from './columns.js';
import { showValue } from './fields.js';
import { MalformedBodyError, type ParsedRecord } from './records.js';

/** The value of one row's JSON text; text that is not JSON fails the whole upload at its line. */
export function parseJsonText(text: string, line: number): unknown {
  try {
    // JSON.parse keeps "__proto__" and "constructor" as plain own keys; they are later
    // treated as ordinary (unknown) column names and never touch any prototype.
    return JSON.parse(text);
  } catch (error) {
    throw new MalformedBodyError(`invalid JSON: ${error instanceof Error ? error.message : String(error)}`, line);
  }
}

/** The record of one parsed row: its fields by normalized column name, or a defect saying why it is unusable. */
export function objectRecord(value: unknown, text: string, row: number, line: number): ParsedRecord {
  const fields = new Map<string, unknown>();
  if (value === null || typeof value !== 'object' || Array.isArray(value)) {
    return { row, line, fields, defect: { column: null, value: null, reason: 'each row must be a JSON object of column names to values' } };
  }
  const entries = Object.entries(value);
  let defect: ParsedRecord['defect'];
  // JSON.parse keeps only the last of two equal keys; more members in the text than keys in
  // the object means one value was silently dropped, so the row is ambiguous.
  if (countTopLevelMembers(text) > entries.length) {
    const name = normalizeColumnName(repeatedTopLevelKey(text) ?? '');
    defect = { column: withVisibleNul(name), value: null, reason: `column "${withVisibleNul(name)}" appears twice in this row` };
  }
  const seen = new Set<string>();
  for (const [key, fieldValue] of entries) {
    const name = normalizeColumnName(key);
    // A JSON escape can carry NUL (\u0000) where the raw bytes of a CSV body cannot. No value
    // may hold it (PostgreSQL text cannot store it), so the field is kept out of the record
    // and the row is refused with the character shown as its escape.
    if (key.includes('\u0000') || (typeof fieldValue === 'string' && fieldValue.includes('\u0000'))) {
      const shown = typeof fieldValue === 'string' ? withVisibleNul(showValue(fieldValue) ?? '') : null;
      defect ??= { column: withVisibleNul(name), value: shown, reason: `column "${withVisibleNul(name)}" holds a NUL character (\\u0000), which no value may contain` };
      continue;
    }
    if (seen.has(name)) {
      defect ??= { column: name, value: null, reason: `column "${name}" appears twice in this row` };
      continue;
    }
    seen.add(name);
    fields.set(name, fieldValue);
  }
  return defect === undefined ? { row, line, fields } : { row, line, fields, defect };
}

function withVisibleNul(text: string): string {
  return text.replaceAll('\u0000', '\\u0000');
}

const QUOTE = 0x22;
const BACKSLASH = 0x5c;
const COLON = 0x3a;
const OPEN_BRACE = 0x7b;
const CLOSE_BRACE = 0x7d;
const OPEN_BRACKET = 0x5b;
const CLOSE_BRACKET = 0x5d;

/** Members of the outermost object of `text`, a JSON object that JSON.parse has accepted. */
function countTopLevelMembers(text: string): number {
  let depth = 0;
  let members = 0;
  for (let index = 0; index < text.length; index++) {
    const code = text.charCodeAt(index);
    if (code === QUOTE) {
      index = endOfString(text, index);
    } else if (code === OPEN_BRACE || code === OPEN_BRACKET) {
      depth += 1;
    } else if (code === CLOSE_BRACE || code === CLOSE_BRACKET) {
      depth -= 1;
    } else if (code === COLON && depth === 1) {
      members += 1;
    }
  }
  return members;
}

/** The first key that the outermost object of `text` names twice, decoded; null when none repeats. */
function repeatedTopLevelKey(text: string): string | null {
  const keys = new Set<string>();
  let depth = 0;
  for (let index = 0; index < text.length; index++) {
    const code = text.charCodeAt(index);
    if (code === QUOTE) {
      const end = endOfString(text, index);
      let next = end + 1;
      while (next < text.length && /\s/.test(text.charAt(next))) next += 1;
      if (depth === 1 && text.charCodeAt(next) === COLON) {
        const key = JSON.parse(text.slice(index, end + 1)) as string;
        if (keys.has(key)) return key;
        keys.add(key);
      }
      index = end;
    } else if (code === OPEN_BRACE || code === OPEN_BRACKET) {
      depth += 1;
    } else if (code === CLOSE_BRACE || code === CLOSE_BRACKET) {
      depth -= 1;
    }
  }
  return null;
}

/** Index of the quote that closes the JSON string opening at `start`. */
function endOfString(text: string, start: number): number {
  for (let index = start + 1; index < text.length; index++) {
    const code = text.charCodeAt(index);
    if (code === BACKSLASH) index += 1;
    else if (code === QUOTE) return index;
  }
  return text.length;
}
