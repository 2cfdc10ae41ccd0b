/**
 * The rows an upload rejected as CSV, to open beside the file that was sent: row, line,
 * column, value and reason, with the same cell rules as the segment table (CRLF, formulas
 * neutralised, empty for null).
 */
import { plainNumber, textCell } from './csv.js';

export interface RejectedRowCells {
  row: number;
  line: number;
  column: string | null;
  value: string | null;
  reason: string;
}

const COLUMNS = ['row', 'line', 'column', 'value', 'reason'] as const;

export function rejectedRowsCsv(rows: readonly RejectedRowCells[]): string {
  const lines = [COLUMNS.join(',')];
  for (const row of rows) {
    lines.push([plainNumber(row.row), plainNumber(row.line), textCell(row.column ?? ''), textCell(row.value ?? ''), textCell(row.reason)].join(','));
  }
  return `${lines.join('\r\n')}\r\n`;
}
