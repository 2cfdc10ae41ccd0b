/**
 * Turns an upload body into a stream of records, one at a time, so that a 200 MB upload is
 * never held whole in memory. Three formats: CSV with a header row, a JSON array of objects,
 * and NDJSON (one object per line). Each record carries its 1-based row number and the line
 * of the upload on which it starts, so every later error can point at it.
 */
import { Readable } from 'node:stream';
import { CsvError, parse as parseCsv } from 'csv-parse';
import { normalizeColumnName } from './columns.js';
import { showValue } from './fields.js';

export type UploadFormat = 'csv' | 'json' | 'ndjson';

export interface ParsedRecord {
  /** 1-based position among the data rows (the CSV header is not a row). */
  row: number;
  /** 1-based line of the upload on which the record starts. */
  line: number;
  /** Field values keyed by normalized column name; values are raw (strings from CSV, JSON scalars otherwise). */
  fields: Map<string, unknown>;
  /** A problem that makes the whole record unusable (ragged row, not an object…), if any. */
  defect?: { column: string | null; value: string | null; reason: string };
}

/** The body cannot be read as the declared format at all; no row-level recovery is possible. */
export class MalformedBodyError extends Error {
  override name = 'MalformedBodyError';
  constructor(
    message: string,
    readonly line: number | null,
  ) {
    super(message);
  }
}

export interface ParseLimits {
  /** Longest CSV field, JSON row or NDJSON line accepted, in characters. */
  maxRecordChars: number;
  /** Most columns a header may name. */
  maxColumns: number;
}

export const DEFAULT_PARSE_LIMITS: ParseLimits = { maxRecordChars: 1_000_000, maxColumns: 200 };

export function formatFromContentType(contentType: string | undefined): UploadFormat | null {
  const mediaType = contentType?.split(';')[0]?.trim().toLowerCase();
  switch (mediaType) {
    case 'text/csv':
      return 'csv';
    case 'application/json':
      return 'json';
    case 'application/x-ndjson':
    case 'application/ndjson':
    case 'application/jsonl':
      return 'ndjson';
    default:
      return null;
  }
}

export function parseRecords(body: Readable, format: UploadFormat, limits: ParseLimits = DEFAULT_PARSE_LIMITS): AsyncGenerator<ParsedRecord> {
  switch (format) {
    case 'csv':
      return parseCsvRecords(body, limits);
    case 'json':
      return parseJsonArrayRecords(body, limits);
    case 'ndjson':
      return parseNdjsonRecords(body, limits);
  }
}

async function* parseCsvRecords(body: Readable, limits: ParseLimits): AsyncGenerator<ParsedRecord> {
  const text = Readable.from(decodeUtf8(body, 'CSV'));
  const parser = text.pipe(
    parseCsv({
      bom: true,
      skip_empty_lines: true,
      relax_column_count: true,
      raw: true,
      max_record_size: limits.maxRecordChars,
    }),
  );
  // A failure of the source stream does not travel through pipe(); hand it to the parser.
  text.once('error', (error) => parser.destroy(error));
  let header: string[] | null = null;
  let row = 0;
  // Lines are counted here from each record's raw text: csv-parse's own counter counts a CRLF
  // inside a quoted field as two lines, and a record's raw text begins with the empty lines
  // skipped before it. Raw text keeps a lone \r for a CRLF record end, so \r\n, \r and \n each
  // count as one line break.
  let nextLine = 1;
  try {
    for await (const item of parser as AsyncIterable<{ record: string[]; raw: string }>) {
      const skippedEmptyLines = countLineBreaks(LEADING_LINE_BREAKS.exec(item.raw)?.[0] ?? '');
      const line = nextLine + skippedEmptyLines;
      nextLine += countLineBreaks(item.raw);
      if (header === null) {
        header = readHeader(item.record, line, limits);
        continue;
      }
      row += 1;
      const fields = new Map<string, unknown>();
      header.forEach((name, index) => {
        const value = item.record[index];
        if (value !== undefined) fields.set(name, value);
      });
      const record: ParsedRecord = { row, line, fields };
      if (item.record.length !== header.length) {
        record.defect = {
          column: null,
          value: null,
          reason: `row has ${item.record.length} fields but the header names ${header.length} columns`,
        };
      }
      yield record;
    }
  } catch (error) {
    throw toMalformed(error, 'CSV');
  }
  if (header === null) throw new MalformedBodyError('the upload is empty: a CSV upload needs a header row', 1);
}

