import { describe, expect, test } from 'vitest';
import { buildSnapshot, type SnapshotInput, describeDistribution, correlationFromSums, MAX_EXPANDED_VALUES, populationDescriptives } from '../../src/report/snapshot/index.js';
import type { ReportDefinition } from '../../src/report/definition/index.js';
import { findReversals, rankSegments } from '../../src/report/analysis/index.js';
import type { SnapshotSegment } from '../../src/report/shapes/index.js';
import { cellStats } from '../../src/segments/rollup.js';
import { meanEquivalenceTest, median, modes, newcombeDifferenceInterval, pearsonCorrelation, quartiles, skewness, summarize } from '../../src/stats/index.js';
import { ZERO_SHIFTS, block, cellsFromUnits, countsFromUnits, type TestUnit } from './cells.js';
import { readStoredSnapshot } from '../../src/report/snapshot/stored.js';
import { knownSnapshot } from '../support/snapshot-fixture.js';

const DEFINITION: ReportDefinition = {
  name: 'Pure',
  source: { campaign_ids: ['pure'] },
  dimensions: ['region'],
  crosses: [],
  age_bands: [18, 25, 35, 45, 55, 65],
  min_n: 30,
  confidence: 0.95,
  equivalence_margin: 0.02,
  value_equivalence_margin: null,
  adjustment: 'bh',
  value_basis: 'per_unit',
  rank_by: 'conversion_rate',
  rank_order: 'lower_bound',
  refresh: 'manual',
  economics: null,
};

function input(units: TestUnit[], overrides: Partial<SnapshotInput> = {}): SnapshotInput {
  return {
    identity: { snapshotId: 'snap', reportId: 'report', reportName: 'Pure', sequence: 1, createdAt: '2026-06-15T12:00:00.000Z', trigger: 'manual' },
    definition: DEFINITION,
    shifts: ZERO_SHIFTS,
    arithmetic: 'exact',
    cells: cellsFromUnits(units),
    ...countsFromUnits(units),
    quality: { customersOutsidePopulation: 0, customersWithoutAnySale: 0, rejectedRows: [] },
    previousWindow: null,
    previousSnapshot: null,
    ...overrides,
  };
}

function segment(partial: Partial<SnapshotSegment>): SnapshotSegment {
  return { segment: 's', n: 100, tested: true, rate_expected: 0.1, rate_expected_ci_low: 0.05, verdict: 'inconclusive', explained_by: null, rank: null, ...partial } as SnapshotSegment;
}

describe('ranking', () => {
  test('tested segments by the lower bound of the expected rate, ties by size, a missing bound last, untested ones after without a rank', () => {
    const ranked = rankSegments(
      [
        segment({ segment: 'small-tie', n: 50, rate_expected_ci_low: 0.2 }),
        segment({ segment: 'untested-big', n: 29, tested: false, rate_expected_ci_low: 0.9 }),
        segment({ segment: 'top', n: 40, rate_expected_ci_low: 0.3 }),
        segment({ segment: 'no-bound', n: 500, rate_expected_ci_low: null }),
        segment({ segment: 'big-tie', n: 80, rate_expected_ci_low: 0.2 }),
        segment({ segment: 'untested-small', n: 3, tested: false, rate_expected_ci_low: 0.95 }),
      ],
      DEFINITION,
    );
    expect(ranked.map((entry) => [entry.segment, entry.rank])).toEqual([
      ['top', 1],
      ['big-tie', 2],
      ['small-tie', 3],
      ['no-bound', 4],
      ['untested-big', null],
      ['untested-small', null],
    ]);
  });

  test('rank_order estimate ranks by the expected rate instead', () => {
    const ranked = rankSegments(
      [segment({ segment: 'wide', rate_expected: 0.5, rate_expected_ci_low: 0.1 }), segment({ segment: 'narrow', rate_expected: 0.3, rate_expected_ci_low: 0.25 })],
      { ...DEFINITION, rank_order: 'estimate' },
    );
    expect(ranked.map((entry) => entry.segment)).toEqual(['wide', 'narrow']);
  });

  test('verdict tiers come first: better above every other tested segment, worse below them, whatever the bounds', () => {
    const ranked = rankSegments(
      [
        segment({ segment: 'lucky-inconclusive', rate_expected_ci_low: 0.4 }),
        segment({ segment: 'worse-high', verdict: 'worse', rate_expected_ci_low: 0.5 }),
        segment({ segment: 'better-low', verdict: 'better', rate_expected_ci_low: 0.12 }),
        segment({ segment: 'better-high', verdict: 'better', rate_expected_ci_low: 0.2 }),
      ],
      DEFINITION,
    );
    expect(ranked.map((entry) => entry.segment)).toEqual(['better-high', 'better-low', 'lucky-inconclusive', 'worse-high']);
  });

  test('a cross explained by its parent is placed right after that parent, not above it', () => {
    const ranked = rankSegments(
      [
        segment({ segment: 'region=A & channel=web', verdict: 'better', explained_by: 'channel=web', rate_expected_ci_low: 0.3 }),
        segment({ segment: 'region=B', verdict: 'better', rate_expected_ci_low: 0.25 }),
        segment({ segment: 'channel=web', verdict: 'better', rate_expected_ci_low: 0.2 }),
        segment({ segment: 'region=C & channel=web', verdict: 'better', explained_by: null, rate_expected_ci_low: 0.28 }),
      ],
      DEFINITION,
    );
    expect(ranked.map((entry) => [entry.segment, entry.rank])).toEqual([
      ['region=C & channel=web', 1],
      ['region=B', 2],
      ['channel=web', 3],
      ['region=A & channel=web', 4],
    ]);
  });
});

