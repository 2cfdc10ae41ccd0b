/** Upload parsing: records, their row numbers and the line of the upload each starts on. */
import { Readable } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { normalizeColumnName } from '../../src/ingest/columns.js';
import { MalformedBodyError, parseRecords, type UploadFormat } from '../../src/ingest/parse.js';

interface Parsed {
  row: number;
  line: number;
  fields: Record<string, unknown>;
  defect?: { column: string | null; value: string | null; reason: string };
}

/** Parses `body` whole, or split into chunks of `chunkBytes` bytes to cross every boundary. */
async function parse(body: string | Buffer, format: UploadFormat, chunkBytes?: number): Promise<Parsed[]> {
  const bytes = typeof body === 'string' ? Buffer.from(body, 'utf8') : body;
  const chunks: Buffer[] = [];
  const size = chunkBytes ?? Math.max(1, bytes.length);
  for (let start = 0; start < bytes.length; start += size) chunks.push(bytes.subarray(start, start + size));
  const records: Parsed[] = [];
  for await (const record of parseRecords(Readable.from(chunks), format)) {
    records.push({ row: record.row, line: record.line, fields: Object.fromEntries(record.fields), ...(record.defect ? { defect: record.defect } : {}) });
  }
  return records;
}

async function parseError(body: string, format: UploadFormat): Promise<MalformedBodyError> {
  try {
    await parse(body, format);
  } catch (error) {
    if (error instanceof MalformedBodyError) return error;
    throw error;
  }
  throw new Error('expected the body to be refused');
}

const linesOf = (records: Parsed[]) => records.map((record) => [record.row, record.line]);

describe('normalizeColumnName', () => {
  it('matches header names case- and space-insensitively', () => {
    expect(['Customer ID', 'customer_id', ' CUSTOMER-id ', 'customer.id', 'Customer  Id'].map(normalizeColumnName)).toEqual(Array(5).fill('customer_id'));
  });

  it('strips a byte order mark', () => {
    expect(normalizeColumnName('\uFEFFcustomer_id')).toBe('customer_id');
  });

  it('turns __proto__ into an ordinary name', () => {
    expect(normalizeColumnName('__proto__')).toBe('proto');
  });
});

