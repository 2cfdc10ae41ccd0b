/** The flat segment table for BI tools and spreadsheets: CSV or JSON, its entity tag, and a cache of rendered tables. */
export { plainNumber, tableCsv, textCell } from './csv.js';
export { rejectedRowsCsv } from './rejected-csv.js';
export {
  SegmentTableCache,
  entityTag,
  segmentTable,
  segmentTableColumns,
  type RenderedTable,
  type TableFormat,
} from './segment-table.js';
