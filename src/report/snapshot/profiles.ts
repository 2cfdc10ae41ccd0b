/**
 * Per-dimension profiles: the frequency table of each dimension (Pareto order), the
 * descriptive statistics of value and age for each of its values, and the age–value
 * correlation. Distributions arrive as grouped counts (value, count) from SQL and are
 * described as counts (`describeCounts`), never expanded into lists. The value counts of a
 * group are read from the database only while the group is at most `MAX_EXPANDED_VALUES`
 * units (reading them costs a sort of the group's units); beyond that the figures that need
 * the whole distribution (median, quartiles, modes, skewness) are null with the reason stated,
 * and the mean and standard deviation still come from the exact sufficient statistics.
 */
import {
  describeCounts,
  frequencyTable,
  histogramOfCounts,
  pearsonCorrelationFromMoments,
  summaryFromShiftedSums,
  summaryVariance,
  type Histogram,
  type Outcome,
  type Summary,
} from '../../stats/index.js';
import type { AgeValueBinCount, AgeValueGridAxes, GridAxis, Group, PairedShiftedSums, PopulationValueCount, Shifts } from '../../segments/index.js';
import type { AgeValueGridCell, Correlation, Descriptives, DimensionProfile, DimensionValueProfile, HistogramFigure } from '../shapes/index.js';

/** Largest group whose value counts are read from the database, to be described value by value. */
export const MAX_EXPANDED_VALUES = 100_000;

export interface WeightedValue {
  value: number;
  count: number;
}

function valueOrNull<T>(outcome: Outcome<T>, notes: string[]): T | null {
  if (outcome.ok) return outcome.value;
  notes.push(outcome.reason);
  return null;
}

/** Whether a group of `n` values is described value by value (so its grouped counts are needed). */
export function isExpandable(n: number): boolean {
  return n <= MAX_EXPANDED_VALUES;
}

/**
 * Descriptive statistics of one group from its grouped counts and its summary. Counts are
 * null for a group too large to expand (they are then not read from the database at all).
 * @throws Error when the counts do not add up to the summary's n (a programming error)
 * @example
 * describeDistribution([{ value: 0, count: 3 }, { value: 10, count: 1 }], summarize([0, 0, 0, 10]));
 * // { n: 4, mean: 2.5, median: 0, modes: [0], … }
 */
export function describeDistribution(counts: readonly WeightedValue[] | null, summary: Summary): Descriptives {
  const notes: string[] = [];
  if (summary.n === 0) {
    return { n: 0, mean: null, median: null, modes: null, standard_deviation: null, coefficient_of_variation: null, skewness: null, q1: null, q3: null, notes: ['There are no values.'] };
  }
  if (counts !== null) {
    const total = counts.reduce((sum, entry) => sum + entry.count, 0);
    if (total !== summary.n) throw new Error(`grouped counts (${total}) and summary (${summary.n}) disagree`);
    const described = describeCounts(counts);
    const quartileValues = valueOrNull(described.quartiles, notes);
    return {
      n: summary.n,
      mean: described.summary.mean,
      median: quartileValues?.median ?? null,
      modes: described.modes,
      standard_deviation: valueOrNull(described.standardDeviation, notes),
      coefficient_of_variation: valueOrNull(described.coefficientOfVariation, notes),
      skewness: valueOrNull(described.skewness, notes),
      q1: quartileValues?.q1 ?? null,
      q3: quartileValues?.q3 ?? null,
      notes,
    };
  }
  const variance = valueOrNull(summaryVariance(summary), notes);
  const deviation = variance === null ? null : Math.sqrt(variance);
  notes.push(`The median, quartiles, modes and skewness are not computed for groups of more than ${MAX_EXPANDED_VALUES} values.`);
  return {
    n: summary.n,
    mean: summary.mean,
    median: null,
    modes: null,
    standard_deviation: deviation,
    // The same definition as the statistics core's coefficientOfVariation: sd / mean, for a positive mean only.
    coefficient_of_variation: deviation !== null && summary.mean > 0 ? deviation / summary.mean : null,
    skewness: null,
    q1: null,
    q3: null,
    notes,
  };
}

