/**
 * Turns an upload body into a stream of records, one at a time, so that a 200 MB upload is
 * never held whole in memory. Three formats: CSV with a header row, a JSON array of objects,
 * and NDJSON (one object per line). Each record carries its 1-based row number and the line
 * of the upload on which it starts, so every later error can point at it.
 */
import type { Readable } from 'node:stream';
import { parseCsvRecords, type CsvDelimiter } from './csv.js';
import { parseJsonArrayRecords } from './json-array.js';
import type { UploadFormat } from './media-type.js';
import { parseNdjsonRecords } from './ndjson.js';
import { DEFAULT_PARSE_LIMITS, type ParsedRecord, type ParseLimits } from './records.js';

export type { UploadFormat } from './media-type.js';
export { CSV_DELIMITERS, type CsvDelimiter } from './csv.js';
export { DEFAULT_PARSE_LIMITS, MalformedBodyError, type ParsedRecord, type ParseLimits } from './records.js';

export function parseRecords(body: Readable, format: UploadFormat, limits: ParseLimits = DEFAULT_PARSE_LIMITS, delimiter: CsvDelimiter = 'comma'): AsyncGenerator<ParsedRecord> {
  switch (format) {
    case 'csv':
      return parseCsvRecords(body, limits, delimiter);
    case 'json':
      return parseJsonArrayRecords(body, limits);
    case 'ndjson':
      return parseNdjsonRecords(body, limits);
  }
}
