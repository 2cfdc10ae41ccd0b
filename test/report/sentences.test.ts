/**
 * The numbers in a report's sentences are the numbers in its fields: each sentence is checked
 * for the key figures of its verdict, formatted from the fields by the shared formatter, and
 * every number it contains must be one of the formatted field values.
 */
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import {
  describeSegment,
  formatConfidence,
  formatCount,
  formatMoney,
  formatPercent,
  formatPoints,
  formatPointsMagnitude,
  formatPValue,
  formatRank,
  formatRatio,
  formatSignedMoney,
} from '../../src/report/wording/index.js';
import { isPublished, type PublishedSegment, type Snapshot, type SnapshotSegment } from '../../src/report/shapes/index.js';
import { TEST_DIALECTS } from '../support/database.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { createReport, generateContacts, generateCustomers, refresh, uploadRows, REPORT_TEST_SETTINGS } from '../support/report-data.js';
import { seededRandom } from '../../seed/generate.js';

const NUMBER = /[-+]?\d[\d,]*(?:\.\d+)?/g;

function numbersIn(text: string): string[] {
  return (text.match(NUMBER) ?? []).map((token) => token.replace(/^\+/, ''));
}

function present<T>(value: T | null | undefined): value is T {
  return value !== null && value !== undefined;
}

/** Every field of a segment (and of the report) a sentence may quote, formatted as sentences format them. */
function formattedFields(segment: PublishedSegment, snapshot: Snapshot): string[] {
  const definition = snapshot.definition;
  const texts: string[] = [formatConfidence(definition.confidence), formatCount(definition.min_n), formatCount(snapshot.row_counts.rate_tests), formatCount(snapshot.row_counts.value_tests)];
  const percent = [
    segment.conversion_rate,
    segment.conversion_rate_ci_low,
    segment.conversion_rate_ci_high,
    segment.rate_expected,
    segment.rate_expected_ci_low,
    segment.rate_expected_ci_high,
    segment.rest.conversion_rate,
  ];
  const points = [segment.rate_diff, segment.rate_diff_ci_low, segment.rate_diff_ci_high, segment.change?.rate_change, segment.change?.rate_change_ci_low, segment.change?.rate_change_ci_high];
  const money = [segment.value_mean, segment.value_ci_low, segment.value_ci_high, segment.value_expected, segment.value_expected_ci_low, segment.value_expected_ci_high, segment.rest.value_mean];
  const signedMoney = [segment.value_diff, segment.value_diff_ci_low, segment.value_diff_ci_high, segment.change?.value_change, segment.change?.value_change_ci_low, segment.change?.value_change_ci_high];
  texts.push(...percent.filter(present).map(formatPercent));
  texts.push(...points.filter(present).map(formatPoints));
  texts.push(...money.filter(present).map(formatMoney));
  texts.push(...signedMoney.filter(present).map(formatSignedMoney));
  texts.push(...[segment.rate_p_adjusted, segment.value_p_adjusted].filter(present).map(formatPValue));
  for (const test of [segment.equivalence.conversion_rate, segment.equivalence.value].filter(present)) {
    texts.push(formatPointsMagnitude(test.margin), formatMoney(test.margin), formatPValue(test.p_adjusted ?? 1));
  }
  if (segment.change) {
    texts.push(formatCount(segment.change.new_n), formatCount(segment.change.previous_n));
    texts.push(...[segment.change.rate_change_p_adjusted, segment.change.value_change_p_adjusted].filter(present).map(formatPValue));
  }
  if (present(segment.lift)) texts.push(formatRatio(segment.lift));
  if (present(segment.min_detectable_diff)) texts.push(formatPointsMagnitude(segment.min_detectable_diff), formatMoney(Math.abs(segment.min_detectable_diff)));
  texts.push(formatCount(segment.n), formatCount(segment.rest.n), formatCount(segment.value_n));
  texts.push(...[segment.rank, segment.previous_rank].filter(present).map(formatRank));
  return texts;
}

function withoutSegmentNames(text: string, segment: SnapshotSegment): string {
  return text.split(describeSegment(segment.values)).join(' ').split(describeSegment(segment.values).replace(/^./, (c) => c.toUpperCase())).join(' ');
}

function expectOnlyFieldNumbers(text: string, allowed: string[]): void {
  const allowedNumbers = new Set(allowed.flatMap(numbersIn));
  for (const number of numbersIn(text)) expect(allowedNumbers, `"${number}" in: ${text}`).toContain(number);
}

