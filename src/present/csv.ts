/**
 * Tables as CSV (RFC 4180) for BI tools and spreadsheets: the columns in the order given,
 * CRLF line ends, numbers written plainly (`.` decimal, no thousands separators, no exponent),
 * null as an empty cell, and text that a spreadsheet would run as a formula neutralised with a
 * leading single quote.
 */

// Cells starting with these characters are read as formulas by common spreadsheet programs
// (OWASP "CSV injection" guidance — common practice).
const FORMULA_START = /^[=+\-@\t\r]/;

/**
 * A number in plain decimal notation: `String(x)` unless that would use an exponent, in which
 * case the digits are written out (1.5e-7 → 0.00000015). The value reads back identically.
 * @throws Error for a non-finite number (a snapshot never holds one)
 * @example
 * plainNumber(-0.0123); // '-0.0123'
 * plainNumber(3.2e-15); // '0.0000000000000032'
 */
export function plainNumber(value: number): string {
  if (!Number.isFinite(value)) throw new Error(`cannot write ${value} as a CSV number`);
  const text = String(value);
  const match = /^(-?)(\d)(?:\.(\d+))?e([+-]\d+)$/.exec(text);
  if (!match) return text;
  const [, sign, lead, fraction = '', exponentText] = match as unknown as [string, string, string, string | undefined, string];
  const exponent = Number(exponentText);
  const digits = `${lead}${fraction}`;
  if (exponent < 0) return `${sign}0.${'0'.repeat(-exponent - 1)}${digits}`;
  if (digits.length <= exponent + 1) return `${sign}${digits}${'0'.repeat(exponent + 1 - digits.length)}`;
  return `${sign}${digits.slice(0, exponent + 1)}.${digits.slice(exponent + 1)}`;
}

/**
 * One text cell: neutralised if it would start a formula, quoted if it holds a comma, quote
 * or line break.
 * @example
 * textCell('=SUM(A1)'); // "'=SUM(A1)"
 * textCell('North, coast'); // '"North, coast"'
 */
export function textCell(value: string): string {
  const safe = FORMULA_START.test(value) ? `'${value}` : value;
  return /[",\r\n]/.test(safe) ? `"${safe.replace(/"/g, '""')}"` : safe;
}

function cell(value: unknown): string {
  if (value === null || value === undefined) return '';
  if (typeof value === 'number') return plainNumber(value);
  return textCell(String(value));
}

/**
 * Rows as CSV text with a header row of `columns`; each row is read by column name, and a
 * missing or null value is an empty cell.
 * @example
 * tableCsv(['rank', 'segment'], [{ rank: 1, segment: 'region=North' }]); // 'rank,segment\r\n1,region=North\r\n'
 */
export function tableCsv(columns: readonly string[], rows: ReadonlyArray<Readonly<Record<string, unknown>>>): string {
  const lines = [columns.map(textCell).join(',')];
  for (const row of rows) lines.push(columns.map((column) => cell(row[column])).join(','));
  return `${lines.join('\r\n')}\r\n`;
}