describe('CSV parsing', () => {
  it('numbers rows from 1 after the header and lines from 1 including the header', async () => {
    const records = await parse('a,b\n1,2\n3,4\n', 'csv');
    expect(records).toEqual([
      { row: 1, line: 2, fields: { a: '1', b: '2' } },
      { row: 2, line: 3, fields: { a: '3', b: '4' } },
    ]);
  });

  it('reads a last row without a line break', async () => {
    expect(linesOf(await parse('a,b\n1,2\n3,4', 'csv'))).toEqual([
      [1, 2],
      [2, 3],
    ]);
  });

  it('drops a UTF-8 byte order mark before the header', async () => {
    const records = await parse('\uFEFFcustomer_id,region\nC1,North\n', 'csv');
    expect(records[0]?.fields).toEqual({ customer_id: 'C1', region: 'North' });
  });

  it('reads CRLF line ends', async () => {
    const records = await parse('a,b\r\n1,2\r\n3,4\r\n', 'csv');
    expect(records.map((record) => [record.line, record.fields])).toEqual([
      [2, { a: '1', b: '2' }],
      [3, { a: '3', b: '4' }],
    ]);
  });

  it('reads lone CR line ends', async () => {
    expect(linesOf(await parse('a,b\r1,2\r3,4', 'csv'))).toEqual([
      [1, 2],
      [2, 3],
    ]);
  });

  it('keeps a comma inside a quoted field', async () => {
    const records = await parse('a,b\n"North, coast",2\n', 'csv');
    expect(records[0]?.fields).toEqual({ a: 'North, coast', b: '2' });
  });

  it('keeps a line break inside a quoted field and counts it for the lines of later rows', async () => {
    const records = await parse('a,b\n"two\nlines",2\n3,4\n', 'csv');
    expect(records.map((record) => [record.line, record.fields['a']])).toEqual([
      [2, 'two\nlines'],
      [4, '3'],
    ]);
  });

  it('counts a CRLF inside a quoted field as one line', async () => {
    const records = await parse('a,b\r\n"two\r\nlines",2\r\n3,4\r\n', 'csv');
    expect(records.map((record) => [record.line, record.fields['a']])).toEqual([
      [2, 'two\r\nlines'],
      [4, '3'],
    ]);
  });

  it('skips empty lines but still counts them for the lines of later rows', async () => {
    expect(linesOf(await parse('a,b\n\n1,2\n\n\n3,4\n\n', 'csv'))).toEqual([
      [1, 3],
      [2, 6],
    ]);
  });

  it('skips empty CRLF lines but still counts them', async () => {
    expect(linesOf(await parse('a,b\r\n\r\n1,2\r\n\r\n3,4\r\n\r\n', 'csv'))).toEqual([
      [1, 3],
      [2, 5],
    ]);
  });

  it('ignores an empty trailing line', async () => {
    expect(await parse('a,b\n1,2\n\n', 'csv')).toHaveLength(1);
  });

  it('gives the same lines when the body arrives one byte at a time', async () => {
    const body = '\uFEFFa,b\r\n"é, \r\n""q""",2\r\n\r\n3,4\r\n"x\r\ny",5';
    const whole = await parse(body, 'csv');
    expect(await parse(body, 'csv', 1)).toEqual(whole);
    expect(linesOf(whole)).toEqual([
      [1, 2],
      [2, 5],
      [3, 6],
    ]);
    expect(whole[0]?.fields['a']).toBe('é, \r\n"q"');
  });

  it('counts a \n after a lone-CR record end as a line of the next record, which it begins', async () => {
    const body = 'a,b\r1,2\r\n3,4\r5,6';
    const records = await parse(body, 'csv');
    expect(await parse(body, 'csv', 1)).toEqual(records);
    expect(records.map((record) => [record.line, record.fields['a']])).toEqual([
      [2, '1'],
      [4, '\n3'],
      [5, '5'],
    ]);
  });

  it('counts a line break inside an unquoted field that is not the record delimiter', async () => {
    for (const [body, expected] of [
      ['a,b\r\n1\n2,3\r\n4,5\r\n', [[2, '1\n2'], [4, '4']]],
      ['a,b\n1\r,2\n3,4\n', [[2, '1\r'], [4, '3']]],
    ] as const) {
      const records = await parse(body, 'csv');
      expect(await parse(body, 'csv', 1)).toEqual(records);
      expect(records.map((record) => [record.line, record.fields['a']])).toEqual(expected);
    }
  });

  it('follows escaped quotes when telling a quoted line break from a record end', async () => {
    const body = 'a,b\n"x""\n""y",1\n\n2,3\n';
    const records = await parse(body, 'csv');
    expect(await parse(body, 'csv', 1)).toEqual(records);
    expect(records.map((record) => [record.line, record.fields['a']])).toEqual([
      [2, 'x"\n"y'],
      [5, '2'],
    ]);
  });

  it('normalizes header names', async () => {
    const records = await parse('Customer ID, Birth Date ,REGION\nC1,1990-01-01,North\n', 'csv');
    expect(Object.keys(records[0]?.fields ?? {})).toEqual(['customer_id', 'birth_date', 'region']);
  });

  it('marks a row with fewer fields than the header as defective', async () => {
    const records = await parse('a,b,c\n1,2\n', 'csv');
    expect(records[0]?.defect).toEqual({ column: null, value: null, reason: 'row has 2 fields but the header names 3 columns' });
  });

  it('marks a row with more fields than the header as defective', async () => {
    const records = await parse('a,b\n1,2,3\n', 'csv');
    expect(records[0]?.defect?.reason).toBe('row has 3 fields but the header names 2 columns');
  });

  it('refuses a header that names one column twice', async () => {
    const error = await parseError('Region,region\nN,N\n', 'csv');
    expect([error.message, error.line]).toEqual(['the header names column "region" twice', 1]);
  });

  it('refuses a header column without a name', async () => {
    const error = await parseError('a,,c\n1,2,3\n', 'csv');
    expect(error.message).toBe('header column 2 has no name');
  });

  it('refuses an empty body', async () => {
    const error = await parseError('', 'csv');
    expect(error.message).toBe('the upload is empty: a CSV upload needs a header row');
  });

  it('refuses an unclosed quote', async () => {
    const error = await parseError('a,b\n"open,2\n', 'csv');
    expect(error.message).toMatch(/^invalid CSV: /);
  });

  it('refuses a quote opened inside an unquoted field as malformed CSV (csv-parse code without the CSV_ prefix)', async () => {
    const error = await parseError('a,b\n1,x"y"\n', 'csv');
    expect(error.message).toMatch(/^invalid CSV: Invalid Opening Quote/);
    expect(error.line).toBe(2);
  });

  it('refuses bytes that are not UTF-8', async () => {
    await expect(parse(Buffer.from([0x61, 0x2c, 0x62, 0x0a, 0xff, 0xfe, 0x2c, 0x31, 0x0a]), 'csv')).rejects.toThrow('the CSV body is not valid UTF-8 text at byte offset 4 (byte 0xFF)');
  });

  it('refuses UTF-16 text', async () => {
    await expect(parse(Buffer.from('a,b\n1,2\n', 'utf16le'), 'csv')).rejects.toThrow('the CSV body contains NUL bytes; is it binary or UTF-16?');
  });
});

