import { describe, expect, test } from 'vitest';
import { estimateTextWidth, measureTextItem } from '../../src/view/text-width.js';

describe('text widths for chart layout', () => {
  test('the width is the sum of the characters, scaled by the font size', () => {
    // DejaVu Sans advances (from memory): "i" 0.278 em, "m" 0.974 em.
    expect(estimateTextWidth('i', 10)).toBeCloseTo(2.78, 6);
    expect(estimateTextWidth('mm', 10)).toBeCloseTo(19.48, 6);
    expect(estimateTextWidth('mm', 20)).toBeCloseTo(38.96, 6);
  });

  test('narrow letters measure less than wide ones of the same count', () => {
    expect(estimateTextWidth('illi', 11)).toBeLessThan(estimateTextWidth('mWmW', 11));
  });

  test('a typical segment label is well under the 0.8 em per character of a blind guess', () => {
    const label = 'age_band=25-34 & channel=catalogue mail';
    expect(estimateTextWidth(label, 11)).toBeLessThan(0.8 * label.length * 11 * 0.8);
  });

  test('bold text measures wider, and an empty text measures nothing', () => {
    expect(estimateTextWidth('Verdict', 11, true)).toBeGreaterThan(estimateTextWidth('Verdict', 11));
    expect(estimateTextWidth('', 11)).toBe(0);
  });

  test('a scene item without a font size is measured at the library default of 11 pixels', () => {
    expect(measureTextItem({}, 'abc')).toBeCloseTo(estimateTextWidth('abc', 11), 9);
    expect(measureTextItem({ fontSize: 14, fontWeight: 'bold' }, ' abc ')).toBeCloseTo(estimateTextWidth('abc', 14, true), 9);
    expect(measureTextItem({ fontSize: 11 }, null)).toBe(0);
  });
});