function checkSegmentSentences(snapshot: Snapshot): void {
  const metric = snapshot.definition.rank_by;
  for (const segment of snapshot.segments) {
    if (!isPublished(segment)) {
      expectOnlyFieldNumbers(withoutSegmentNames(segment.summary, segment), [formatCount(segment.withheld_below ?? 0)]);
      continue;
    }
    const allowed = formattedFields(segment, snapshot);
    const text = segment.summary;
    expectOnlyFieldNumbers(withoutSegmentNames(text, segment), allowed);
    const level = metric === 'conversion_rate' ? formatPercent : formatMoney;
    const estimate = metric === 'conversion_rate' ? segment.conversion_rate : segment.value_mean;
    const low = metric === 'conversion_rate' ? segment.conversion_rate_ci_low : segment.value_ci_low;
    const high = metric === 'conversion_rate' ? segment.conversion_rate_ci_high : segment.value_ci_high;
    const adjusted = metric === 'conversion_rate' ? segment.rate_p_adjusted : segment.value_p_adjusted;
    const magnitude = metric === 'conversion_rate' ? formatPointsMagnitude : (value: number) => formatMoney(Math.abs(value));
    if (present(estimate)) expect(text).toContain(level(estimate));
    if (present(low) && present(high)) expect(text).toContain(`${level(low)} to ${level(high)}`);
    if (segment.verdict === 'too_small') {
      expect(text).toContain(formatCount(segment.n < snapshot.definition.min_n ? segment.n : segment.rest.n));
      if (present(segment.min_detectable_diff)) expect(text).toContain(magnitude(segment.min_detectable_diff));
    } else if (segment.verdict === 'inconclusive') {
      if (present(segment.min_detectable_diff)) expect(text).toContain(magnitude(segment.min_detectable_diff));
    } else if (segment.verdict === 'equivalent') {
      const test = metric === 'conversion_rate' ? segment.equivalence.conversion_rate : segment.equivalence.value;
      expect(test).not.toBeNull();
      expect(text).toContain(magnitude(test?.margin as number));
      expect(text).toContain(formatPValue(test?.p_adjusted as number));
      expect(text).not.toContain('rules out');
    }
    if ((segment.verdict === 'better' || segment.verdict === 'worse' || segment.verdict === 'inconclusive') && present(adjusted)) {
      expect(text).toContain(formatPValue(adjusted));
    }
    if (segment.change !== null && metric === 'conversion_rate' && present(segment.change.rate_change)) {
      expect(text).toContain(formatPoints(segment.change.rate_change));
    }
  }
}

function checkReportSentences(snapshot: Snapshot): void {
  const counts = snapshot.verdict_counts;
  const allowed = [
    formatCount(snapshot.population.n),
    formatCount(snapshot.row_counts.segments),
    formatCount(snapshot.row_counts.rate_tests),
    formatCount(snapshot.row_counts.value_tests),
    formatCount(snapshot.definition.min_n),
    formatConfidence(snapshot.definition.confidence),
    ...Object.values(counts).map(formatCount),
    ...[snapshot.population.conversion_rate].filter(present).map(formatPercent),
    ...[snapshot.population.value_mean].filter(present).map(formatMoney),
    // the withheld segments and the publication threshold
    ...(snapshot.disclosure ? [formatCount(snapshot.disclosure.withheld_segments), formatCount(snapshot.disclosure.threshold)] : []),
  ];
  const top = snapshot.segments[0];
  if (top) {
    allowed.push(...[top.conversion_rate].filter(present).map(formatPercent), ...[top.value_mean].filter(present).map(formatMoney));
  }
  const summary = top ? withoutSegmentNames(snapshot.summary, top) : snapshot.summary;
  expectOnlyFieldNumbers(summary, allowed);
  expect(snapshot.summary).toContain(formatCount(snapshot.population.n));
  expect(snapshot.summary).toContain(`${formatCount(counts.better)} do better, ${formatCount(counts.worse)} do worse`);
  for (const reversal of snapshot.reversals) {
    const level = snapshot.definition.rank_by === 'conversion_rate' ? formatPercent : formatMoney;
    const reversalAllowed = [level(reversal.higher_overall_metric), level(reversal.lower_overall_metric), formatCount(reversal.levels_compared), formatCount(snapshot.definition.min_n)];
    expect(reversal.sentence).toContain(level(reversal.higher_overall_metric));
    const withoutNames = [reversal.higher_overall, reversal.lower_overall].reduce((text, name) => text.split(name).join(' '), reversal.sentence);
    expectOnlyFieldNumbers(withoutNames, reversalAllowed);
  }
}

