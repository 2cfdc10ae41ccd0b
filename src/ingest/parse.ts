/**
 * Turns an upload body into a stream of records, one at a time, so that a 200 MB upload is
 * never held whole in memory. Three formats: CSV with a header row, a JSON array of objects,
 * and NDJSON (one object per line). Each record carries its 1-based row number and the line
 * of the upload on which it starts, so every later error can point at it.
 */
import { finished, Readable } from 'node:stream';
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
  const recordLines = new CsvRecordLines();
  const text = Readable.from(decodeUtf8(body, 'CSV', recordLines));
  const parser = text.pipe(
    parseCsv({
      bom: true,
      skip_empty_lines: true,
      relax_column_count: true,
      max_record_size: limits.maxRecordChars,
    }),
  );
  // A failure of the source stream does not travel through pipe(); hand it to the parser.
  text.once('error', (error) => parser.destroy(error));
  const records = new ReadyItems<string[]>(parser);
  let header: string[] | null = null;
  let row = 0;
  try {
    for (;;) {
      const values = records.read();
      if (values === null) {
        if (await records.more()) continue;
        break;
      }
      const line = recordLines.next();
      if (header === null) {
        header = readHeader(values, line, limits);
        continue;
      }
      row += 1;
      const fields = new Map<string, unknown>();
      const filled = Math.min(values.length, header.length);
      for (let index = 0; index < filled; index++) fields.set(header[index] as string, values[index]);
      if (values.length === header.length) {
        yield { row, line, fields };
      } else {
        const reason = `row has ${values.length} fields but the header names ${header.length} columns`;
        yield { row, line, fields, defect: { column: null, value: null, reason } };
      }
    }
  } catch (error) {
    throw toMalformed(error, 'CSV');
  } finally {
    parser.destroy();
  }
  if (header === null) throw new MalformedBodyError('the upload is empty: a CSV upload needs a header row', 1);
}

/**
 * Reads what an object stream has ready without a promise per item: `for await` settles one
 * for every CSV record, which cost as much as a sixth of parsing a contacts upload. Like
 * `for await`, a failed or destroyed stream hands over nothing more, and its failure is
 * thrown once what it had ready is exhausted.
 */
class ReadyItems<Item> {
  /** undefined while the stream may still give items, null once it has ended, else its failure. */
  private outcome: Error | null | undefined = undefined;
  private wake: () => void = () => {};

  constructor(private readonly stream: Readable) {
    stream.on('readable', () => this.wake());
    finished(stream, { writable: false }, (error) => {
      this.outcome = error ?? null;
      this.wake();
    });
  }

  /** The next item, or null when none is ready yet. */
  read(): Item | null {
    return this.stream.destroyed ? null : (this.stream.read() as Item | null);
  }

  /** Waits until more may be ready; false once the stream has ended. */
  async more(): Promise<boolean> {
    if (this.outcome === null) return false;
    if (this.outcome !== undefined) throw this.outcome;
    await new Promise<void>((resolve) => {
      this.wake = resolve;
    });
    return true;
  }
}

