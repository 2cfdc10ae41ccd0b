/**
 * A small dataset whose every figure can be checked by hand: each field of its snapshot is
 * compared with (1) the statistics core's result for the same counts and (2) a recomputation
 * in this test, from the raw rows, by the textbook formulas or by stdlib's general-purpose
 * tests (@stdlib/stats-ttest2, -ttest, -pcorrtest).
 */
import normalCdf from '@stdlib/stats-base-dists-normal-cdf';
import normalQuantile from '@stdlib/stats-base-dists-normal-quantile';
import hypergeometricPmf from '@stdlib/stats-base-dists-hypergeometric-pmf';
import pcorrtest from '@stdlib/stats-pcorrtest';
import ttest from '@stdlib/stats-ttest';
import ttest2 from '@stdlib/stats-ttest2';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { isPublished, type Snapshot, type SnapshotSegment } from '../../src/report/shapes/index.js';
import {
  adjustPValues,
  cohensH,
  fisherExactTest,
  hedgesG,
  katzRatioInterval,
  median,
  minimumDetectableRateDifference,
  newcombeDifferenceInterval,
  pearsonCorrelation,
  quartiles,
  summarize,
  tInterval,
  twoProportionZTest,
  twoPartTest,
  welchTTest,
  wilsonInterval,
} from '../../src/stats/index.js';
import { TEST_DIALECTS } from '../support/database.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { createReport, refresh, uploadRows, REPORT_TEST_SETTINGS } from '../support/report-data.js';

interface Row {
  customer_id: string;
  region: string;
  channel: string;
  birth_date: string;
  age: number;
  converted: 0 | 1;
  revenue: number;
}

// Cell sizes and conversions: North-web 30/15, North-store 12/2, South-web 20/4, South-store 18/3.
// North-store expects 12·24/80 = 3.6 conversions, so its test is Fisher's; every other is a z-test.
const CELLS = [
  { region: 'North', channel: 'web', n: 30, conversions: 15 },
  { region: 'North', channel: 'store', n: 12, conversions: 2 },
  { region: 'South', channel: 'web', n: 20, conversions: 4 },
  { region: 'South', channel: 'store', n: 18, conversions: 3 },
];

function buildRows(): Row[] {
  const rows: Row[] = [];
  let index = 0;
  for (const cell of CELLS) {
    for (let unit = 0; unit < cell.n; unit += 1) {
      const age = 20 + ((index * 7) % 60);
      const converted = unit < cell.conversions ? 1 : 0;
      rows.push({
        customer_id: `k${String(index).padStart(3, '0')}`,
        region: cell.region,
        channel: cell.channel,
        // Born on 1 January, so the age on 2026-03-01 is 2026 − birth year exactly.
        birth_date: `${2026 - age}-01-01`,
        age,
        converted,
        revenue: converted ? 10 + ((index * 13) % 37) + 0.25 * (index % 4) : 0,
      });
      index += 1;
    }
  }
  return rows;
}

const ROWS = buildRows();
const CONFIDENCE = 0.95;
const Z = normalQuantile(0.975, 0, 1);

function wilsonByFormula(x: number, n: number): [number, number] {
  const p = x / n;
  const centre = (p + (Z * Z) / (2 * n)) / (1 + (Z * Z) / n);
  const half = (Z * Math.sqrt((p * (1 - p)) / n + (Z * Z) / (4 * n * n))) / (1 + (Z * Z) / n);
  return [centre - half, centre + half];
}

function newcombeByFormula(x1: number, n1: number, x2: number, n2: number): [number, number] {
  const [l1, u1] = wilsonByFormula(x1, n1);
  const [l2, u2] = wilsonByFormula(x2, n2);
  const p1 = x1 / n1;
  const p2 = x2 / n2;
  return [p1 - p2 - Math.sqrt((p1 - l1) ** 2 + (u2 - p2) ** 2), p1 - p2 + Math.sqrt((u1 - p1) ** 2 + (p2 - l2) ** 2)];
}

