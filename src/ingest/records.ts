/** What every upload format parses into, and the limits and failure they share. */

export interface ParsedRecord {
  /** 1-based position among the data rows (the CSV header is not a row). */
  row: number;
  /** 1-based line of the upload on which the record starts. */
  line: number;
  /** Field values keyed by normalized column name; values are raw (strings from CSV, JSON scalars otherwise). */
  fields: Map<string, unknown>;
  /** On the first record of a CSV upload: every column its header names, in order. */
  columns?: readonly string[];
  /** The line of the upload on which those columns are named. */
  columnsLine?: number;
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
