import { describe, expect, test } from 'vitest';
import { positiveLogSummaries } from '../../src/report/analysis/index.js';
import { cellStats } from '../../src/segments/rollup.js';
import { ZERO_SHIFTS, block, cellsFromUnits, countsFromUnits } from './cells.js';

describe('log summaries of positive values for the two-part test', () => {
  // Invented units: every converted unit spends the same 10.00, so every log is equal.
  const units = [...block(['A'], 50, 5, 1000), ...block(['B'], 60, 6, 1000)].map((unit) => ({ ...unit, cents: unit.converted === 1 ? 1000 : 0 }));
  const cells = cellsFromUnits(units).map((cell) => ({ labels: cell.labels, stats: cellStats(cell, ZERO_SHIFTS) }));
  const { valueCounts } = countsFromUnits(units);

  test('equal values give a zero spread for the segment and its rest, not an error', () => {
    const logs = positiveLogSummaries({ dimensions: ['region'], cells, valueCounts, basis: 'per_unit' });
    const segment = logs.summary(logs.of({ dimensions: ['region'], labels: ['A'] }));
    const rest = logs.summary(logs.without(logs.total, logs.of({ dimensions: ['region'], labels: ['A'] })));
    expect(segment?.n).toBe(5);
    expect(segment?.mean).toBeCloseTo(Math.log(1000), 12);
    expect(segment?.sumSquaredDeviations).toBe(0);
    expect(rest?.n).toBe(6);
    expect(rest?.sumSquaredDeviations).toBe(0);
  });

  test('a group whose cells were not read, or population counts that do not contain it, are unknown', () => {
    const onlyA = valueCounts.filter((entry) => entry.labels[0] === 'A');
    const logs = positiveLogSummaries({ dimensions: ['region'], cells, valueCounts: onlyA, populationValueCounts: [{ valueCents: 1000, count: 3 }], basis: 'per_unit' });
    expect(logs.of({ dimensions: ['region'], labels: ['B'] })).toBeNull();
    expect(logs.without(logs.total, logs.of({ dimensions: ['region'], labels: ['A'] }))).toBeNull();
  });
});