function fisherByEnumeration(x1: number, n1: number, x2: number, n2: number): number {
  const total = n1 + n2;
  const successes = x1 + x2;
  const observed = hypergeometricPmf(x1, total, successes, n1);
  let p = 0;
  for (let k = Math.max(0, n1 + successes - total); k <= Math.min(n1, successes); k += 1) {
    const probability = hypergeometricPmf(k, total, successes, n1);
    if (probability <= observed * (1 + 1e-7)) p += probability;
  }
  return p;
}

function benjaminiHochberg(pValues: number[]): number[] {
  const order = pValues.map((p, index) => ({ p, index })).sort((a, b) => a.p - b.p);
  const adjusted = new Array<number>(pValues.length);
  let running = 1;
  for (let rank = order.length; rank >= 1; rank -= 1) {
    const entry = order[rank - 1]!;
    running = Math.min(running, (order.length * entry.p) / rank);
    adjusted[entry.index] = running;
  }
  return adjusted;
}

/**
 * Smallest d with power 0.8 for the pooled z-test: Φ((d − z·SE₀)/SE₁) = 0.8, SE₀ the pooled null
 * error at p̄ = (n₁(p₀+d) + n₂p₀)/(n₁+n₂), SE₁ = √((p₀+d)(1−p₀−d)/n₁ + p₀(1−p₀)/n₂), by bisection
 * (Fleiss, Levin & Paik 2003, §4.2, from memory).
 */
function mddByBisection(n1: number, n2: number, baseline: number, z: number): number {
  let low = 0;
  let high = 1 - baseline;
  for (let step = 0; step < 200; step += 1) {
    const d = (low + high) / 2;
    const pooled = (n1 * (baseline + d) + n2 * baseline) / (n1 + n2);
    const nullSe = Math.sqrt(pooled * (1 - pooled) * (1 / n1 + 1 / n2));
    const se = Math.sqrt(((baseline + d) * (1 - baseline - d)) / n1 + (baseline * (1 - baseline)) / n2);
    if (normalCdf((d - z * nullSe) / se, 0, 1) < 0.8) low = d;
    else high = d;
  }
  return (low + high) / 2;
}

function memberOf(segment: SnapshotSegment, row: Row): boolean {
  return Object.entries(segment.values).every(([dimension, value]) => row[dimension as 'region' | 'channel'] === value);
}

