import { describe, expect, test } from 'vitest';
import { InvalidDefinitionError, normalizeDefinition, type DefinitionLookup } from '../../src/report/definition/index.js';

const lookup: DefinitionLookup = {
  missingCampaigns: async (ids) => ids.filter((id) => id !== 'spring' && id !== 'autumn'),
  missingAttributes: async (names) => names.filter((name) => name !== 'loyalty_tier'),
};

async function issuesOf(body: unknown): Promise<Array<{ field: string; reason: string }>> {
  try {
    await normalizeDefinition(body, lookup);
  } catch (error) {
    if (error instanceof InvalidDefinitionError) return error.issues;
    throw error;
  }
  throw new Error('the definition was accepted');
}

describe('report definitions', () => {
  test('a minimal campaign definition gets every documented default', async () => {
    const definition = await normalizeDefinition({ name: ' Spring push ', source: { campaign_ids: ['spring'] } }, lookup);
    expect(definition).toEqual({
      name: 'Spring push',
      source: { campaign_ids: ['spring'] },
      dimensions: ['age_band', 'region', 'channel'],
      crosses: [
        ['age_band', 'region'],
        ['age_band', 'channel'],
        ['region', 'channel'],
      ],
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
    });
  });

  test('a sales window, an extra attribute dimension and explicit settings are kept', async () => {
    const definition = await normalizeDefinition(
      {
        name: 'Q1 buyers',
        source: { sales_from: '2026-01-01', sales_to: '2026-03-31' },
        dimensions: ['customer_type', 'loyalty_tier'],
        crosses: [['loyalty_tier', 'customer_type']],
        age_bands: [20, 40, 60],
        min_n: 2,
        confidence: 0.9,
        adjustment: 'holm',
        value_basis: 'per_conversion',
        rank_by: 'value',
        rank_order: 'estimate',
        refresh: 'weekly',
      },
      lookup,
    );
    expect(definition.source).toEqual({ sales_from: '2026-01-01', sales_to: '2026-03-31' });
    // A cross is stored in the order of the dimensions list, so its label does not depend on how it was typed.
    expect(definition.crosses).toEqual([['customer_type', 'loyalty_tier']]);
    expect(definition).toMatchObject({ min_n: 2, confidence: 0.9, adjustment: 'holm', value_basis: 'per_conversion', rank_by: 'value', rank_order: 'estimate', refresh: 'weekly' });
  });

  test('an empty crosses list means no two-way segments', async () => {
    const definition = await normalizeDefinition({ name: 'x', source: { campaign_ids: ['spring'] }, crosses: [] }, lookup);
    expect(definition.crosses).toEqual([]);
  });

  test('an unknown dimension is named with its position', async () => {
    expect(await issuesOf({ name: 'x', source: { campaign_ids: ['spring'] }, dimensions: ['region', 'shoe_size'] })).toEqual([
      { field: 'body/dimensions/1', reason: expect.stringContaining('unknown dimension "shoe_size"') },
    ]);
  });

  test('a dimension that is not a valid name is refused without asking the database', async () => {
    const issues = await issuesOf({ name: 'x', source: { campaign_ids: ['spring'] }, dimensions: ['Region!'] });
    expect(issues).toEqual([{ field: 'body/dimensions/0', reason: expect.stringContaining('unknown dimension') }]);
  });

  test('age bands that do not increase are refused', async () => {
    expect(await issuesOf({ name: 'x', source: { campaign_ids: ['spring'] }, age_bands: [18, 35, 25] })).toEqual([
      { field: 'body/age_bands/2', reason: 'band edges must be increasing: 25 follows 35' },
    ]);
  });

  test('age band edges below 18 or above 120 are refused, because such ages count as unknown', async () => {
    const issues = await issuesOf({ name: 'x', source: { campaign_ids: ['spring'] }, age_bands: [16, 30, 121] });
    expect(issues.map((issue) => issue.field)).toEqual(['body/age_bands/0', 'body/age_bands/2']);
  });

  test.each([0, -0.01, 1.5, '0.02', null])('an equivalence margin of %j is refused', async (margin) => {
    expect(await issuesOf({ name: 'x', source: { campaign_ids: ['spring'] }, equivalence_margin: margin })).toEqual([
      { field: 'body/equivalence_margin', reason: expect.stringContaining('a difference of conversion rates as a fraction') },
    ]);
  });

  test.each([0, -5, '10'])('a value equivalence margin of %j is refused; null and a positive amount are kept', async (margin) => {
    expect(await issuesOf({ name: 'x', source: { campaign_ids: ['spring'] }, value_equivalence_margin: margin })).toEqual([
      { field: 'body/value_equivalence_margin', reason: expect.stringContaining('a positive amount of money in major units, or null') },
    ]);
    const kept = await normalizeDefinition({ name: 'x', source: { campaign_ids: ['spring'] }, equivalence_margin: 0.05, value_equivalence_margin: 2.5 }, lookup);
    expect(kept).toMatchObject({ equivalence_margin: 0.05, value_equivalence_margin: 2.5 });
  });

  // The last three were once accepted, and every refresh of such a report failed.
  test.each([0, 1, 1.5, -0.2, '0.95', 0.4999, 0.99991, 0.9999999999999999, 1e-300, 5e-324])('a confidence of %j is refused', async (confidence) => {
    expect(await issuesOf({ name: 'x', source: { campaign_ids: ['spring'] }, confidence })).toEqual([
      { field: 'body/confidence', reason: expect.stringContaining('from 0.5 to 0.9999') },
    ]);
  });

  test.each([0.5, 0.9999])('a confidence of %j, at the edge of the range, is accepted', async (confidence) => {
    expect((await normalizeDefinition({ name: 'x', source: { campaign_ids: ['spring'] }, confidence }, lookup)).confidence).toBe(confidence);
  });

  test('more than 15 crosses are refused once, not once per pair', async () => {
    const crosses = Array.from({ length: 16 }, () => ['region', 'channel']);
    expect(await issuesOf({ name: 'x', source: { campaign_ids: ['spring'] }, crosses })).toEqual([
      { field: 'body/crosses', reason: 'may list at most 15 pairs (every pair of 6 dimensions)' },
    ]);
  });

  test('15 crosses, every pair of six dimensions, are accepted', async () => {
    const dimensions = ['age_band', 'region', 'channel', 'customer_type', 'loyalty_tier', 'shoe_size'];
    const crosses = dimensions.flatMap((first, index) => dimensions.slice(index + 1).map((second) => [first, second]));
    expect(crosses).toHaveLength(15);
    const accepting: DefinitionLookup = { ...lookup, missingAttributes: async () => [] };
    expect((await normalizeDefinition({ name: 'x', source: { campaign_ids: ['spring'] }, dimensions, crosses }, accepting)).crosses).toHaveLength(15);
  });

  test.each([1, 0, 2.5])('a min_n of %j is refused', async (minN) => {
    expect(await issuesOf({ name: 'x', source: { campaign_ids: ['spring'] }, min_n: minN })).toEqual([
      { field: 'body/min_n', reason: expect.stringContaining('from 2 to') },
    ]);
  });

  test('a campaign id that was never uploaded is refused with its position', async () => {
    expect(await issuesOf({ name: 'x', source: { campaign_ids: ['spring', 'winter'] } })).toEqual([
      { field: 'body/source/campaign_ids/1', reason: 'no campaign with id "winter" has been uploaded' },
    ]);
  });

  test('a source with both campaigns and a sales window is refused', async () => {
    const issues = await issuesOf({ name: 'x', source: { campaign_ids: ['spring'], sales_from: '2026-01-01', sales_to: '2026-02-01' } });
    expect(issues).toEqual([{ field: 'body/source', reason: expect.stringContaining('both campaign_ids and a sales window') }]);
  });

  test('a sales window that ends before it starts is refused', async () => {
    expect(await issuesOf({ name: 'x', source: { sales_from: '2026-03-01', sales_to: '2026-02-01' } })).toEqual([
      { field: 'body/source/sales_to', reason: 'the window ends (2026-02-01) before it starts (2026-03-01)' },
    ]);
  });

  test('an impossible calendar date in the window is refused', async () => {
    const issues = await issuesOf({ name: 'x', source: { sales_from: '2026-02-30', sales_to: '2026-03-01' } });
    expect(issues).toEqual([{ field: 'body/source/sales_from', reason: expect.stringContaining('is not a calendar date') }]);
  });

  test('a cross naming a dimension the report does not have is refused', async () => {
    const issues = await issuesOf({ name: 'x', source: { campaign_ids: ['spring'] }, dimensions: ['region', 'channel'], crosses: [['region', 'age_band']] });
    expect(issues).toEqual([{ field: 'body/crosses/0', reason: expect.stringContaining('"age_band" is not one of the report\'s dimensions') }]);
  });

  test('the same cross listed twice, in either order, is refused', async () => {
    const issues = await issuesOf({ name: 'x', source: { campaign_ids: ['spring'] }, crosses: [['region', 'channel'], ['channel', 'region']] });
    expect(issues).toEqual([{ field: 'body/crosses/1', reason: 'the cross of region and channel is listed twice' }]);
  });

  test('an unknown field is refused rather than ignored', async () => {
    expect(await issuesOf({ name: 'x', source: { campaign_ids: ['spring'] }, min_N: 10 })).toEqual([
      { field: 'body/min_N', reason: expect.stringContaining('is not a report definition field') },
    ]);
  });

  test('every problem of a body is listed at once', async () => {
    const issues = await issuesOf({ source: { campaign_ids: [] }, adjustment: 'bonferroni', rank_by: 'revenue', confidence: 2 });
    expect(issues.map((issue) => issue.field).sort()).toEqual(['body/adjustment', 'body/confidence', 'body/name', 'body/rank_by', 'body/source/campaign_ids']);
  });

  test('a body that is not an object is refused', async () => {
    expect(await issuesOf(['name'])).toEqual([{ field: 'body', reason: expect.stringContaining('JSON object') }]);
  });
});
