/** CSV with a header row → records, each with its row number and the line on which it starts. */
import { finished, Readable } from 'node:stream';
import { CsvError, parse as parseCsv } from 'csv-parse';
import { normalizeColumnName } from './columns.js';
import { CsvRecordLines } from './csv-record-lines.js';
import { InvalidColumnsError } from './header-check.js';
import { MalformedBodyError, type ParsedRecord, type ParseLimits } from './records.js';
import { decodeUtf8, toMalformed } from './text-decoding.js';

/** The field separators a CSV upload may use (`?delimiter=`), by the name the query gives them. */
export const CSV_DELIMITERS = { comma: ',', semicolon: ';', tab: '\t' } as const;
export type CsvDelimiter = keyof typeof CSV_DELIMITERS;

export async function* parseCsvRecords(body: Readable, limits: ParseLimits, delimiter: CsvDelimiter = 'comma'): AsyncGenerator<ParsedRecord> {
  const recordLines = new CsvRecordLines();
  const text = Readable.from(decodeUtf8(body, 'CSV', recordLines));
  const parser = text.pipe(
    parseCsv({
      bom: true,
      delimiter: CSV_DELIMITERS[delimiter],
      skip_empty_lines: true,
      relax_column_count: true,
      max_record_size: limits.maxRecordChars,
    }),
  );
  // A failure of the source stream does not travel through pipe(); hand it to the parser.
  text.once('error', (error) => parser.destroy(error));
  const records = new ReadyItems<string[]>(parser);
  let header: string[] | null = null;
  let headerLine = 1;
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
        header = readHeader(values, line, limits, delimiter);
        headerLine = line;
        continue;
      }
      row += 1;
      const fields = new Map<string, unknown>();
      const filled = Math.min(values.length, header.length);
      for (let index = 0; index < filled; index++) fields.set(header[index] as string, values[index]);
      const columns = row === 1 ? { columns: header, columnsLine: headerLine } : {};
      if (values.length === header.length) {
        yield { row, line, fields, ...columns };
      } else {
        const reason = `row has ${values.length} fields but the header names ${header.length} columns`;
        yield { row, line, fields, ...columns, defect: { column: null, value: null, reason } };
      }
    }
  } catch (error) {
    if (error instanceof InvalidColumnsError) throw error;
    throw toMalformedCsv(error);
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

function readHeader(names: string[], line: number, limits: ParseLimits, delimiter: CsvDelimiter): string[] {
  refuseOtherSeparator(names, line, delimiter);
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

/**
 * A header read as one column that a semicolon or tab would split into several is a file saved
 * with another separator (spreadsheets in many locales write `;`); read as commas, every row
 * would fail on every column, so the upload is refused once with the way to send it.
 */
function refuseOtherSeparator(names: string[], line: number, delimiter: CsvDelimiter): void {
  const [only] = names;
  if (names.length !== 1 || only === undefined) return;
  for (const [name, separator] of Object.entries(CSV_DELIMITERS) as Array<[CsvDelimiter, string]>) {
    if (name === delimiter || !only.includes(separator)) continue;
    const shown = name === 'tab' ? 'tab' : `"${separator}"`;
    throw new InvalidColumnsError(
      [
        {
          column: only.slice(0, 200),
          suggestion: null,
          reason: `the header is one column that ${shown} would split into ${only.split(separator).length}: the file looks ${name}-separated; send it with ?delimiter=${name}, or save it as comma-separated CSV`,
        },
      ],
      line,
    );
  }
}

function toMalformedCsv(error: unknown): Error {
  // Not every csv-parse error code starts with CSV_ (INVALID_OPENING_QUOTE does not), so the class decides.
  if (error instanceof CsvError) {
    const csvLine = 'lines' in error && typeof error.lines === 'number' ? error.lines : null;
    return new MalformedBodyError(`invalid CSV: ${error.message}`, csvLine);
  }
  return toMalformed(error, 'CSV');
}
