/**
 * Small-cell suppression of a snapshot (Hundepool et al. 2012, Statistical Disclosure Control,
 * Wiley, ch. 7 on frequency tables): no published figure describes fewer units than the
 * publication threshold.
 *
 * - Primary suppression: a segment with fewer units than the threshold, or leaving fewer
 *   outside it (its rest would follow from the population figures by subtraction), is withheld.
 * - Secondary (complementary) suppression, greedy: the segments of one margin add up to a
 *   known total (the one-way segments of a dimension to the population, the crosses with one
 *   fixed label to that label's one-way segment). When the withheld members of a margin
 *   together hold fewer units than the threshold, subtraction would recover them (or their
 *   sum), so the next-smallest published member is withheld too, until the withheld part of
 *   every margin holds at least the threshold or the margin is all withheld.
 * - Histogram bars below the threshold lose their count (null), grid cells below it are left
 *   out, each with the same complementary rule over the whole histogram or grid; dimension
 *   values whose one-way segment is withheld leave the dimension profiles; reversals naming a
 *   withheld value are dropped; a change against a previous count below the threshold is dropped.
 * - Every sentence is written again from what is left, so no sentence quotes a withheld figure.
 *
 * Pure and idempotent: applied to new snapshots before they are stored and to stored snapshots
 * (those written before it existed, or under a lower threshold) when they are read.
 */
import type { Disclosure, DimensionProfile, HistogramFigure, PopulationFigures, Reversal, Snapshot, SnapshotSegment, Verdict } from '../shapes/index.js';
import { VERDICTS } from '../shapes/index.js';
import { reportSummary, segmentSummary, vocabulary, type SentenceContext } from '../wording/index.js';
import { withoutHoldout } from '../analysis/index.js';
import { verdictMetric } from '../definition/index.js';

/** A stored snapshot needs no further withholding when it was withheld at this threshold or a higher one. */
function isWithheldAt(snapshot: Pick<Snapshot, 'disclosure'>, threshold: number): boolean {
  return snapshot.disclosure !== undefined && snapshot.disclosure.threshold >= threshold;
}