const CARRIAGE_RETURN = 0x0d;
const LINE_FEED = 0x0a;
const BYTE_ORDER_MARK = 0xfeff;
const QUOTE_OR_LINE_BREAK = /["\r\n]/g;

/**
 * The line on which each CSV record starts, found by reading the same text csv-parse reads
 * and following its record boundaries: csv-parse's own line counter counts a CRLF inside a
 * quoted field as two lines, and asking it for each record's raw text costs a copy of every
 * byte. Like csv-parse, the record delimiter is the first line break outside quotes (\r\n,
 * \n or \r), and a line holding nothing is skipped. Lines are counted the way a reader would:
 * \r\n, \r and \n are one line break each, except that a \r delimiter followed by \n counts
 * both, as the \n then belongs to the next record. A record's line is that of its first
 * character other than a line break. Quotes are followed only as far as input that csv-parse
 * accepts: text it refuses fails the upload, and the lines of its records are never asked for.
 */
class CsvRecordLines {
  /** Lines of the records read but not yet handed over by csv-parse: slots nextStart to startCount. */
  private readonly starts: number[] = [];
  private nextStart = 0;
  private startCount = 0;
  private line = 1;
  private recordDelimiter: '' | '\r\n' | '\n' | '\r' = '';
  private quoting = false;
  /** Whether the record being read holds anything (a character, a comma or quotes), so it is not an empty line. */
  private recordHasContent = false;
  /** Whether everything read since the previous record's delimiter is line breaks. */
  private onlyLineBreaks = true;
  private recordLine = 1;
  private afterCarriageReturn = false;
  private startOfText = true;
  /** A \r ending a chunk outside quotes, whose meaning waits on the character after it. */
  private heldCarriageReturn = false;

  read(chunk: string): void {
    let text = chunk;
    if (this.heldCarriageReturn) {
      text = `\r${text}`;
      this.heldCarriageReturn = false;
    }
    let index = 0;
    if (this.startOfText) {
      this.startOfText = false;
      // csv-parse drops a byte order mark at the start of what it reads.
      if (text.charCodeAt(0) === BYTE_ORDER_MARK) index = 1;
    }
    const end = text.length;
    for (; index < end; index++) {
      const code = text.charCodeAt(index);
      if (code === CARRIAGE_RETURN) {
        if (!this.quoting && index === end - 1) {
          this.heldCarriageReturn = true;
          return;
        }
        index += this.lineBreak(code, text.charCodeAt(index + 1));
      } else if (code === LINE_FEED) {
        index += this.lineBreak(code, Number.NaN);
      } else {
        if (code === QUOTE) this.quoting = !this.quoting;
        if (this.onlyLineBreaks) {
          this.onlyLineBreaks = false;
          this.recordLine = this.line;
        }
        this.recordHasContent = true;
        this.afterCarriageReturn = false;
        // The characters up to the next quote or line break change nothing more.
        QUOTE_OR_LINE_BREAK.lastIndex = index + 1;
        index = QUOTE_OR_LINE_BREAK.test(text) ? QUOTE_OR_LINE_BREAK.lastIndex - 2 : end - 1;
      }
    }
  }

  /** Called once the text has ended, before csv-parse hands over its last record. */
  finish(): void {
    if (this.heldCarriageReturn) {
      this.heldCarriageReturn = false;
      this.lineBreak(CARRIAGE_RETURN, Number.NaN);
    }
    if (this.recordHasContent && !this.quoting) this.endRecord();
  }

  /** Line of the next record csv-parse hands over. */
  next(): number {
    const line = this.starts[this.nextStart] as number;
    this.nextStart += 1;
    if (this.nextStart === this.startCount) {
      // Emptied: later lines overwrite the slots in place, so the array is not grown anew.
      this.nextStart = 0;
      this.startCount = 0;
    }
    return line;
  }

  /** Reads a \r or \n; returns how many characters after it the record delimiter also took. */
  private lineBreak(code: number, nextCode: number): number {
    if (code === CARRIAGE_RETURN || !this.afterCarriageReturn) this.line += 1;
    this.afterCarriageReturn = code === CARRIAGE_RETURN;
    if (this.quoting) return 0;
    if (this.recordDelimiter === '') {
      this.recordDelimiter = code === LINE_FEED ? '\n' : nextCode === LINE_FEED ? '\r\n' : '\r';
    }
    let taken: number;
    if (this.recordDelimiter === '\r\n') {
      taken = code === CARRIAGE_RETURN && nextCode === LINE_FEED ? 1 : -1;
    } else {
      taken = (code === CARRIAGE_RETURN) === (this.recordDelimiter === '\r') ? 0 : -1;
    }
    if (taken === -1) {
      // A line break that is not the record delimiter is part of a field.
      this.recordHasContent = true;
      return 0;
    }
    if (this.recordHasContent) this.endRecord();
    return taken;
  }

  private endRecord(): void {
    this.starts[this.startCount] = this.onlyLineBreaks ? this.line : this.recordLine;
    this.startCount += 1;
    this.recordHasContent = false;
    this.onlyLineBreaks = true;
    this.afterCarriageReturn = false;
  }
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
async function* decodeUtf8(body: Readable, format: string, recordLines: CsvRecordLines): AsyncGenerator<string> {
  const decoder = new TextDecoder('utf-8', { fatal: true, ignoreBOM: false });
  try {
    for await (const chunk of body as AsyncIterable<Buffer>) {
      const text = decoder.decode(chunk, { stream: true });
      if (text.includes('\u0000')) throw new MalformedBodyError(`the ${format} body contains NUL bytes; is it binary or UTF-16?`, null);
      if (text !== '') {
        recordLines.read(text);
        yield text;
      }
    }
    const rest = decoder.decode();
    if (rest !== '') {
      recordLines.read(rest);
      yield rest;
    }
    recordLines.finish();
  } catch (error) {
    throw toMalformed(error, format);
  }
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