/**
 * Pearson's r of age and value from the shifted sums of SQL: the centred moments are
 * Σ(x − x̄)² = Sxx − Sx²/n (as `summaryFromShiftedSums`) and Σ(x − x̄)(y − ȳ) = Sxy − Sx·Sy/n,
 * exact when the shifts are near the means; the test and interval are the core's.
 */
export function correlationFromSums(sums: PairedShiftedSums, shifts: Shifts, confidence: number): Correlation {
  if (sums.n === 0) return { n: 0, r: null, ci_low: null, ci_high: null, p_value: null, note: 'There are no units with both an age and a value.' };
  const ageSpread = summaryFromShiftedSums(sums.n, shifts.age, sums.ageSum, sums.ageSquaredSum).sumSquaredDeviations;
  const valueSpread = summaryFromShiftedSums(sums.n, 0, sums.valueSum, sums.valueSquaredSum).sumSquaredDeviations;
  const crossDeviations = sums.crossSum - (sums.ageSum * sums.valueSum) / sums.n;
  const result = pearsonCorrelationFromMoments(
    { n: sums.n, sumSquaredDeviationsX: ageSpread, sumSquaredDeviationsY: valueSpread, sumCrossDeviations: crossDeviations },
    confidence,
  );
  if (!result.ok) return { n: sums.n, r: null, ci_low: null, ci_high: null, p_value: null, note: result.reason };
  return { n: sums.n, r: result.value.r, ci_low: result.value.interval.low, ci_high: result.value.interval.high, p_value: result.value.pValue, note: null };
}

export interface ProfileInput {
  dimensions: readonly string[];
  /** one-way groups of every dimension (from the roll-up) */
  oneWay: readonly Group[];
  ageCounts: ReadonlyArray<{ labels: string[]; age: number | null; count: number }>;
  valueCounts: ReadonlyArray<{ labels: string[]; valueCents: number; count: number }>;
  valueSummary: (group: Group['stats']) => Summary;
  shifts: Shifts;
  confidence: number;
}

function addCount(target: Map<string, Map<number, number>>, key: string, value: number, count: number): void {
  let inner = target.get(key);
  if (!inner) target.set(key, (inner = new Map()));
  inner.set(value, (inner.get(value) ?? 0) + count);
}

function toWeighted(counts: Map<number, number> | undefined): WeightedValue[] {
  return [...(counts ?? new Map<number, number>())].map(([value, count]) => ({ value, count }));
}

/** The grouped value counts of a group, or null when the group is too large and they were not read. */
function countsIfExpandable(counts: Map<number, number> | undefined, n: number): WeightedValue[] | null {
  return isExpandable(n) ? toWeighted(counts) : null;
}

/**
 * The profile of every dimension: its values in Pareto order with shares, and per value the
 * descriptives of value and age and their correlation.
 */
export function dimensionProfiles(input: ProfileInput): DimensionProfile[] {
  // In value order, so each label's counts arrive ascending and are not sorted again one by one.
  const valueCounts = [...input.valueCounts].sort((left, right) => left.valueCents - right.valueCents);
  return input.dimensions.map((dimension, index) => {
    const groups = input.oneWay.filter((group) => group.dimensions.length === 1 && group.dimensions[0] === dimension);
    const ages = new Map<string, Map<number, number>>();
    for (const entry of input.ageCounts) if (entry.age !== null) addCount(ages, entry.labels[index] as string, entry.age, entry.count);
    const values = new Map<string, Map<number, number>>();
    for (const entry of valueCounts) addCount(values, entry.labels[index] as string, entry.valueCents / 100, entry.count);
    const table = frequencyTable(groups.map((group) => ({ label: group.labels[0] as string, count: group.stats.n })));
    const rows = table.ok ? table.value : [];
    const byLabel = new Map(groups.map((group) => [group.labels[0] as string, group]));
    const profiles: DimensionValueProfile[] = rows.map((row) => {
      const group = byLabel.get(row.label) as Group;
      return {
        value: row.label,
        n: row.count,
        share: row.share,
        cumulative_share: row.cumulativeShare,
        value_descriptives: describeDistribution(countsIfExpandable(values.get(row.label), input.valueSummary(group.stats).n), input.valueSummary(group.stats)),
        age_descriptives: describeDistribution(toWeighted(ages.get(row.label)), group.stats.age),
        age_value_correlation: correlationFromSums(group.stats.ageValue, input.shifts, input.confidence),
      };
    });
    return { dimension, values: profiles };
  });
}