function readHeader(names: string[], line: number, limits: ParseLimits): string[] {
  if (names.length > limits.maxColumns) {
    throw new MalformedBodyError(`the header names ${names.length} columns; at most ${limits.maxColumns} are accepted`, line);
  }
  const normalized = names.map(normalizeColumnName);
  const seen = new Set<string>();
  normalized.forEach((name, index) => {
    if (name === '') throw new MalformedBodyError(`header column ${index + 1} has no name`, line);
    if (seen.has(name)) throw new MalformedBodyError(`the header names column "${name}" twice`, line);
    seen.add(name);
  });
  return normalized;
}

async function* parseNdjsonRecords(body: Readable, limits: ParseLimits): AsyncGenerator<ParsedRecord> {
  let row = 0;
  for await (const { text, line } of splitLines(body, limits)) {
    if (text.trim() === '') continue;
    row += 1;
    yield objectRecord(parseJsonText(text, line), text, row, line);
  }
}

async function* parseJsonArrayRecords(body: Readable, limits: ParseLimits): AsyncGenerator<ParsedRecord> {
  let row = 0;
  for await (const { text, line } of splitJsonArray(body, limits)) {
    row += 1;
    yield objectRecord(parseJsonText(text, line), text, row, line);
  }
}

function parseJsonText(text: string, line: number): unknown {
  try {
    // JSON.parse keeps "__proto__" and "constructor" as plain own keys; they are later
    // treated as ordinary (unknown) column names and never touch any prototype.
    return JSON.parse(text);
  } catch (error) {
    throw new MalformedBodyError(`invalid JSON: ${error instanceof Error ? error.message : String(error)}`, line);
  }
}

