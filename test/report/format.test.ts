import { describe, expect, test } from 'vitest';
import {
  formatCoefficient,
  formatConfidence,
  formatCount,
  formatMoney,
  formatPercent,
  formatPoints,
  formatPointsMagnitude,
  formatPValue,
  formatRatio,
  formatSignedMoney,
  formatYears,
  readableSegmentName,
} from '../../src/report/wording/index.js';

describe('the number formatter of sentences', () => {
  test('counts get thousands separators', () => {
    expect(formatCount(1234567)).toBe('1,234,567');
    expect(formatCount(999)).toBe('999');
  });

  test('rates are percentages with one decimal', () => {
    expect(formatPercent(0.14123)).toBe('14.1%');
    expect(formatPercent(1)).toBe('100.0%');
    expect(formatPercent(0)).toBe('0.0%');
  });

  test('rate differences carry their sign and never read as negative zero', () => {
    expect(formatPoints(0.0231)).toBe('+2.3');
    expect(formatPoints(-0.004)).toBe('-0.4');
    expect(formatPoints(-0.0004)).toBe('0.0');
    expect(formatPointsMagnitude(-0.0214)).toBe('2.1');
  });

  test('money has two decimals and thousands separators, signed differences a sign', () => {
    expect(formatMoney(1234.5)).toBe('1,234.50');
    expect(formatSignedMoney(3.456)).toBe('+3.46');
    expect(formatSignedMoney(-1234.5)).toBe('-1,234.50');
    expect(formatSignedMoney(-0.001)).toBe('0.00');
  });

  test('p-values have two significant digits and a floor of 0.001', () => {
    expect(formatPValue(0.03456)).toBe('0.035');
    expect(formatPValue(0.5)).toBe('0.50');
    expect(formatPValue(0.001)).toBe('0.0010');
    expect(formatPValue(0.00099)).toBe('< 0.001');
  });

  test('ratios have two decimals and confidence levels drop needless zeros', () => {
    expect(formatRatio(1.2345)).toBe('1.23');
    expect(formatConfidence(0.95)).toBe('95%');
    expect(formatConfidence(0.975)).toBe('97.5%');
    expect(formatConfidence(0.9)).toBe('90%');
  });

  test('ages have one decimal; coefficients two, keeping the sign of one that rounds to zero', () => {
    expect(formatYears(41.26)).toBe('41.3');
    expect(formatYears(0)).toBe('0.0');
    expect(formatCoefficient(0.1234)).toBe('0.12');
    expect(formatCoefficient(-0.456)).toBe('-0.46');
    expect(formatCoefficient(-0.004)).toBe('-0.00');
  });
});

describe('readableSegmentName', () => {
  test('region, channel and customer type by their label, the age band as "aged", other dimensions with their name, joined by a middle dot', () => {
    expect(readableSegmentName({ region: 'Fennwick', channel: 'catalogue mail' })).toBe('Fennwick · catalogue mail');
    expect(readableSegmentName({ age_band: '25-34', newsletter: 'yes' })).toBe('aged 25-34 · newsletter: yes');
    expect(readableSegmentName({ customer_type: 'company', loyalty_tier: 'gold' })).toBe('company · loyalty tier: gold');
  });

  test('an unknown label keeps its dimension, so two unknowns stay apart', () => {
    expect(readableSegmentName({ age_band: 'unknown' })).toBe('age unknown');
    expect(readableSegmentName({ region: 'unknown' })).toBe('region unknown');
    expect(readableSegmentName({ channel: 'unknown', newsletter: 'unknown' })).toBe('channel unknown · newsletter unknown');
  });
});