describe('NDJSON parsing', () => {
  it('reads one object per line with its line number', async () => {
    const records = await parse('{"a":1}\n{"a":2}\n', 'ndjson');
    expect(records).toEqual([
      { row: 1, line: 1, fields: { a: 1 } },
      { row: 2, line: 2, fields: { a: 2 } },
    ]);
  });

  it('skips blank lines but counts them', async () => {
    expect(linesOf(await parse('\n{"a":1}\n  \n{"a":2}', 'ndjson'))).toEqual([
      [1, 2],
      [2, 4],
    ]);
  });

  it('reads CRLF line ends', async () => {
    const records = await parse('{"a":"x"}\r\n{"a":"y"}\r\n', 'ndjson');
    expect(records.map((record) => [record.line, record.fields['a']])).toEqual([
      [1, 'x'],
      [2, 'y'],
    ]);
  });

  it('drops a byte order mark', async () => {
    const records = await parse('\uFEFF{"a":1}\n', 'ndjson');
    expect(records[0]?.fields).toEqual({ a: 1 });
  });

  it('marks a line that is not an object as a defective row', async () => {
    const records = await parse('{"a":1}\n[1,2]\n', 'ndjson');
    expect(records[1]).toEqual({ row: 2, line: 2, fields: {}, defect: { column: null, value: null, reason: 'each row must be a JSON object of column names to values' } });
  });

  it('refuses a line that is not JSON, naming the line', async () => {
    const error = await parseError('{"a":1}\n{"a":\n', 'ndjson');
    expect(error.line).toBe(2);
    expect(error.message).toMatch(/^invalid JSON: /);
  });

  it('marks a row that names one column twice after normalization', async () => {
    const records = await parse('{"Region":"N","region":"S"}\n', 'ndjson');
    expect(records[0]?.defect?.reason).toBe('column "region" appears twice in this row');
  });

  it('gives the same records when the body arrives one byte at a time', async () => {
    const body = '{"a":"é"}\r\n\r\n{"a":"ü\\n"}\n';
    expect(await parse(body, 'ndjson', 1)).toEqual(await parse(body, 'ndjson'));
  });
});