describe('crosses judged against their parents', () => {
  // Invented counts: the web channel converts at 30 % in every region, the other channels at
  // 10 %, except region D's stores, which convert at 40 % (a real interaction).
  const rates: Record<string, number> = { web: 0.3, store: 0.1, phone: 0.1 };
  const units = ['A', 'B', 'C', 'D'].flatMap((region) =>
    ['web', 'store', 'phone'].flatMap((channel) => block([region, channel], 300, Math.round(300 * (region === 'D' && channel === 'store' ? 0.4 : (rates[channel] as number))))),
  );
  const snapshot = buildSnapshot(input(units, { definition: { ...DEFINITION, dimensions: ['region', 'channel'], crosses: [['region', 'channel']] } }));
  const find = (label: string) => snapshot.segments.find((entry) => entry.segment === label) as SnapshotSegment;

  test('a cross no different from the other members of its parent is explained by it and ranked after it', () => {
    const cross = find('region=A & channel=web');
    expect(cross.verdict).toBe('better');
    expect(find('channel=web').verdict).toBe('better');
    expect(cross.explained_by).toBe('channel=web');
    expect(cross.rank as number).toBeGreaterThan(find('channel=web').rank as number);
    expect(cross.summary).toMatch(/within channel web/i);
  });

  test('a cross that differs within both its parents is not explained', () => {
    const cross = find('region=D & channel=store');
    expect(cross.verdict).toBe('better');
    expect(cross.explained_by).toBeNull();
  });

  test('expected rates lie between the raw rate and what the parents predict, with intervals around them', () => {
    const cross = find('region=D & channel=store');
    expect(cross.rate_expected as number).toBeLessThanOrEqual(cross.conversion_rate as number);
    expect(cross.rate_expected as number).toBeGreaterThan(0.1);
    expect(cross.rate_expected_ci_low as number).toBeLessThan(cross.rate_expected as number);
    expect(cross.rate_expected_ci_high as number).toBeGreaterThan(cross.rate_expected as number);
    for (const entry of snapshot.segments) expect(entry.value_expected).not.toBeNull();
  });
});

