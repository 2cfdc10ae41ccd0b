import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { StatsInputError, adjustPValues } from '../../src/stats/index.js';
import type { AdjustmentMethod } from '../../src/stats/index.js';

function expectAllClose(actual: Array<number | null>, expected: Array<number | null>): void {
  expect(actual).toHaveLength(expected.length);
  expected.forEach((value, index) => {
    if (value === null) expect(actual[index]).toBeNull();
    else expect(actual[index]).toBeCloseTo(value, 14);
  });
}

// R 4.2.2: p <- c(0.01, 0.04, 0.03, 0.005, 0.2, 0.04, 0.9, 0.0001); options(digits = 15)
const rawPValues = [0.01, 0.04, 0.03, 0.005, 0.2, 0.04, 0.9, 0.0001];

describe('adjustPValues', () => {
  it('matches R p.adjust(p, "BH") (Benjamini & Hochberg 1995)', () => {
    // → 0.0266666666666667 0.0533333333333333 0.0533333333333333 0.02 0.2285714285714286 0.0533333333333333 0.9 0.0008
    expectAllClose(adjustPValues(rawPValues, 'bh'), [
      0.0266666666666667, 0.0533333333333333, 0.0533333333333333, 0.02, 0.2285714285714286, 0.0533333333333333, 0.9, 0.0008,
    ]);
  });

  it('matches R p.adjust(p, "holm") (Holm 1979)', () => {
    // → 0.0600 0.1600 0.1500 0.0350 0.4000 0.1600 0.9000 0.0008
    expectAllClose(adjustPValues(rawPValues, 'holm'), [0.06, 0.16, 0.15, 0.035, 0.4, 0.16, 0.9, 0.0008]);
  });

  it('matches R p.adjust(p, "bonferroni"), capped at 1', () => {
    // → 0.0800 0.3200 0.2400 0.0400 1.0000 0.3200 1.0000 0.0008
    expectAllClose(adjustPValues(rawPValues, 'bonferroni'), [0.08, 0.32, 0.24, 0.04, 1, 0.32, 1, 0.0008]);
  });

  it('returns the raw p-values for method none', () => {
    expect(adjustPValues(rawPValues, 'none')).toEqual(rawPValues);
  });

  it('passes untested (null) entries through and leaves them out of the family size, as R does with NA', () => {
    // R: p <- c(0.02, NA, 0.01, 0.04, NA, 0.03)
    //   p.adjust(p, "BH")         → 0.04 NA 0.04 0.04 NA 0.04
    //   p.adjust(p, "holm")       → 0.06 NA 0.04 0.06 NA 0.06
    //   p.adjust(p, "bonferroni") → 0.08 NA 0.04 0.16 NA 0.12
    const withGaps = [0.02, null, 0.01, 0.04, null, 0.03];
    expectAllClose(adjustPValues(withGaps, 'bh'), [0.04, null, 0.04, 0.04, null, 0.04]);
    expectAllClose(adjustPValues(withGaps, 'holm'), [0.06, null, 0.04, 0.06, null, 0.06]);
    expectAllClose(adjustPValues(withGaps, 'bonferroni'), [0.08, null, 0.04, 0.16, null, 0.12]);
  });

  it('gives tied p-values the same adjusted value, as R does', () => {
    // R: q <- c(0.01, 0.01, 0.02, 0.5, 0.5)
    //   p.adjust(q, "BH")   → 0.025 0.025 0.0333333333333333 0.5 0.5
    //   p.adjust(q, "holm") → 0.05 0.05 0.06 1.00 1.00
    const tied = [0.01, 0.01, 0.02, 0.5, 0.5];
    expectAllClose(adjustPValues(tied, 'bh'), [0.025, 0.025, 0.0333333333333333, 0.5, 0.5]);
    expectAllClose(adjustPValues(tied, 'holm'), [0.05, 0.05, 0.06, 1, 1]);
  });

  it('never rounds a BH-adjusted value below its raw p-value (m·p/m < p in binary64)', () => {
    // In binary64, (3 × 0.9448488424100716) / 3 < 0.9448488424100716; R computes (m/i)·p instead.
    const largest = 0.9448488424100716;
    expect((3 * largest) / 3).toBeLessThan(largest);
    expect(adjustPValues([0.1, 0.2, largest], 'bh')[2]).toBe(largest);
  });

  it('returns an empty list for an empty family and nulls for a family of untested entries', () => {
    expect(adjustPValues([], 'bh')).toEqual([]);
    expect(adjustPValues([null, null], 'holm')).toEqual([null, null]);
  });

  it('gives adjusted values ≥ raw, ≤ 1 and in the same order as the raw values', () => {
    const methods: AdjustmentMethod[] = ['bh', 'holm', 'bonferroni', 'none'];
    fc.assert(
      fc.property(
        fc.array(fc.option(fc.double({ min: 0, max: 1, noNaN: true }), { nil: null }), { maxLength: 40 }),
        fc.constantFrom(...methods),
        (pValues, method) => {
          const adjusted = adjustPValues(pValues, method);
          const pairs: Array<[number, number]> = [];
          pValues.forEach((raw, index) => {
            const value = adjusted[index];
            if (raw === null) {
              expect(value).toBeNull();
              return;
            }
            if (value === null || value === undefined) throw new Error('a tested p-value lost its adjustment');
            expect(value).toBeGreaterThanOrEqual(raw);
            expect(value).toBeLessThanOrEqual(1);
            pairs.push([raw, value]);
          });
          pairs.sort((left, right) => left[0] - right[0]);
          for (let index = 1; index < pairs.length; index += 1) {
            expect((pairs[index] as [number, number])[1]).toBeGreaterThanOrEqual((pairs[index - 1] as [number, number])[1]);
          }
        },
      ),
      { numRuns: 300 },
    );
  });

  it('makes Holm at least as strict as BH and no stricter than Bonferroni', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: 1, maxLength: 30 }), (pValues) => {
        const bh = adjustPValues(pValues, 'bh');
        const holm = adjustPValues(pValues, 'holm');
        const bonferroni = adjustPValues(pValues, 'bonferroni');
        pValues.forEach((_, index) => {
          expect(holm[index] as number).toBeGreaterThanOrEqual((bh[index] as number) - 1e-15);
          expect(holm[index] as number).toBeLessThanOrEqual((bonferroni[index] as number) + 1e-15);
        });
      }),
      { numRuns: 200 },
    );
  });

  it('throws StatsInputError for a p-value outside [0, 1] naming its position', () => {
    expect(() => adjustPValues([0.2, 1.5], 'bh')).toThrow(StatsInputError);
    expect(() => adjustPValues([0.2, 1.5], 'bh')).toThrow(/pValues\[1\] must be between 0 and 1 inclusive, got 1.5/);
    expect(() => adjustPValues([Number.NaN], 'holm')).toThrow(/pValues\[0\]/);
  });

  it('throws StatsInputError for an unknown method', () => {
    expect(() => adjustPValues([0.2], 'fdr' as AdjustmentMethod)).toThrow(/method must be 'bh', 'holm', 'bonferroni' or 'none'/);
  });
});