function objectRecord(value: unknown, text: string, row: number, line: number): ParsedRecord {
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

async function* splitLines(body: Readable, limits: ParseLimits): AsyncGenerator<{ text: string; line: number }> {
  const decoder = new TextDecoder('utf-8', { fatal: true, ignoreBOM: false });
  let pending = '';
  let line = 1;
  try {
    for await (const chunk of body as AsyncIterable<Buffer>) {
      pending += decoder.decode(chunk, { stream: true });
      let newline = pending.indexOf('\n');
      while (newline !== -1) {
        // Checked on whole lines too, not only on the unfinished rest, so the limit does not
        // depend on how the body happens to be split into chunks.
        if (newline > limits.maxRecordChars) throw new MalformedBodyError(`line is longer than ${limits.maxRecordChars} characters`, line);
        yield { text: pending.slice(0, newline).replace(/\r$/, ''), line };
        line += 1;
        pending = pending.slice(newline + 1);
        newline = pending.indexOf('\n');
      }
      if (pending.length > limits.maxRecordChars) {
        throw new MalformedBodyError(`line is longer than ${limits.maxRecordChars} characters`, line);
      }
    }
    pending += decoder.decode();
  } catch (error) {
    throw toMalformed(error, 'NDJSON', line);
  }
  if (pending !== '') yield { text: pending.replace(/\r$/, ''), line };
}

/**
 * Splits a top-level JSON array into the text of its elements by tracking string and nesting
 * state, so each element can be handed to JSON.parse on its own. Rows must be flat objects;
 * nesting deeper than that is refused as soon as it is seen rather than after buffering it.
 */
async function* splitJsonArray(body: Readable, limits: ParseLimits): AsyncGenerator<{ text: string; line: number }> {
  const maxDepth = 3; // array → row object → one level inside a value, which row validation then rejects
  const decoder = new TextDecoder('utf-8', { fatal: true, ignoreBOM: false });
  let depth = 0;
  let inString = false;
  let escaped = false;
  let sawArray = false;
  let finished = false;
  // Between rows the array allows exactly one comma: none before the first row or before ].
  let expecting: 'first row or ]' | 'row' | 'comma or ]' = 'first row or ]';
  let element = '';
  let elementStart = -1;
  let elementLine = 1;
  let line = 1;
  const fail = (message: string): never => {
    throw new MalformedBodyError(message, line);
  };
  try {
    for await (const chunk of body as AsyncIterable<Buffer>) {
      const text = decoder.decode(chunk, { stream: true });
      for (let index = 0; index < text.length; index++) {
        const char = text[index] as string;
        if (char === '\n') line += 1;
        if (inString) {
          if (escaped) escaped = false;
          else if (char === '\\') escaped = true;
          else if (char === '"') inString = false;
          continue;
        }
        if (char === ' ' || char === '\t' || char === '\n' || char === '\r') continue;
        if (finished) fail('unexpected content after the closing ] of the array');
        if (!sawArray) {
          if (char !== '[') fail('a JSON upload must be an array of row objects, starting with [');
          sawArray = true;
          depth = 1;
          continue;
        }
        if (depth === 1) {
          if (char === ',') {
            if (expecting !== 'comma or ]') fail('unexpected comma in the array');
            expecting = 'row';
            continue;
          }
          if (char === ']') {
            if (expecting === 'row') fail('unexpected comma before the closing ] of the array');
            depth = 0;
            finished = true;
            continue;
          }
          if (char !== '{') fail('each element of the array must be a row object in braces');
          if (expecting === 'comma or ]') fail('rows of the array must be separated by commas');
          elementStart = index;
          elementLine = line;
          element = '';
        }
        if (char === '"') inString = true;
        else if (char === '{' || char === '[') {
          depth += 1;
          if (depth > maxDepth) fail('rows must be flat objects; nesting this deep is not accepted');
        } else if (char === '}' || char === ']') {
          depth -= 1;
        }
        if (depth === 1 && elementStart !== -1) {
          const completed = element + text.slice(elementStart, index + 1);
          // A row that arrived within one chunk is held to the same limit as one spread over many.
          if (completed.length > limits.maxRecordChars) fail(`a row is longer than ${limits.maxRecordChars} characters`);
          element = '';
          elementStart = -1;
          expecting = 'comma or ]';
          yield { text: completed, line: elementLine };
        }
      }
      if (elementStart !== -1) {
        element += text.slice(elementStart);
        elementStart = 0;
        if (element.length > limits.maxRecordChars) fail(`a row is longer than ${limits.maxRecordChars} characters`);
      }
    }
    decoder.decode();
  } catch (error) {
    throw toMalformed(error, 'JSON', line);
  }
  if (!sawArray) throw new MalformedBodyError('the upload is empty: expected a JSON array of row objects', 1);
  if (!finished) throw new MalformedBodyError('the JSON array is not closed (missing ])', line);
}

/** Decodes strictly: text that is not UTF-8 (UTF-16, binary) is refused rather than turned into replacement characters. */
async function* decodeUtf8(body: Readable, format: string): AsyncGenerator<string> {
  const decoder = new TextDecoder('utf-8', { fatal: true, ignoreBOM: false });
  try {
    for await (const chunk of body as AsyncIterable<Buffer>) {
      const text = decoder.decode(chunk, { stream: true });
      if (text.includes('\u0000')) throw new MalformedBodyError(`the ${format} body contains NUL bytes; is it binary or UTF-16?`, null);
      if (text !== '') yield text;
    }
    const rest = decoder.decode();
    if (rest !== '') yield rest;
  } catch (error) {
    throw toMalformed(error, format);
  }
}

const LEADING_LINE_BREAKS = /^(?:\r\n|\r|\n)+/;

function countLineBreaks(text: string): number {
  return text.match(/\r\n|\r|\n/g)?.length ?? 0;
}

function toMalformed(error: unknown, format: string, line: number | null = null): Error {
  if (error instanceof MalformedBodyError) return error;
  if (error instanceof TypeError && /decode|encoded/i.test(error.message)) {
    return new MalformedBodyError(`the ${format} body is not valid UTF-8 text`, line);
  }
  // Not every csv-parse error code starts with CSV_ (INVALID_OPENING_QUOTE does not), so the class decides.
  if (error instanceof CsvError) {
    const csvLine = 'lines' in error && typeof error.lines === 'number' ? error.lines : line;
    return new MalformedBodyError(`invalid CSV: ${error.message}`, csvLine);
  }
  return error instanceof Error ? error : new Error(String(error));
}