describe('the reversal check', () => {
  // Invented counts: region A sells mostly in stores, where everyone converts more, so A looks
  // better overall although it converts less than B in each channel.
  const units = [
    ...block(['A', 'web'], 100, 10),
    ...block(['A', 'store'], 400, 160),
    ...block(['B', 'web'], 400, 48),
    ...block(['B', 'store'], 100, 45),
  ];
  const cells = cellsFromUnits(units).map((cell) => ({ labels: cell.labels, stats: cellStats(cell, ZERO_SHIFTS) }));
  const rate = (stats: { n: number; conversions: number }) => stats.conversions / stats.n;

  test('a pair whose overall order is reversed in every channel is reported once, with both overall rates', () => {
    expect(findReversals({ dimensions: ['region', 'channel'], cells, minN: 30, metric: rate })).toEqual([
      { dimension: 'region', within: 'channel', higher_overall: 'A', lower_overall: 'B', higher_overall_metric: 170 / 500, lower_overall_metric: 93 / 500, levels_compared: 2 },
    ]);
  });

  test('levels with fewer than min_n units are not compared, so one level left is not enough for a reversal', () => {
    expect(findReversals({ dimensions: ['region', 'channel'], cells, minN: 150, metric: rate })).toEqual([]);
  });

  test('the reversal appears in the snapshot with a sentence naming both values and the other dimension', () => {
    const snapshot = buildSnapshot(input(units, { definition: { ...DEFINITION, dimensions: ['region', 'channel'] } }));
    expect(snapshot.reversals).toHaveLength(1);
    expect(snapshot.reversals[0]?.sentence).toMatch(/^Overall, region A has a higher conversion rate than region B \(34\.0% against 18\.6%\), but within each of the 2 levels of channel/);
    expect(snapshot.reversals[0]?.sentence).toMatch(/Simpson's paradox/);
    expect(snapshot.summary).toMatch(/reverse within the levels of another dimension/);
  });
});

describe('change since the previous snapshot and rank movement', () => {
  const regions = ['P', 'Q', 'R', 'S', 'T'];
  const before = regions.flatMap((region, index) => block([region], 60, region === 'P' ? 2 : 10 + index));
  // Campaign contacts are only added between snapshots: the second snapshot holds the first's contacts and 60 new ones per region.
  // P's new contacts convert so much better that it is found better than the rest and ranks first.
  const added = regions.flatMap((region, index) => block([region], 60, region === 'P' ? 45 : 10 + index));
  const after = [...before, ...added];
  const first = buildSnapshot(input(before));
  const second = buildSnapshot(input(after, { previousSnapshot: first, identity: { ...input(after).identity, snapshotId: 'snap-2', sequence: 2 } }));
  const p = second.segments.find((entry) => entry.segment === 'region=P') as SnapshotSegment;

  test('the segment that jumped to the top records its previous rank and movement', () => {
    expect(first.segments.find((entry) => entry.segment === 'region=P')?.rank).toBe(5);
    expect(p.rank).toBe(1);
    expect(p.previous_rank).toBe(5);
    expect(p.rank_movement).toBe(4);
  });

  test('the change of rate compares the contacts added since the previous snapshot with those before (Newcombe interval, disjoint groups)', () => {
    const expected = newcombeDifferenceInterval(45, 60, 2, 60, 0.95);
    if (!expected.ok) throw new Error(expected.reason);
    expect(p.change).toMatchObject({
      compared_with: 'previous_snapshot',
      previous_n: 60,
      previous_conversions: 2,
      new_n: 60,
      new_conversions: 45,
      rate_change: expected.value.estimate,
      rate_change_ci_low: expected.value.interval.low,
      rate_change_ci_high: expected.value.interval.high,
    });
    expect(second.comparison).toMatchObject({ compared_with: 'previous_snapshot', previous_snapshot_id: 'snap' });
    expect(p.change?.rate_change_p_value).toBeLessThan(0.001);
    // Adjusted over the five changes of the report (Benjamini–Hochberg): never below the raw p-value.
    expect(p.change?.rate_change_p_adjusted).toBeGreaterThanOrEqual(p.change?.rate_change_p_value as number);
  });

  test('a refresh with no new contacts reports no change and says there is no new data', () => {
    const again = buildSnapshot(input(after, { previousSnapshot: second, identity: { ...input(after).identity, snapshotId: 'snap-3', sequence: 3 } }));
    for (const segment of again.segments) {
      expect(segment.change).toBeNull();
      expect(segment.summary).toMatch(/were added to it since the previous snapshot, so there is no change to report\./);
      expect(segment.summary).not.toMatch(/differs by/);
    }
  });

  test('when earlier contacts changed (not only new ones added) the change is not computed, with the reason', () => {
    const rewritten = regions.flatMap((region) => block([region], 60, 40));
    const changed = buildSnapshot(input(rewritten, { previousSnapshot: first }));
    const q = changed.segments.find((entry) => entry.segment === 'region=Q') as SnapshotSegment;
    expect(q.change).toBeNull();
    expect(q.notes.join(' ')).toMatch(/contacts stored then were changed or erased since/);
  });

  test('a jump to the top on little data gets a regression-to-the-mean caution in words', () => {
    expect(p.summary).toMatch(/moved from rank 5 to rank 1/);
    expect(p.summary).toMatch(/regression to the mean/);
    const steady = second.segments.find((entry) => entry.segment === 'region=T') as SnapshotSegment;
    expect(steady.summary).not.toMatch(/regression to the mean/);
  });

  test('the same jump on plenty of data gets no such caution', () => {
    const bigBefore = regions.flatMap((region, index) => block([region], 600, region === 'P' ? 20 : 100 + 10 * index));
    const bigAfter = [...bigBefore, ...regions.flatMap((region, index) => block([region], 600, region === 'P' ? 300 : 100 + 10 * index))];
    const bigFirst = buildSnapshot(input(bigBefore));
    const bigSecond = buildSnapshot(input(bigAfter, { previousSnapshot: bigFirst }));
    const bigP = bigSecond.segments.find((entry) => entry.segment === 'region=P') as SnapshotSegment;
    expect(bigP.rank).toBe(1);
    expect(bigP.summary).not.toMatch(/regression to the mean/);
  });
});

describe('descriptives from grouped counts', () => {
  test('grouped counts give the core\'s figures for the expanded values', () => {
    const counts = [
      { value: 0, count: 5 },
      { value: 12.5, count: 2 },
      { value: 40, count: 1 },
      { value: 7.25, count: 2 },
    ];
    const values = counts.flatMap((entry) => Array<number>(entry.count).fill(entry.value));
    const described = describeDistribution(counts, summarize(values));
    const quartileValues = quartiles(values);
    const skew = skewness(values);
    const middle = median(values);
    if (!quartileValues.ok || !skew.ok || !middle.ok) throw new Error('core could not compute');
    expect(described).toMatchObject({ n: 10, median: middle.value, q1: quartileValues.value.q1, q3: quartileValues.value.q3, modes: modes(values) });
    // The expanded list is in ascending order, so the sums run in another order: equal to rounding.
    expect(described.skewness).toBeCloseTo(skew.value, 12);
  });

  test('a group whose value counts were not read (larger than the limit) keeps mean and deviation and states why the rest is missing', () => {
    const summary = { n: MAX_EXPANDED_VALUES + 1, mean: 3, sumSquaredDeviations: 4 * MAX_EXPANDED_VALUES };
    const described = describeDistribution(null, summary);
    expect(described).toMatchObject({ n: MAX_EXPANDED_VALUES + 1, mean: 3, median: null, modes: null, skewness: null, q1: null, q3: null });
    expect(described.standard_deviation).toBeCloseTo(2, 12);
    expect(described.coefficient_of_variation).toBeCloseTo(2 / 3, 12);
    expect(described.notes.join(' ')).toMatch(/not computed for groups of more than/);
  });

  test('counts of any size are described as counts: a million ages give their median and quartiles', () => {
    // 400,000 units aged 30, 600,000 aged 50: type 7 positions 249,999.75, 499,999.5 and
    // 749,999.25 (0-based) fall at 30, 50 and 50.
    const counts = [
      { value: 30, count: 400_000 },
      { value: 50, count: 600_000 },
    ];
    const described = describeDistribution(counts, summarize([...Array<number>(4).fill(30), ...Array<number>(6).fill(50)].flatMap((age) => Array<number>(100_000).fill(age))));
    expect(described).toMatchObject({ n: 1_000_000, median: 50, q1: 30, q3: 50, modes: [50] });
    expect(described.mean).toBeCloseTo(42, 10);
  });

  test("the population's value descriptives come from the whole-population counts, however large", () => {
    // 150,000 units worth 0 and 50,000 worth 25.00: type 7 q3 at position 149,999.25 (0-based)
    // lies a quarter of the way from 0 to 25 (worked by hand); the mean is 6.25.
    const whole = [
      { valueCents: 0, count: 150_000 },
      { valueCents: 2500, count: 50_000 },
    ];
    const summary = { n: 200_000, mean: 6.25, sumSquaredDeviations: 200_000 * (0.25 * 625 - 6.25 ** 2) };
    const ageSummary = summarize([]);
    const described = populationDescriptives([], whole, summary, ageSummary).value;
    expect(described).toMatchObject({ n: 200_000, median: 0, q1: 0, q3: 6.25, modes: [0] });
    expect(described.mean).toBeCloseTo(6.25, 12);
    expect(populationDescriptives([], null, summary, ageSummary).value).toMatchObject({ median: null, q3: null, modes: null });
  });

  test('counts that disagree with the summary are a programming error', () => {
    expect(() => describeDistribution([{ value: 1, count: 3 }], summarize([1, 1]))).toThrow(/disagree/);
  });

  test('the age-value correlation from shifted sums equals Pearson\'s r of the raw pairs', () => {
    const ages = [23, 35, 41, 52, 60, 29, 47];
    const cents = [1200, 0, 5600, 2300, 9900, 100, 4000];
    const shift = { unitValue: 3000, convertedValue: 0, age: 40 };
    const sum = (values: number[]) => values.reduce((total, value) => total + value, 0);
    const sums = {
      n: ages.length,
      ageSum: sum(ages.map((age) => age - 40)),
      ageSquaredSum: sum(ages.map((age) => (age - 40) ** 2)),
      valueSum: sum(cents.map((value) => value - 3000)),
      valueSquaredSum: sum(cents.map((value) => (value - 3000) ** 2)),
      crossSum: sum(ages.map((age, index) => (age - 40) * ((cents[index] as number) - 3000))),
    };
    const expected = pearsonCorrelation(ages, cents, 0.95);
    if (!expected.ok) throw new Error(expected.reason);
    const correlation = correlationFromSums(sums, shift, 0.95);
    expect(correlation.r).toBeCloseTo(expected.value.r, 12);
    expect(correlation.p_value).toBeCloseTo(expected.value.pValue, 12);
    expect(correlation.ci_low).toBeCloseTo(expected.value.interval.low, 12);
    expect(correlation.ci_high).toBeCloseTo(expected.value.interval.high, 12);
  });
});

describe('an empty population', () => {
  test('gives a snapshot with no segments and a summary that says so', () => {
    const snapshot = buildSnapshot(input([]));
    expect(snapshot.segments).toEqual([]);
    expect(snapshot.population).toMatchObject({ n: 0, conversion_rate: null, value_mean: null });
    expect(snapshot.summary).toMatch(/The population is empty/);
    expect(snapshot.cautions.length).toBeGreaterThanOrEqual(2);
  });
});

describe('reading a snapshot stored before equivalence verdicts', () => {
  test('a former "no detectable difference" is read as inconclusive with a note; missing fields are filled; a former change is dropped', () => {
    const current = knownSnapshot();
    const legacy = JSON.parse(JSON.stringify(current)) as Record<string, unknown> & { segments: Array<Record<string, unknown>>; verdict_counts: Record<string, number> };
    legacy.verdict_counts = { better: 1, worse: 1, no_detectable_difference: 1, inconclusive: 1, too_small: 1 };
    for (const segment of legacy.segments) {
      if (segment['verdict'] === 'equivalent') segment['verdict'] = 'no_detectable_difference';
      delete segment['equivalence'];
      delete segment['mirror_of'];
      delete segment['strata'];
      segment['change'] = { compared_with: 'previous_snapshot', previous_n: 10, previous_conversions: 1, rate_change: 0 };
    }
    const read = readStoredSnapshot(JSON.stringify(legacy));
    expect(read.verdict_counts).toEqual({ better: 1, worse: 1, equivalent: 0, inconclusive: 2, too_small: 1 });
    const former = read.segments.find((segment) => segment.notes.some((note) => note.includes('former rule')));
    expect(former?.verdict).toBe('inconclusive');
    for (const segment of read.segments) {
      expect(segment.equivalence).toEqual({ conversion_rate: null, value: null });
      expect(segment.mirror_of).toBeNull();
      expect(segment.change).toBeNull();
    }
    expect(readStoredSnapshot(JSON.stringify(current))).toEqual(current);
  });
});

describe('equivalence on the value metric', () => {
  // Two regions of 400 units with nearly equal revenue per unit, and a value margin of 1.00.
  const units = [...block(['A'], 400, 100, 2000), ...block(['B'], 400, 100, 2010), ...block(['C'], 400, 100, 1990)];
  const definition = { ...DEFINITION, rank_by: 'value' as const, value_equivalence_margin: 1 };

  test('the value TOST is the Welch TOST against ± the margin, adjusted over its family; the verdict follows it', () => {
    const snapshot = buildSnapshot(input(units, { definition }));
    const stats = (labels: string[]) => units.filter((unit) => labels.includes(unit.labels[0] as string)).map((unit) => unit.cents / 100);
    for (const segment of snapshot.segments) {
      const label = segment.values['region'] as string;
      const expected = meanEquivalenceTest(summarize(stats([label])), summarize(stats(['A', 'B', 'C'].filter((other) => other !== label))), 1);
      if (!expected.ok) throw new Error(expected.reason);
      expect(segment.equivalence.value).toMatchObject({ margin: 1, margin_source: 'definition' });
      expect(segment.equivalence.value?.p_value).toBeCloseTo(expected.value.pValue, 12);
      expect(segment.equivalence.value?.p_adjusted).toBeGreaterThanOrEqual(segment.equivalence.value?.p_value as number);
      const equivalent = (segment.equivalence.value?.p_adjusted as number) < 0.05 && !((segment.value_p_adjusted as number) < 0.05);
      expect(segment.verdict === 'equivalent').toBe(equivalent);
    }
    expect(snapshot.segments.some((segment) => segment.verdict === 'equivalent')).toBe(true);
  });

  test('without a value margin no segment is equivalent on value', () => {
    const snapshot = buildSnapshot(input(units, { definition: { ...definition, value_equivalence_margin: null } }));
    for (const segment of snapshot.segments) {
      expect(segment.equivalence.value).toBeNull();
      expect(segment.verdict).not.toBe('equivalent');
    }
  });
});
