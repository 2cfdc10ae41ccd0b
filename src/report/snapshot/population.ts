/**
 * The figures of the population as a whole: its rate and value with intervals, its
 * descriptives and histograms, and the quality of its data.
 */
import { tInterval, wilsonInterval } from '../../stats/index.js';
import type { PopulationValueCount } from '../../segments/index.js';
import type { GroupStats } from '../../segments/index.js';
import { valueOrNull, valueSummary } from '../analysis/index.js';
import type { ReportDefinition } from '../definition/index.js';
import type { DataQuality, PopulationFigures } from '../shapes/index.js';
import type { SnapshotInput } from './input.js';
import { ageValueGridCells, correlationFromSums, populationDescriptives, populationHistograms } from './profiles.js';

export function populationFigures(input: SnapshotInput, total: GroupStats, definition: ReportDefinition): PopulationFigures {
  const rate = total.n > 0 ? valueOrNull(wilsonInterval(total.conversions, total.n, definition.confidence)) : null;
  const valueSummaryOfTotal = valueSummary(total, definition.value_basis);
  const valueInterval = valueOrNull(tInterval(valueSummaryOfTotal, definition.confidence));
  const wholeValueCounts = wholePopulationValueCounts(input, valueSummaryOfTotal.n);
  const descriptives = populationDescriptives(input.ageCounts, wholeValueCounts, valueSummaryOfTotal, total.age);
  const histograms = populationHistograms(input.ageCounts, wholeValueCounts);
  const source = definition.source;
  return {
    unit: 'campaign_ids' in source ? 'contact' : 'customer',
    campaign_ids: 'campaign_ids' in source ? source.campaign_ids : null,
    window: 'campaign_ids' in source ? null : { from: source.sales_from, to: source.sales_to },
    n: total.n,
    conversions: total.conversions,
    conversion_rate: rate?.estimate ?? null,
    conversion_rate_ci_low: rate?.interval.low ?? null,
    conversion_rate_ci_high: rate?.interval.high ?? null,
    value_basis: definition.value_basis,
    value_n: valueSummaryOfTotal.n,
    value_mean: valueSummaryOfTotal.n > 0 ? valueSummaryOfTotal.mean : null,
    value_ci_low: valueInterval?.interval.low ?? null,
    value_ci_high: valueInterval?.interval.high ?? null,
    value_descriptives: descriptives.value,
    age_descriptives: descriptives.age,
    age_value_correlation: correlationFromSums(total.ageValue, input.shifts, definition.confidence),
    age_histogram: histograms.age,
    value_histogram: histograms.value,
    age_value_grid: input.ageValueGrid ? nullIfEmpty(ageValueGridCells(input.ageValueGrid.axes, input.ageValueGrid.counts)) : null,
  };
}

function nullIfEmpty<T>(items: T[]): T[] | null {
  return items.length === 0 ? null : items;
}

/**
 * The value counts of every unit of the value metric, or null when they were not read: the
 * whole-population counts when given, else the cell counts when they add up to every unit
 * (a narrowed `valueDistribution` leaves some out, and a histogram of part would mislead).
 */
function wholePopulationValueCounts(input: SnapshotInput, valueUnits: number): PopulationValueCount[] | null {
  if (input.populationValueCounts) return input.populationValueCounts;
  const merged = new Map<number, number>();
  for (const entry of input.valueCounts) merged.set(entry.valueCents, (merged.get(entry.valueCents) ?? 0) + entry.count);
  const covered = [...merged.values()].reduce((sum, count) => sum + count, 0);
  return covered === valueUnits ? [...merged].map(([valueCents, count]) => ({ valueCents, count })) : null;
}

/** How much of the source could be used, and whether the value sums were exact. */
export function dataQualityOf(input: SnapshotInput, total: GroupStats, definition: ReportDefinition): DataQuality {
  return {
    units: total.n,
    unknown_age: total.n - total.age.n,
    unknown_age_share: total.n > 0 ? (total.n - total.age.n) / total.n : null,
    customers_outside_population: input.quality.customersOutsidePopulation,
    customers_without_any_sale: 'campaign_ids' in definition.source ? null : input.quality.customersWithoutAnySale,
    rejected_rows: input.quality.rejectedRows,
    arithmetic: input.arithmetic,
  };
}