/**
 * Descriptives of the whole population: ages from the age counts, values from the value counts
 * of every unit of the value metric (null when they were not read: then the figures that need
 * the distribution are null with the reason stated).
 */
export function populationDescriptives(
  ageCounts: ProfileInput['ageCounts'],
  wholeValueCounts: readonly PopulationValueCount[] | null,
  valueSummary: Summary,
  ageSummary: Summary,
): { value: Descriptives; age: Descriptives } {
  const ages = new Map<number, number>();
  for (const entry of ageCounts) if (entry.age !== null) ages.set(entry.age, (ages.get(entry.age) ?? 0) + entry.count);
  const values = wholeValueCounts === null ? null : wholeValueCounts.map((entry) => ({ value: entry.valueCents / 100, count: entry.count }));
  return { value: describeDistribution(values, valueSummary), age: describeDistribution(toWeighted(ages), ageSummary) };
}

/** Largest number of bins on either axis of the age × value grid (so at most 20 × 20 cells). */
const MAX_GRID_BINS = 20;

function histogramFigure(outcome: Outcome<Histogram>): HistogramFigure | null {
  if (!outcome.ok) return null;
  const { rule, binWidth, bins, note } = outcome.value;
  return { rule, bin_width: binWidth, bins: bins.map((bin) => ({ low: bin.low, high: bin.high, count: bin.count })), note };
}

/**
 * The histograms of the population's age (units with a known age) and value (units of the
 * value metric, in major currency units: cents / 100), by the statistics core's
 * `histogramOfCounts` with Sturges' rule: equal bins from the smallest to the largest value,
 * each [low, high) and the last [low, high]. Null when there is nothing to bin; the value
 * histogram is also null when the whole population's value counts were not read.
 * @throws StatsInputError when a count is not a non-negative integer (a programming error)
 * @example
 * populationHistograms([{ labels: ['north'], age: 30, count: 2 }], [{ valueCents: 1250, count: 2 }]);
 * // { age: { rule: 'sturges', bin_width: 0, bins: [{ low: 30, high: 30, count: 2 }], note: 'All values are equal, …' }, value: { … } }
 */
export function populationHistograms(
  ageCounts: ProfileInput['ageCounts'],
  valueCounts: readonly PopulationValueCount[] | null,
): { age: HistogramFigure | null; value: HistogramFigure | null } {
  const ages = ageCounts.flatMap((entry) => (entry.age === null ? [] : [{ value: entry.age, count: entry.count }]));
  const values = valueCounts === null ? null : valueCounts.map((entry) => ({ value: entry.valueCents / 100, count: entry.count }));
  return { age: histogramFigure(histogramOfCounts(ages)), value: values === null ? null : histogramFigure(histogramOfCounts(values)) };
}

function axisOf(entries: ReadonlyArray<{ value: number; count: number }>, histogramBins: number): GridAxis | null {
  // Folded pair by pair: spreading hundreds of thousands of entries (a count per cell and age) into Math.min overflows the stack.
  let low = Number.POSITIVE_INFINITY;
  let high = Number.NEGATIVE_INFINITY;
  let present = 0;
  for (const entry of entries) {
    if (!(entry.count > 0)) continue;
    low = Math.min(low, entry.value);
    high = Math.max(high, entry.value);
    present += 1;
  }
  if (present === 0) return null;
  return { low, high, bins: Math.min(histogramBins, MAX_GRID_BINS) };
}

