/**
 * Public face of src/segments: the SQL of a report's population and the code that turns its
 * sufficient statistics into cells and segments. Each query returns sums or counts, never raw
 * rows:
 *
 * - `shiftsAndCellAggregates` (or `populationTotals` → `shiftsFromTotals` → `cellAggregates`):
 *   the finest cells with their shifted sums, the age counts and the unconverted units per age;
 * - `valueDistribution`: counts per (cell, value), for medians, quartiles and modes;
 * - `valueCountsByAgeBin`: counts per value and age bin, for the value histogram
 *   (`valueCountsOf`) and the age × value grid (`gridCountsOf`);
 * - `keptCountAggregates`: for a campaign report on contact_value_counts, all of the above but
 *   `sourceQuality` from ONE read of its campaigns' kept rows, folded in code;
 * - `sourceQuality`: data-quality counts the cells do not show;
 * - `rollUp`: cells → total, one-way and two-way segments.
 */
export { binIndex, gridCountsOf, valueCountsByAgeBin, valueCountsOf, valuesByAgeOf } from './age-value-grid.js';
export type { AgeValueBinCount, AgeValueGridAxes, GridAxis, PopulationValueCount, ValuesByAge } from './age-value-grid.js';

export { cellAggregates, emptyCell, shiftsAndCellAggregates } from './cells.js';
export type { AgeCount, CampaignCellCount, CellAggregate } from './cells.js';

export { sourceQuality } from './data-quality.js';
export type { SourceQuality } from './data-quality.js';

export { BUILT_IN_DIMENSIONS, MAX_PLAUSIBLE_AGE, MIN_PLAUSIBLE_AGE, UNKNOWN, ageBandOf, isAttributeName } from './dimensions.js';

export { keptCountAggregates } from './kept-rows.js';
export type { KeptAggregates } from './kept-fold.js';

export { labelCountBounds, labelCounts } from './label-counts.js';

export { campaignPopulationTable, holdoutContacts, populationTotals } from './population.js';
export type { AggregationRequest, CampaignPopulationTable, PopulationSource } from './population.js';

export { cellStats, groupBy, rollUp, subtractGroup } from './rollup.js';
export type { Group, GroupStats } from './rollup.js';

export { shiftsFromTotals } from './shifted-sums.js';
export type { PairedShiftedSums, Shifts } from './shifted-sums.js';

export { compareText, compareLabelLists } from './text-order.js';

export { valueDistribution } from './value-counts.js';
export type { ValueCount, ValueDistributionScope } from './value-counts.js';

export { SpendBeyondLimitError, explainOverflow } from './spend-limit.js';
