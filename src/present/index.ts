/** The flat segment table for BI tools and spreadsheets: CSV or JSON, its entity tag, and a cache of rendered tables. */
export { plainNumber, segmentsCsv, textCell } from './csv.js';
export { rejectedRowsCsv } from './rejected-csv.js';
export { SegmentTableCache, entityTag, renderSegmentTable, type RenderedTable, type TableFormat } from './segment-table.js';
