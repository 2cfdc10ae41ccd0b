/** CSV with a header row → records, each with its row number and the line on which it starts. */
import { finished, Readable } from 'node:stream';
import { CsvError, parse as parseCsv } from 'csv-parse';
import { normalizeColumnName } from './columns.js';
import { CsvRecordLines } from './csv-record-lines.js';
import { MalformedBodyError, type ParsedRecord, type ParseLimits } from './records.js';
import { decodeUtf8, toMalformed } from './text-decoding.js';

export async function* parseCsvRecords(body: Readable, limits: ParseLimits): AsyncGenerator<ParsedRecord> {
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

function toMalformedCsv(error: unknown): Error {
  // Not every csv-parse error code starts with CSV_ (INVALID_OPENING_QUOTE does not), so the class decides.
  if (error instanceof CsvError) {
    const csvLine = 'lines' in error && typeof error.lines === 'number' ? error.lines : null;
    return new MalformedBodyError(`invalid CSV: ${error.message}`, csvLine);
  }
  return toMalformed(error, 'CSV');
}