describe.each(TEST_DIALECTS)('every field of a small snapshot (%s)', (dialect) => {
  let context: TestApp;
  let snapshot: Snapshot;

  beforeAll(async () => {
    context = await createTestApp(dialect, REPORT_TEST_SETTINGS);
    await uploadRows(
      context.app,
      '/v1/customers',
      ROWS.map((row) => ({ customer_id: row.customer_id, birth_date: row.birth_date, region: row.region, channel: row.channel, customer_type: 'individual' })),
    );
    await uploadRows(
      context.app,
      '/v1/campaigns/hand/contacts',
      ROWS.map((row) => ({ customer_id: row.customer_id, contacted_at: '2026-03-01', converted: row.converted, revenue: row.revenue.toFixed(2) })),
    );
    const report = await createReport(context.app, { name: 'Hand check', source: { campaign_ids: ['hand'] }, dimensions: ['region', 'channel'], min_n: 10 });
    snapshot = await refresh(context.app, report.report_id);
  });
  afterAll(async () => {
    await context.close();
  });

  test('the population figures are those of the rows', () => {
    const conversions = ROWS.filter((row) => row.converted).length;
    expect(snapshot.population).toMatchObject({ unit: 'contact', n: 80, conversions: 24, conversion_rate: 0.3, value_n: 80 });
    expect(conversions).toBe(24);
    expect(snapshot.population.value_mean).toBeCloseTo(ROWS.reduce((sum, row) => sum + row.revenue, 0) / 80, 12);
    const [low, high] = wilsonByFormula(24, 80);
    expect(snapshot.population.conversion_rate_ci_low).toBeCloseTo(low, 12);
    expect(snapshot.population.conversion_rate_ci_high).toBeCloseTo(high, 12);
    // region and channel have two values each: South and web mirror North and store, so 6 of the 8 tested segments are in each family.
    expect(snapshot.row_counts).toEqual({ population: 80, cells: 4, segments: 8, tested: 8, too_small: 0, rate_tests: 6, value_tests: 6 });
  });

  test('the segments are the four one-way values and the four cross cells', () => {
    expect(snapshot.segments.map((segment) => segment.segment).sort()).toEqual([
      'channel=store',
      'channel=web',
      'region=North',
      'region=North & channel=store',
      'region=North & channel=web',
      'region=South',
      'region=South & channel=store',
      'region=South & channel=web',
    ]);
  });

  test('counts, shares and rates with their Wilson intervals', () => {
    for (const segment of snapshot.segments) {
      const members = ROWS.filter((row) => memberOf(segment, row));
      const x = members.filter((row) => row.converted).length;
      expect(segment.n).toBe(members.length);
      expect(segment.conversions).toBe(x);
      expect(segment.share).toBe(members.length / 80);
      const core = wilsonInterval(x, members.length, CONFIDENCE);
      if (!core.ok) throw new Error(core.reason);
      const [low, high] = wilsonByFormula(x, members.length);
      expect(segment.conversion_rate).toBe(core.value.estimate);
      expect(segment.conversion_rate_ci_low).toBe(core.value.interval.low);
      expect(segment.conversion_rate_ci_high).toBe(core.value.interval.high);
      expect(segment.conversion_rate_ci_low).toBeCloseTo(low, 12);
      expect(segment.conversion_rate_ci_high).toBeCloseTo(high, 12);
    }
  });

  test('differences (Newcombe), lifts (Katz), tests (z or Fisher) and Cohen\'s h against the rest', () => {
    for (const segment of snapshot.segments) {
      const members = ROWS.filter((row) => memberOf(segment, row));
      const rest = ROWS.filter((row) => !memberOf(segment, row));
      const x1 = members.filter((row) => row.converted).length;
      const x2 = rest.filter((row) => row.converted).length;
      const n1 = members.length;
      const n2 = rest.length;
      expect(segment.rest).toMatchObject({ n: n2, conversions: x2, conversion_rate: x2 / n2 });

      const difference = newcombeDifferenceInterval(x1, n1, x2, n2, CONFIDENCE);
      if (!difference.ok) throw new Error(difference.reason);
      const [low, high] = newcombeByFormula(x1, n1, x2, n2);
      expect(segment.rate_diff).toBe(difference.value.estimate);
      expect(segment.rate_diff_ci_low).toBe(difference.value.interval.low);
      expect(segment.rate_diff_ci_high).toBe(difference.value.interval.high);
      expect(segment.rate_diff).toBeCloseTo(x1 / n1 - x2 / n2, 14);
      expect(segment.rate_diff_ci_low).toBeCloseTo(low, 12);
      expect(segment.rate_diff_ci_high).toBeCloseTo(high, 12);

      const lift = katzRatioInterval(x1, n1, x2, n2, CONFIDENCE);
      if (!lift.ok) throw new Error(lift.reason);
      const ratio = x1 / n1 / (x2 / n2);
      const logSe = Math.sqrt(1 / x1 - 1 / n1 + 1 / x2 - 1 / n2);
      expect(segment.lift).toBe(lift.value.estimate);
      expect(segment.lift_ci_low).toBe(lift.value.interval.low);
      expect(segment.lift_ci_high).toBe(lift.value.interval.high);
      expect(segment.lift).toBeCloseTo(ratio, 12);
      expect(segment.lift_ci_low).toBeCloseTo(Math.exp(Math.log(ratio) - Z * logSe), 12);
      expect(segment.lift_ci_high).toBeCloseTo(Math.exp(Math.log(ratio) + Z * logSe), 12);

      const expectedCells = [n1 * 24, n1 * 56, n2 * 24, n2 * 56].map((value) => value / 80);
      if (Math.min(...expectedCells) < 5) {
        expect(segment.rate_test).toBe('fisher');
        const core = fisherExactTest(x1, n1, x2, n2);
        if (!core.ok) throw new Error(core.reason);
        expect(segment.rate_p_value).toBe(core.value.pValue);
        expect(segment.rate_p_value).toBeCloseTo(fisherByEnumeration(x1, n1, x2, n2), 12);
      } else {
        expect(segment.rate_test).toBe('z');
        const core = twoProportionZTest(x1, n1, x2, n2);
        if (!core.ok) throw new Error(core.reason);
        const pooled = (x1 + x2) / (n1 + n2);
        const z = (x1 / n1 - x2 / n2) / Math.sqrt(pooled * (1 - pooled) * (1 / n1 + 1 / n2));
        expect(segment.rate_p_value).toBe(core.value.pValue);
        expect(segment.rate_z).toBe(core.value.z);
        expect(segment.rate_z).toBeCloseTo(z, 12);
        expect(segment.rate_p_value).toBeCloseTo(2 * normalCdf(-Math.abs(z), 0, 1), 12);
      }
      expect(segment.effect_sizes.cohens_h).toBe(cohensH(x1 / n1, x2 / n2));
      expect(segment.effect_sizes.cohens_h).toBeCloseTo(2 * Math.asin(Math.sqrt(x1 / n1)) - 2 * Math.asin(Math.sqrt(x2 / n2)), 14);
    }
  });

  test('only North-store, with 3.6 expected conversions, uses Fisher\'s exact test', () => {
    expect(snapshot.segments.filter((segment) => segment.rate_test === 'fisher').map((segment) => segment.segment)).toEqual(['region=North & channel=store']);
  });

  test('a yes/no dimension is tested once: the second value mirrors the first, with the same p-values', () => {
    const mirrors = Object.fromEntries(snapshot.segments.filter((segment) => segment.mirror_of !== null).map((segment) => [segment.segment, segment.mirror_of]));
    expect(mirrors).toEqual({ 'region=South': 'region=North', 'channel=web': 'channel=store' });
    for (const [mirror, twin] of Object.entries(mirrors)) {
      const [a, b] = [mirror, twin].map((label) => snapshot.segments.find((segment) => segment.segment === label) as SnapshotSegment);
      expect(a?.rate_p_value).toBeCloseTo(b?.rate_p_value as number, 14);
      expect(a?.rate_p_adjusted).toBe(b?.rate_p_adjusted);
      expect(a?.rate_diff).toBeCloseTo(-(b?.rate_diff as number), 14);
      expect(a?.summary).toContain(`the same as that of ${twin} seen from the other side`);
    }
  });

  test('adjusted p-values are Benjamini-Hochberg over the six distinct tests, per metric', () => {
    const family = snapshot.segments.filter(isPublished).filter((segment) => segment.mirror_of === null);
    const rateRaw = family.map((segment) => segment.rate_p_value as number);
    const valueRaw = family.map((segment) => segment.value_p_value as number);
    const rateCore = adjustPValues(rateRaw, 'bh');
    const valueCore = adjustPValues(valueRaw, 'bh');
    const rateHere = benjaminiHochberg(rateRaw);
    const valueHere = benjaminiHochberg(valueRaw);
    family.forEach((segment, index) => {
      expect(segment.rate_p_adjusted).toBe(rateCore[index]);
      expect(segment.value_p_adjusted).toBe(valueCore[index]);
      expect(segment.rate_p_adjusted).toBeCloseTo(rateHere[index] as number, 14);
      expect(segment.value_p_adjusted).toBeCloseTo(valueHere[index] as number, 14);
    });
  });

  test('the equivalence p-value is the Agresti–Caffo TOST against ± 2 points, adjusted in its own family', () => {
    const family = snapshot.segments.filter(isPublished).filter((segment) => segment.mirror_of === null);
    const byFormula = family.map((segment) => {
      // Agresti & Caffo (2000): add one success and one failure to each group.
      const p1 = (segment.conversions + 1) / (segment.n + 2);
      const p2 = (segment.rest.conversions + 1) / (segment.rest.n + 2);
      const se = Math.sqrt((p1 * (1 - p1)) / (segment.n + 2) + (p2 * (1 - p2)) / (segment.rest.n + 2));
      return Math.max(1 - normalCdf((p1 - p2 + 0.02) / se, 0, 1), normalCdf((p1 - p2 - 0.02) / se, 0, 1));
    });
    const adjusted = benjaminiHochberg(byFormula);
    family.forEach((segment, index) => {
      expect(segment.equivalence.conversion_rate).toMatchObject({ margin: 0.02, margin_source: 'default' });
      expect(segment.equivalence.conversion_rate?.p_value).toBeCloseTo(byFormula[index] as number, 12);
      expect(segment.equivalence.conversion_rate?.p_adjusted).toBeCloseTo(adjusted[index] as number, 12);
      expect(segment.equivalence.value).toBeNull();
    });
  });

  test('value means with t intervals, Welch comparisons and Hedges\' g, in major units', () => {
    for (const segment of snapshot.segments) {
      const members = ROWS.filter((row) => memberOf(segment, row)).map((row) => row.revenue);
      const rest = ROWS.filter((row) => !memberOf(segment, row)).map((row) => row.revenue);
      const coreMean = tInterval(summarize(members), CONFIDENCE);
      const coreWelch = welchTTest(summarize(members), summarize(rest), CONFIDENCE);
      const coreG = hedgesG(summarize(members), summarize(rest));
      if (!coreMean.ok || !coreWelch.ok || !coreG.ok) throw new Error('the core could not compute the value figures');
      const oneSample = ttest(members, { alpha: 1 - CONFIDENCE });
      const welch = ttest2(members, rest, { alpha: 1 - CONFIDENCE });
      expect(segment.value_n).toBe(members.length);
      expect(segment.value_mean).toBeCloseTo(coreMean.value.estimate, 10);
      expect(segment.value_ci_low).toBeCloseTo(coreMean.value.interval.low, 10);
      expect(segment.value_ci_high).toBeCloseTo(coreMean.value.interval.high, 10);
      expect(segment.value_ci_low).toBeCloseTo(oneSample.ci[0] as number, 10);
      expect(segment.value_ci_high).toBeCloseTo(oneSample.ci[1] as number, 10);
      expect(segment.value_diff).toBeCloseTo(coreWelch.value.difference, 10);
      expect(segment.value_diff_ci_low).toBeCloseTo(coreWelch.value.interval.low, 10);
      expect(segment.value_diff_ci_high).toBeCloseTo(coreWelch.value.interval.high, 10);
      // the test of no difference is the two-part test (checked against scipy in test/stats/shrinkage.test.ts)
      const logsOf = (values: number[]) => summarize(values.filter((value) => value > 0).map((value) => Math.log(Math.round(value * 100))));
      const twoPart = twoPartTest({ n: members.length, logPositive: logsOf(members) }, { n: rest.length, logPositive: logsOf(rest) });
      if (!twoPart.ok) throw new Error('the core could not compute the two-part test');
      expect(segment.value_p_value).toBeCloseTo(twoPart.value.pValue, 10);
      expect(segment.value_t).toBeCloseTo(twoPart.value.t, 10);
      expect(segment.value_degrees_of_freedom).toBeNull();
      expect(segment.value_test).toBe('two_part');
      expect(segment.value_diff_ci_low).toBeCloseTo(welch.ci[0] as number, 10);
      expect(segment.value_diff_ci_high).toBeCloseTo(welch.ci[1] as number, 10);
      expect(segment.effect_sizes.hedges_g).toBeCloseTo(coreG.value, 10);
      const pooledSd = Math.sqrt((summarize(members).sumSquaredDeviations + summarize(rest).sumSquaredDeviations) / (members.length + rest.length - 2));
      const meanDifference = members.reduce((s, v) => s + v, 0) / members.length - rest.reduce((s, v) => s + v, 0) / rest.length;
      expect(segment.effect_sizes.hedges_g).toBeCloseTo((1 - 3 / (4 * (members.length + rest.length - 2) - 1)) * (meanDifference / pooledSd), 10);
    }
  });

  test('the minimum detectable difference is the rate rise (or fall) with 80% power of the pooled z-test against the rest at α/m, m = 6 tests', () => {
    for (const segment of snapshot.segments.filter(isPublished)) {
      const rest = segment.rest;
      const direction = (segment.rate_diff as number) >= 0 ? 'increase' : 'decrease';
      const core = minimumDetectableRateDifference({ n1: segment.n, n2: rest.n, baselineRate: rest.conversion_rate as number, alpha: 0.05 / 6, power: 0.8, direction, nullVariance: 'pooled-null' });
      if (!core.ok) {
        expect(segment.min_detectable_diff).toBeNull();
        continue;
      }
      expect(segment.min_detectable_diff).toBe(core.value);
      const baseline = direction === 'increase' ? (rest.conversion_rate as number) : 1 - (rest.conversion_rate as number);
      expect(segment.min_detectable_diff).toBeCloseTo(mddByBisection(segment.n, rest.n, baseline, normalQuantile(1 - 0.05 / 12, 0, 1)), 9);
    }
  });

  test('verdicts follow the documented rule and the ranking is by the lower Wilson bound', () => {
    for (const segment of snapshot.segments.filter(isPublished)) {
      const significant = (segment.rate_p_adjusted as number) < 0.05;
      let expected: string;
      if (significant) expected = (segment.rate_diff as number) > 0 ? 'better' : 'worse';
      else if ((segment.equivalence.conversion_rate?.p_adjusted as number) < 0.05) expected = 'equivalent';
      else expected = 'inconclusive';
      expect(segment.verdict).toBe(expected);
    }
    const lowerBounds = snapshot.segments.map((segment) => segment.conversion_rate_ci_low as number);
    expect(lowerBounds).toEqual([...lowerBounds].sort((a, b) => b - a));
    expect(snapshot.segments.map((segment) => segment.rank)).toEqual([1, 2, 3, 4, 5, 6, 7, 8]);
    // North-web converts at 50% against 18% for the rest: the clearest difference, first.
    expect(snapshot.segments[0]?.segment).toBe('region=North & channel=web');
    expect(snapshot.segments[0]?.verdict).toBe('better');
  });

  test('per-dimension frequencies, descriptives and the age-value correlation match the core on the raw rows', () => {
    const region = snapshot.dimensions.find((profile) => profile.dimension === 'region');
    expect(region?.values.map((value) => [value.value, value.n, value.share, value.cumulative_share])).toEqual([
      ['North', 42, 42 / 80, 42 / 80],
      ['South', 38, 38 / 80, 1],
    ]);
    for (const profile of region?.values ?? []) {
      const members = ROWS.filter((row) => row.region === profile.value);
      const ages = members.map((row) => row.age);
      const revenues = members.map((row) => row.revenue);
      const ageQuartiles = quartiles(ages);
      const revenueMedian = median(revenues);
      if (!ageQuartiles.ok || !revenueMedian.ok) throw new Error('the core could not compute the quartiles');
      expect(profile.age_descriptives).toMatchObject({ n: members.length, median: ageQuartiles.value.median, q1: ageQuartiles.value.q1, q3: ageQuartiles.value.q3 });
      expect(profile.age_descriptives.mean).toBeCloseTo(ages.reduce((s, a) => s + a, 0) / ages.length, 12);
      expect(profile.value_descriptives.median).toBeCloseTo(revenueMedian.value, 12);
      expect(profile.value_descriptives.modes).toEqual([0]);
      const correlation = pearsonCorrelation(ages, revenues, CONFIDENCE);
      if (!correlation.ok) throw new Error(correlation.reason);
      const stdlib = pcorrtest(ages, revenues, { alpha: 0.05 });
      expect(profile.age_value_correlation.r).toBeCloseTo(correlation.value.r, 10);
      expect(profile.age_value_correlation.r).toBeCloseTo(stdlib.pcorr, 10);
      expect(profile.age_value_correlation.p_value).toBeCloseTo(stdlib.pValue, 10);
      expect(profile.age_value_correlation.ci_low).toBeCloseTo(stdlib.ci[0] as number, 10);
      expect(profile.age_value_correlation.ci_high).toBeCloseTo(stdlib.ci[1] as number, 10);
    }
  });

  test('data quality reports no unknown ages and the report carries the cautions', () => {
    expect(snapshot.data_quality).toMatchObject({ units: 80, unknown_age: 0, unknown_age_share: 0, customers_outside_population: 0, arithmetic: 'exact' });
    expect(snapshot.cautions.join(' ')).toMatch(/housing, credit, employment and insurance/);
    expect(snapshot.cautions.join(' ')).toMatch(/qualified counsel/);
    expect(snapshot.cautions.join(' ')).toMatch(/Birth dates are personal data/);
  });
});
