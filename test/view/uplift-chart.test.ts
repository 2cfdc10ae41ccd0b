import { beforeAll, describe, expect, test } from 'vitest';
import { MAX_UPLIFT_ROWS, chartedUpliftRows, hasHoldout, upliftCharts, upliftRows, type UpliftRow } from '../../src/view/charts/uplift.js';
import type { ChartFigure } from '../../src/view/figure.js';
import type { Snapshot, SnapshotSegment } from '../../src/report/shapes/index.js';
import { reportCharts } from '../../src/view/page.js';
import { HOSTILE_SCRIPT, knownSnapshot } from '../support/snapshot-fixture.js';
import { horizontalScale, markGroup } from './svg-reading.js';

const PIXEL = 1;

/** Invented holdout figures per segment (by the segment's position): uplift and profit with intervals, and the advice they imply. */
const HOLDOUT: ReadonlyArray<{ uplift: [number, number, number]; profit: [number, number, number]; advice: 'contact' | 'hold_back' | 'undecided' }> = [
  { uplift: [0.08, 0.04, 0.12], profit: [1.2, 0.4, 2.0], advice: 'contact' },
  { uplift: [0.01, -0.03, 0.05], profit: [-0.3, -1.1, 0.5], advice: 'undecided' },
  { uplift: [0.0, -0.02, 0.02], profit: [-0.9, -1.4, -0.4], advice: 'hold_back' },
  { uplift: [-0.01, -0.04, 0.02], profit: [-1.1, -1.8, -0.4], advice: 'hold_back' },
];

function holdoutSnapshot(withEconomics: boolean): Snapshot {
  const base = knownSnapshot();
  const segments = base.segments.map((segment, index): SnapshotSegment => {
    const figures = HOLDOUT[index];
    if (!figures) return segment;
    return {
      ...segment,
      holdout_n: 100,
      uplift: figures.uplift[0],
      uplift_ci_low: figures.uplift[1],
      uplift_ci_high: figures.uplift[2],
      incremental_profit_per_contact: withEconomics ? figures.profit[0] : null,
      incremental_profit_ci_low: withEconomics ? figures.profit[1] : null,
      incremental_profit_ci_high: withEconomics ? figures.profit[2] : null,
      advice: figures.advice,
    };
  });
  return { ...base, segments, definition: { ...base.definition, economics: withEconomics ? { margin: 0.4, cost_per_contact: 1.5 } : null } };
}

describe('the holdout charts', () => {
  let figures: ChartFigure[];

  beforeAll(async () => {
    figures = await upliftCharts(holdoutSnapshot(true));
  });

  test('a report without holdout customers gets none; with them, an uplift chart, and a profit chart only with economics', async () => {
    expect(hasHoldout(knownSnapshot())).toBe(false);
    expect(await upliftCharts(knownSnapshot())).toEqual([]);
    expect(figures.map((figure) => figure.id)).toEqual(['uplift-chart', 'profit-chart']);
    expect((await upliftCharts(holdoutSnapshot(false))).map((figure) => figure.id)).toEqual(['uplift-chart']);
    expect((await reportCharts(holdoutSnapshot(true), [])).map((figure) => figure.id)).toContain('profit-chart');
  });

  test('each uplift interval runs from its lower to its upper bound in percentage points, and the dashed line sits at zero', () => {
    const figure = figures[0] as ChartFigure;
    const toX = horizontalScale(figure.svg);
    const lines = markGroup(figure.svg, 'interval_ranges').filter((element) => element.tag === 'line').sort((left, right) => left.y - right.y);
    expect(lines).toHaveLength(HOLDOUT.length);
    lines.forEach((line, index) => {
      const [, low, high] = (HOLDOUT[index] as (typeof HOLDOUT)[number]).uplift;
      expect(Math.abs(line.x - toX(low * 100))).toBeLessThan(PIXEL);
      expect(Math.abs(line.x + Number(line.attributes['x2']) - toX(high * 100))).toBeLessThan(PIXEL);
    });
    const zero = markGroup(figure.svg, 'reference_line').find((element) => element.tag === 'line');
    expect(zero).toBeDefined();
    expect(Math.abs((zero?.x ?? Number.NaN) - toX(0))).toBeLessThan(PIXEL);
  });

  test('the profit chart draws money against the break-even line, and the advice word stands beside each row', () => {
    const figure = figures[1] as ChartFigure;
    const toX = horizontalScale(figure.svg);
    const lines = markGroup(figure.svg, 'interval_ranges').filter((element) => element.tag === 'line').sort((left, right) => left.y - right.y);
    lines.forEach((line, index) => expect(Math.abs(line.x - toX((HOLDOUT[index] as (typeof HOLDOUT)[number]).profit[1]))).toBeLessThan(PIXEL));
    const words = markGroup(figure.svg, 'advice_labels').sort((left, right) => left.y - right.y).map((element) => element.text);
    expect(words).toEqual(['contact', 'undecided', 'hold back', 'hold back']);
    expect(figure.label).toContain('break-even');
    expect(figure.label).toContain('1 contact, 1 undecided, 2 hold back');
    expect(figure.data.rows[0]).toEqual([expect.any(String), '1.20', '0.40', '2.00', 'contact']);
  });

  test('segment names stay data: hostile labels are escaped text, never markup', () => {
    expect(upliftRows(holdoutSnapshot(true), 'uplift').map((row) => row.name)).toContain(HOSTILE_SCRIPT);
    for (const figure of figures) expect(figure.svg).not.toContain(HOSTILE_SCRIPT);
  });
});

describe('a holdout chart with many segments', () => {
  test('draws at most MAX_UPLIFT_ROWS rows, keeping every firmly advised segment, in rank order', () => {
    const rows: UpliftRow[] = Array.from({ length: 40 }, (_, index) => ({
      segment: `region=R${index}`,
      name: `R${index}`,
      advice: index % 10 === 9 ? ('hold_back' as const) : index % 7 === 0 ? ('contact' as const) : ('undecided' as const),
      estimate: 0,
      low: -1,
      high: 1,
    }));
    const drawn = chartedUpliftRows(rows);
    expect(drawn).toHaveLength(MAX_UPLIFT_ROWS);
    const firm = rows.filter((row) => row.advice !== 'undecided');
    for (const row of firm) expect(drawn).toContain(row);
    expect(drawn.map((row) => rows.indexOf(row))).toEqual([...drawn.map((row) => rows.indexOf(row))].sort((left, right) => left - right));
  });
});