describe('JSON array parsing', () => {
  it('reads every element of an array of several rows', async () => {
    const records = await parse('[{"a":1},{"a":2},{"a":3}]', 'json');
    expect(records.map((record) => record.fields['a'])).toEqual([1, 2, 3]);
  });

  it('gives each row the line on which its object starts', async () => {
    expect(linesOf(await parse('[\n  {"a": 1},\n  {\n    "a": 2\n  }\n]\n', 'json'))).toEqual([
      [1, 2],
      [2, 3],
    ]);
  });

  it('is not confused by brackets and braces inside strings', async () => {
    const records = await parse('[{"a":"]}[{,"},{"a":"x"}]', 'json');
    expect(records.map((record) => record.fields['a'])).toEqual([']}[{,', 'x']);
  });

  it('is not confused by escaped quotes and backslashes inside strings', async () => {
    const records = await parse(String.raw`[{"a":"say \"}]\" now"},{"a":"ends in \\"},{"a":"ok"}]`, 'json');
    expect(records.map((record) => record.fields['a'])).toEqual(['say "}]" now', 'ends in \\', 'ok']);
  });

  it('gives the same records when the body arrives one byte at a time', async () => {
    const body = String.raw`[ {"a":"é \"[\" }"} , {"a":"ü"},` + '\n' + '{"a":2}]';
    const whole = await parse(body, 'json');
    expect(await parse(body, 'json', 1)).toEqual(whole);
    expect(whole.map((record) => record.fields['a'])).toEqual(['é "[" }', 'ü', 2]);
  });

  it('reads an empty array as no rows', async () => {
    expect(await parse('[]', 'json')).toEqual([]);
  });

  it('drops a byte order mark', async () => {
    expect(await parse('\uFEFF[{"a":1}]', 'json')).toHaveLength(1);
  });

  it('keeps a __proto__ key as a plain field and touches no prototype', async () => {
    const records = await parse('[{"__proto__":{"polluted":true},"a":1}]', 'json');
    expect(records[0]?.fields).toEqual({ proto: { polluted: true }, a: 1 });
    expect(({} as Record<string, unknown>)['polluted']).toBeUndefined();
  });

  it('refuses a body that is not an array', async () => {
    const error = await parseError('{"a":1}', 'json');
    expect([error.message, error.line]).toEqual(['a JSON upload must be an array of row objects, starting with [', 1]);
  });

  it('refuses an element that is not an object, naming its line', async () => {
    const error = await parseError('[\n{"a":1},\n42\n]', 'json');
    expect([error.message, error.line]).toEqual(['each element of the array must be a row object in braces', 3]);
  });

  it('refuses a comma before the first row', async () => {
    expect((await parseError('[,{"a":1}]', 'json')).message).toBe('unexpected comma in the array');
  });

  it('refuses two commas between rows', async () => {
    expect((await parseError('[{"a":1},,{"a":2}]', 'json')).message).toBe('unexpected comma in the array');
  });

  it('refuses a trailing comma', async () => {
    expect((await parseError('[{"a":1},]', 'json')).message).toBe('unexpected comma before the closing ] of the array');
  });

  it('refuses rows without a comma between them', async () => {
    expect((await parseError('[{"a":1}{"a":2}]', 'json')).message).toBe('rows of the array must be separated by commas');
  });

  it('refuses an unclosed array', async () => {
    expect((await parseError('[{"a":1}', 'json')).message).toBe('the JSON array is not closed (missing ])');
  });

  it('refuses content after the array', async () => {
    expect((await parseError('[{"a":1}] []', 'json')).message).toBe('unexpected content after the closing ] of the array');
  });

  it('refuses nesting deeper than one level inside a row', async () => {
    expect((await parseError('[{"a":{"b":{"c":1}}}]', 'json')).message).toBe('rows must be flat objects; nesting this deep is not accepted');
  });

  it('refuses an empty body', async () => {
    expect((await parseError('  ', 'json')).message).toBe('the upload is empty: expected a JSON array of row objects');
  });

  it('refuses invalid JSON inside a row, naming its line', async () => {
    const error = await parseError('[\n{"a":1},\n{"a":01}\n]', 'json');
    expect(error.line).toBe(3);
    expect(error.message).toMatch(/^invalid JSON: /);
  });
});