describe.each(TEST_DIALECTS)('sentences quote the fields (%s)', (dialect) => {
  let context: TestApp;
  const snapshots: Snapshot[] = [];

  beforeAll(async () => {
    context = await createTestApp(dialect, REPORT_TEST_SETTINGS);
    const customers = generateCustomers(3, 2500, 0.04);
    await uploadRows(context.app, '/v1/customers', customers as unknown as Array<Record<string, unknown>>);
    const contacts = generateContacts(customers.slice(0, 2000), { seed: 5, baseRate: 0.12, plantedRegion: 'Eastvale', plantedRate: 0.22, regionRates: { Southmere: 0.04 } });
    await uploadRows(context.app, '/v1/campaigns/summer/contacts', contacts as unknown as Array<Record<string, unknown>>);
    const random = seededRandom(9);
    const sales = customers
      .filter(() => random() < 0.5)
      .map((customer, index) => ({
        sale_id: `s${index}`,
        customer_id: customer.customer_id,
        sold_at: `2026-0${1 + Math.floor(random() * 5)}-${String(1 + Math.floor(random() * 28)).padStart(2, '0')}`,
        amount: (5 + random() * (customer.region === 'Lakeshore' ? 200 : 100)).toFixed(2),
      }));
    await uploadRows(context.app, '/v1/sales', sales);

    const byRate = await createReport(context.app, { name: 'Summer by rate', source: { campaign_ids: ['summer'] }, dimensions: ['age_band', 'region', 'channel', 'loyalty_tier'] });
    const byValue = await createReport(context.app, {
      name: 'Summer by value',
      source: { campaign_ids: ['summer'] },
      dimensions: ['region', 'channel'],
      rank_by: 'value',
      value_basis: 'per_conversion',
      adjustment: 'holm',
      confidence: 0.9,
    });
    const sales2026 = await createReport(context.app, {
      name: 'Spring sales',
      source: { sales_from: '2026-03-01', sales_to: '2026-04-30' },
      dimensions: ['region', 'customer_type'],
      min_n: 50,
      equivalence_margin: 0.15,
    });
    snapshots.push(await refresh(context.app, byRate.report_id), await refresh(context.app, byValue.report_id), await refresh(context.app, sales2026.report_id));
    // More contacts, then a second snapshot: change and rank movement appear in the sentences.
    const more = generateContacts(customers.slice(2000), { seed: 6, baseRate: 0.12, plantedRegion: 'Westbrook', plantedRate: 0.5 });
    await uploadRows(context.app, '/v1/campaigns/summer/contacts', more as unknown as Array<Record<string, unknown>>);
    snapshots.push(await refresh(context.app, byRate.report_id), await refresh(context.app, sales2026.report_id));
  }, 120_000);
  afterAll(async () => {
    await context.close();
  });

  test('the data give every kind of verdict, so every kind of sentence is checked', () => {
    const verdicts = new Set(snapshots.flatMap((snapshot) => snapshot.segments.map((segment) => segment.verdict)));
    expect([...verdicts].sort()).toEqual(['better', 'equivalent', 'inconclusive', 'too_small', 'worse']);
    expect(snapshots[3]?.segments.some((segment) => segment.change !== null && segment.previous_rank !== null)).toBe(true);
  });

  test('each segment summary quotes its own figures and no other numbers', () => {
    for (const snapshot of snapshots) checkSegmentSentences(snapshot);
  });

  test('the report summary and the reversal notes quote the report figures and no other numbers', () => {
    for (const snapshot of snapshots) checkReportSentences(snapshot);
  });

  test('a segment that is too small says what difference its data could have detected', () => {
    const small = snapshots.flatMap((snapshot) => snapshot.segments).filter((segment) => segment.verdict === 'too_small' && segment.min_detectable_diff !== null);
    expect(small.length).toBeGreaterThan(0);
    for (const segment of small) expect(segment.summary).toMatch(/could have been detected/);
  });

  test('an inconclusive segment says what difference the comparison could detect', () => {
    const inconclusive = snapshots.flatMap((snapshot) => snapshot.segments).filter((segment) => segment.verdict === 'inconclusive' && segment.min_detectable_diff !== null);
    expect(inconclusive.length).toBeGreaterThan(0);
    for (const segment of inconclusive) expect(segment.summary).toMatch(/could only reliably detect a difference of about/);
  });

  test('every report shows the cautions about restricted targeting and personal data', () => {
    for (const snapshot of snapshots) {
      expect(snapshot.cautions.some((caution) => /housing, credit, employment and insurance advertising/.test(caution) && /qualified counsel/.test(caution))).toBe(true);
      expect(snapshot.cautions.some((caution) => /Birth dates are personal data/.test(caution))).toBe(true);
    }
  });
});
