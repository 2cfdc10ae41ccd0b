import { describe, expect, test } from 'vitest';
import { ageBandOf, ageBandOrder, ageBands, isAttributeName } from '../../src/segments/dimensions.js';

const DEFAULT_EDGES = [18, 25, 35, 45, 55, 65];

describe('age bands', () => {
  test('the default edges give the documented bands', () => {
    expect(ageBands(DEFAULT_EDGES).map((band) => band.label)).toEqual(['18-24', '25-34', '35-44', '45-54', '55-64', '65+']);
  });

  test('ages on a band edge belong to the band that starts there', () => {
    expect(ageBandOf(24, DEFAULT_EDGES)).toBe('18-24');
    expect(ageBandOf(25, DEFAULT_EDGES)).toBe('25-34');
    expect(ageBandOf(65, DEFAULT_EDGES)).toBe('65+');
    expect(ageBandOf(120, DEFAULT_EDGES)).toBe('65+');
  });

  test('missing and implausible ages go to the unknown band', () => {
    expect(ageBandOf(null, DEFAULT_EDGES)).toBe('unknown');
    expect(ageBandOf(17, DEFAULT_EDGES)).toBe('unknown');
    expect(ageBandOf(121, DEFAULT_EDGES)).toBe('unknown');
  });

  test('plausible ages below a first edge above 18 get their own band', () => {
    expect(ageBands([20, 40]).map((band) => band.label)).toEqual(['18-19', '20-39', '40+']);
    expect(ageBandOf(19, [20, 40])).toBe('18-19');
  });

  test('a one-year band is labelled by its single age', () => {
    expect(ageBands([18, 19, 30]).map((band) => band.label)).toEqual(['18', '19-29', '30+']);
  });

  test('the natural order ends with unknown', () => {
    expect(ageBandOrder([18, 65])).toEqual(['18-64', '65+', 'unknown']);
  });
});

describe('attribute names', () => {
  test('built-in dimension names are not attribute names', () => {
    expect(isAttributeName('region')).toBe(false);
    expect(isAttributeName('loyalty_tier')).toBe(true);
    expect(isAttributeName('Loyalty')).toBe(false);
  });
});