const DISCLOSURE_TAIL = /"disclosure":\{"threshold":(\d+),/;

/**
 * Whether stored snapshot text was already withheld at `threshold` or above, read from its
 * tail (the disclosure is the last field written) so the common case needs no parse.
 */
export function storedTextIsWithheldAt(body: string, threshold: number): boolean {
  const match = DISCLOSURE_TAIL.exec(body.slice(-1000));
  return match !== null && Number(match[1]) >= threshold;
}

/** The key of a one-way segment: dimension and label. */
function oneWayKey(dimension: string, label: string): string {
  return JSON.stringify([dimension, label]);
}

/**
 * The segments to withhold: primary suppression, then the greedy complementary rule over
 * every margin until nothing changes. A segment already withheld (no count) counts as
 * withheld with an unknown count, taken as 0, so the rule only grows more cautious.
 */
export function segmentsToWithhold(segments: readonly SnapshotSegment[], populationN: number, threshold: number): Set<string> {
  const withheld = new Set<string>();
  for (const segment of segments) {
    if (segment.n === null || segment.n < threshold || populationN - segment.n < threshold) withheld.add(segment.segment);
  }
  const margins = marginsOf(segments);
  for (let changed = true; changed; ) {
    changed = false;
    for (const members of margins) {
      let hidden = members.filter((segment) => withheld.has(segment.segment));
      if (hidden.length === 0) continue;
      const published = members.filter((segment) => !withheld.has(segment.segment)).sort((left, right) => (left.n ?? 0) - (right.n ?? 0) || compare(left.segment, right.segment));
      while (published.length > 0 && hidden.reduce((sum, segment) => sum + (segment.n ?? 0), 0) < threshold) {
        const next = published.shift() as SnapshotSegment;
        withheld.add(next.segment);
        hidden = [...hidden, next];
        changed = true;
      }
    }
  }
  return withheld;
}

function compare(left: string, right: string): number {
  return left < right ? -1 : left > right ? 1 : 0;
}

/**
 * The groups of segments that add up to a published or known total: the one-way segments of
 * each dimension (to the population), and for each two-way cross and each label of either of
 * its dimensions, the crosses holding that label (to the label's one-way segment).
 */
function marginsOf(segments: readonly SnapshotSegment[]): SnapshotSegment[][] {
  const groups = new Map<string, SnapshotSegment[]>();
  const add = (key: string, segment: SnapshotSegment) => {
    const members = groups.get(key);
    if (members) members.push(segment);
    else groups.set(key, [segment]);
  };
  for (const segment of segments) {
    const dimensions = Object.keys(segment.values);
    if (dimensions.length === 1) {
      add(JSON.stringify(['one-way', dimensions[0]]), segment);
      continue;
    }
    for (const [fixed, free] of [
      [0, 1],
      [1, 0],
    ] as const) {
      const fixedDimension = dimensions[fixed] as string;
      add(JSON.stringify(['cross', segment.dimensions, fixedDimension, segment.values[fixedDimension], dimensions[free]]), segment);
    }
  }
  return [...groups.values()];
}

const WITHHELD_FIGURES = [
  'n',
  'share',
  'conversions',
  'conversion_rate',
  'conversion_rate_ci_low',
  'conversion_rate_ci_high',
  'rate_diff',
  'rate_diff_ci_low',
  'rate_diff_ci_high',
  'lift',
  'lift_ci_low',
  'lift_ci_high',
  'rate_test',
  'rate_p_value',
  'rate_p_adjusted',
  'value_mean',
  'value_ci_low',
  'value_ci_high',
  'value_diff',
  'value_diff_ci_low',
  'value_diff_ci_high',
  // The expected figures are drawn from the segment's own counts: as telling as the raw ones.
  'rate_expected',
  'rate_expected_ci_low',
  'rate_expected_ci_high',
  'value_expected',
  'value_expected_ci_low',
  'value_expected_ci_high',
  'explained_by',
  'value_test',
  'strata',
  'value_p_value',
  'value_p_adjusted',
  'min_detectable_diff',
  'value_n',
  'rate_z',
  'value_t',
  'value_degrees_of_freedom',
  'previous_rank',
  'rank_movement',
  'change',
  'rest',
  'sufficient_statistics',
] as const satisfies ReadonlyArray<keyof SnapshotSegment>;

function withheldSegment(segment: SnapshotSegment, threshold: number): SnapshotSegment {
  const copy: SnapshotSegment = {
    ...segment,
    rank: null,
    verdict: 'too_small',
    tested: false,
    withheld_below: threshold,
    effect_sizes: { cohens_h: null, hedges_g: null },
    // An equivalence p-value is computed from the segment's counts too; the mirror relation
    // concerns tests the withheld segment does not show, and would name a label erasure removes.
    equivalence: { conversion_rate: null, value: null },
    mirror_of: null,
    notes: [],
  };
  for (const field of WITHHELD_FIGURES) (copy as Record<string, unknown>)[field] = null;
  Object.assign(copy, withoutHoldout());
  return copy;
}

/** Withholds segments and renumbers the ranks of the rest in their order, tested ones first. */
function withholdSegmentList(segments: readonly SnapshotSegment[], hidden: ReadonlySet<string>, threshold: number): SnapshotSegment[] {
  const kept = segments.map((segment) => {
    if (hidden.has(segment.segment)) return withheldSegment(segment, threshold);
    // A change against fewer units than the threshold would describe that earlier small group.
    const change = segment.change !== null && segment.change.previous_n > 0 && segment.change.previous_n < threshold ? null : segment.change;
    return { ...segment, change };
  });
  const ranked = kept.filter((segment) => segment.rank !== null).sort((left, right) => (left.rank as number) - (right.rank as number));
  const unranked = kept.filter((segment) => segment.rank === null);
  ranked.forEach((segment, index) => {
    segment.rank = index + 1;
    segment.rank_movement = segment.previous_rank !== null ? segment.previous_rank - segment.rank : null;
  });
  return [...ranked, ...unranked];
}

/** Counts below the threshold (and above 0) lose their figure, with the complementary rule over all bars. */
function withholdCounts(counts: ReadonlyArray<number | null>, threshold: number): Array<number | null> {
  const hidden = new Set<number>();
  counts.forEach((count, index) => {
    if (count === null || (count > 0 && count < threshold)) hidden.add(index);
  });
  const hiddenSum = () => [...hidden].reduce((sum, index) => sum + (counts[index] ?? 0), 0);
  if (hidden.size > 0) {
    const candidates = counts
      .map((count, index) => ({ count: count ?? 0, index }))
      .filter(({ count, index }) => count > 0 && !hidden.has(index))
      .sort((left, right) => left.count - right.count || left.index - right.index);
    while (candidates.length > 0 && hiddenSum() < threshold) hidden.add((candidates.shift() as { index: number }).index);
  }
  return counts.map((count, index) => (hidden.has(index) ? null : count));
}

function withholdHistogram(histogram: HistogramFigure | null | undefined, threshold: number): { histogram: HistogramFigure | null | undefined; withheld: number } {
  if (histogram === null || histogram === undefined) return { histogram, withheld: 0 };
  const counts = withholdCounts(
    histogram.bins.map((bin) => bin.count),
    threshold,
  );
  const bins = histogram.bins.map((bin, index) => ({ ...bin, count: counts[index] ?? null }));
  // The outer edges of the bins are the smallest and largest values, and the bin width gives
  // one from the other: withheld (and then empty) bars at either end are left out, so the
  // extremes of a few units are not published through the edges.
  let first = 0;
  let last = bins.length - 1;
  while (first <= last && (bins[first] as { count: number | null }).count === null) first += 1;
  while (last >= first && ((bins[last] as { count: number | null }).count ?? 0) === 0) last -= 1;
  return { histogram: { ...histogram, bins: bins.slice(first, last + 1) }, withheld: counts.filter((count) => count === null).length };
}

function withholdPopulation(population: PopulationFigures, threshold: number): { population: PopulationFigures; bars: number; gridCells: number } {
  const age = withholdHistogram(population.age_histogram, threshold);
  const value = withholdHistogram(population.value_histogram, threshold);
  const result: PopulationFigures = { ...population };
  if (age.histogram !== undefined) result.age_histogram = age.histogram;
  if (value.histogram !== undefined) result.value_histogram = value.histogram;
  let gridCells = 0;
  if (population.age_value_grid) {
    const counts = withholdCounts(
      population.age_value_grid.map((cell) => cell.count),
      threshold,
    );
    result.age_value_grid = population.age_value_grid.filter((_cell, index) => counts[index] !== null);
    gridCells = population.age_value_grid.length - result.age_value_grid.length;
  }
  return { population: result, bars: age.withheld + value.withheld, gridCells };
}

/**
 * The snapshot as it may be published at `threshold`: see the module comment. Returns a new
 * snapshot (or the one passed in, when it was withheld at this threshold or above already);
 * the one passed in is not changed.
 */
export function withholdSnapshot(snapshot: Snapshot, threshold: number): Snapshot {
  // Already withheld at this threshold or above: a second pass would count the withheld cells as empty.
  if (isWithheldAt(snapshot, threshold)) return snapshot;
  const hidden = segmentsToWithhold(snapshot.segments, snapshot.population.n, threshold);
  const segments = withholdSegmentList(snapshot.segments, hidden, threshold);

  const hiddenValues = new Set<string>();
  for (const segment of segments) {
    const dimensions = Object.keys(segment.values);
    if (dimensions.length === 1 && segment.withheld_below !== null) hiddenValues.add(oneWayKey(dimensions[0] as string, segment.values[dimensions[0] as string] as string));
  }
  let withheldValues = 0;
  const dimensions: DimensionProfile[] = snapshot.dimensions.map((profile) => {
    const values = profile.values.filter((value) => !hiddenValues.has(oneWayKey(profile.dimension, value.value)) && value.n >= threshold);
    withheldValues += profile.values.length - values.length;
    return { ...profile, values };
  });
  const reversals: Reversal[] = snapshot.reversals.filter(
    (reversal) => !hiddenValues.has(oneWayKey(reversal.dimension, reversal.higher_overall)) && !hiddenValues.has(oneWayKey(reversal.dimension, reversal.lower_overall)),
  );
  const { population, bars, gridCells } = withholdPopulation(snapshot.population, threshold);

  const counts = Object.fromEntries(VERDICTS.map((verdict) => [verdict, 0])) as Record<Verdict, number>;
  for (const segment of segments) counts[segment.verdict] += 1;
  const definition = snapshot.definition;
  const words = vocabulary(definition);
  const context: SentenceContext = {
    definition,
    vocabulary: words,
    familySizes: { conversion_rate: snapshot.row_counts.rate_tests, value: snapshot.row_counts.value_tests },
    hasPreviousSnapshot: snapshot.comparison.previous_snapshot_id !== null,
    comparedWith: snapshot.comparison.compared_with,
  };
  for (const segment of segments) segment.summary = segmentSummary(segment, context);

  const withheldSegments = segments.filter((segment) => segment.withheld_below !== null).length;
  const disclosure: Disclosure = {
    threshold,
    withheld_segments: withheldSegments,
    withheld_dimension_values: withheldValues,
    withheld_histogram_bars: bars,
    withheld_grid_cells: gridCells,
    withheld_reversals: snapshot.reversals.length - reversals.length,
    redacted_at: snapshot.disclosure?.redacted_at ?? null,
  };
  // `disclosure` stays the last field: storedTextIsWithheldAt reads it from the text's tail.
  const { disclosure: _earlier, ...rest } = snapshot;
  return {
    ...rest,
    population,
    segments,
    dimensions,
    reversals,
    verdict_counts: counts,
    row_counts: { ...snapshot.row_counts, too_small: counts.too_small },
    summary: reportSummary({
      definition,
      vocabulary: words,
      population,
      counts,
      familySize: verdictMetric(definition) === 'conversion_rate' ? snapshot.row_counts.rate_tests : snapshot.row_counts.value_tests,
      top: segments[0] ?? null,
      reversals: reversals.length,
      withheld: { segments: withheldSegments, threshold },
    }),
    disclosure,
  };
}