/**
 * The axes of the age × value grid: the range of the known ages (years) and of the values
 * (cents), each in as many equal bins as its histogram, at most `MAX_GRID_BINS`, so that
 * while the histogram has no more bins the grid's edges are the histogram's. Null when either
 * distribution is empty.
 * @example
 * ageValueGridAxes([{ labels: ['north'], age: 30, count: 2 }, { labels: ['south'], age: 50, count: 2 }], [{ valueCents: 0, count: 4 }]);
 * // { age: { low: 30, high: 50, bins: 3 }, valueCents: { low: 0, high: 0, bins: 1 } }
 */
export function ageValueGridAxes(ageCounts: ProfileInput['ageCounts'], valueCounts: readonly PopulationValueCount[]): AgeValueGridAxes | null {
  const histograms = populationHistograms(ageCounts, valueCounts);
  if (histograms.age === null || histograms.value === null) return null;
  const age = ageGridAxis(ageCounts);
  const valueCents = axisOf(
    valueCounts.map((entry) => ({ value: entry.valueCents, count: entry.count })),
    histograms.value.bins.length,
  );
  // Values are binned by exact integer arithmetic; a spend beyond 2^53 cents (about 90 trillion
  // in major units) is not an exact number here, so such a population has no grid.
  if (valueCents !== null && !(Number.isSafeInteger(valueCents.low) && Number.isSafeInteger(valueCents.high))) return null;
  return age === null || valueCents === null ? null : { age, valueCents };
}

/**
 * The age axis of the age × value grid alone (as in `ageValueGridAxes`), known before the
 * values are read; null when no age is known.
 */
export function ageGridAxis(ageCounts: ProfileInput['ageCounts']): GridAxis | null {
  const histogram = populationHistograms(ageCounts, null).age;
  if (histogram === null) return null;
  return axisOf(
    ageCounts.flatMap((entry) => (entry.age === null ? [] : [{ value: entry.age, count: entry.count }])),
    histogram.bins.length,
  );
}

/** Edge i of an axis (the last edge is the axis' high end exactly, as in `histogram`). */
function axisEdge(axis: GridAxis, index: number): number {
  return index >= axis.bins ? axis.high : axis.low + (index * (axis.high - axis.low)) / axis.bins;
}

/**
 * The occupied cells of the age × value grid with their edges (age in years, value in major
 * currency units), ordered by age bin and then value bin.
 * @throws Error when a bin index lies outside its axis (a programming error)
 * @example
 * ageValueGridCells({ age: { low: 20, high: 40, bins: 2 }, valueCents: { low: 0, high: 1000, bins: 1 } }, [{ ageBin: 1, valueBin: 0, count: 3 }]);
 * // [{ age_low: 30, age_high: 40, value_low: 0, value_high: 10, count: 3 }]
 */
export function ageValueGridCells(axes: AgeValueGridAxes, counts: readonly AgeValueBinCount[]): AgeValueGridCell[] {
  return [...counts]
    .filter((entry) => entry.count > 0)
    .sort((left, right) => left.ageBin - right.ageBin || left.valueBin - right.valueBin)
    .map((entry) => {
      if (entry.ageBin < 0 || entry.ageBin >= axes.age.bins || entry.valueBin < 0 || entry.valueBin >= axes.valueCents.bins) {
        throw new Error(`grid cell (${entry.ageBin}, ${entry.valueBin}) lies outside the ${axes.age.bins} × ${axes.valueCents.bins} grid`);
      }
      return {
        age_low: axisEdge(axes.age, entry.ageBin),
        age_high: axisEdge(axes.age, entry.ageBin + 1),
        value_low: axisEdge(axes.valueCents, entry.valueBin) / 100,
        value_high: axisEdge(axes.valueCents, entry.valueBin + 1) / 100,
        count: entry.count,
      };
    });
}
