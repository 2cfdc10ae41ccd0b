import { describe, expect, test } from 'vitest';
import { binRuleSentence, histogramChart, histogramSpec, type HistogramData } from '../../src/view/charts/histogram.js';
import { intervalChartSpec, intervalRows } from '../../src/view/charts/interval.js';
import { paretoChart, paretoChartSpec, valuesToReachMark } from '../../src/view/charts/pareto.js';
import { correlationSentence, scatterChart, scatterSpec, type ScatterCell } from '../../src/view/charts/scatter.js';
import { trendChart, trendChartSpec, trendPoints } from '../../src/view/charts/trend.js';
import { renderChart } from '../../src/view/render-chart.js';
import { distributionCharts, distributionFallback, readGrid, readHistogram } from '../../src/view/distributions.js';
import type { Snapshot } from '../../src/report/shapes/index.js';
import { knownSnapshot } from '../support/snapshot-fixture.js';
import { markGroup } from './svg-reading.js';

/** A bar drawn as a path "Mx,yh<width>v<height>h<-width>Z": its left edge, width and height. */
function bar(path: { attributes: Record<string, string> }): { left: number; width: number; height: number } {
  const match = /^M([-\d.e]+),([-\d.e]+)h([-\d.e]+)v([-\d.e]+)/.exec(path.attributes['d'] ?? '');
  if (!match) throw new Error(`not a bar: ${path.attributes['d']}`);
  return { left: Number(match[1]), width: Number(match[3]), height: Number(match[4]) };
}

describe('Pareto charts', () => {
  test('the 80 % mark is reached by the first values whose cumulative share gets there', () => {
    const [region, channel] = knownSnapshot().dimensions;
    expect(valuesToReachMark(region as Snapshot['dimensions'][number])).toBe(3);
    expect(valuesToReachMark(channel as Snapshot['dimensions'][number])).toBe(2);
  });

  test('the bars stand in the given descending order with heights in proportion to the shares', async () => {
    const region = knownSnapshot().dimensions[0] as Snapshot['dimensions'][number];
    const figure = await paretoChart(region, 0, 'contacted customers');
    const bars = markGroup(figure.svg, 'shares').map(bar);
    expect(bars).toHaveLength(4);
    const lefts = bars.map((entry) => entry.left);
    expect([...lefts].sort((left, right) => left - right)).toEqual(lefts);
    // Shares 0.4, 0.2, 0.28, 0.12 (the fixture's order is the order drawn).
    const heights = bars.map((entry) => entry.height);
    expect((heights[1] as number) / (heights[0] as number)).toBeCloseTo(0.5, 2);
    expect((heights[3] as number) / (heights[0] as number)).toBeCloseTo(0.3, 2);
    expect(figure.label).toContain('the first 3 of them cover at least 80 % of them');
    expect(figure.data.rows[2]).toEqual(['Eastfen', '280', '28.0%', '88.0%']);
  });
});

describe('the trend chart', () => {
  const first = knownSnapshot();
  const second = knownSnapshot({ snapshot_id: 'snap-2', sequence: 2, created_at: '2026-03-09T06:00:00.000Z' });
  const later = knownSnapshot({ snapshot_id: 'snap-3', sequence: 3, created_at: '2026-03-16T06:00:00.000Z' });

  test('follows the ranked segments of the shown snapshot through the snapshots up to it, oldest first', () => {
    const points = trendPoints(second, [later, second, first]);
    expect([...new Set(points.map((point) => point.sequence))]).toEqual([1, 2]);
    expect(new Set(points.map((point) => point.segment)).size).toBe(4);
    expect(points.find((point) => point.segment === 'channel=catalogue')?.level).toBeCloseTo(24, 9);
  });

  test('a segment missing from an earlier snapshot has no level there', () => {
    const withoutCatalogue = { ...first, segments: first.segments.filter((segment) => segment.segment !== 'channel=catalogue') };
    const points = trendPoints(second, [withoutCatalogue, second]);
    expect(points.find((point) => point.sequence === 1 && point.segment === 'channel=catalogue')?.level).toBeNull();
  });

  test('is left out when there is only one snapshot to show', async () => {
    expect(await trendChart(first, [first, second])).toBeNull();
    const figure = await trendChart(second, [first, second]);
    expect(figure?.data.rows).toHaveLength(2);
    expect(markGroup(figure?.svg ?? '', 'trend_labels').map((label) => label.text).sort()).toEqual(['1', '2', '3', '4']);
  });
});

const AGE_BINS: HistogramData = {
  rule: 'sturges',
  bin_width: 10,
  bins: [
    { low: 20, high: 30, count: 5 },
    { low: 30, high: 40, count: 12 },
    { low: 40, high: 50, count: 8 },
  ],
  note: null,
};

describe('histograms', () => {
  test('the bin rule is stated with the number and width of the bins and the edge convention', () => {
    expect(binRuleSentence(AGE_BINS, 'years', String)).toBe(
      "Bins: Sturges' rule (k = ⌈log₂ n⌉ + 1) gives 3 equal bins of width 10 years from the smallest to the largest value; each bin holds values from its low edge up to but not including its high edge, and the last bin also holds its high edge.",
    );
    expect(binRuleSentence({ ...AGE_BINS, rule: 'freedman-diaconis', note: 'Capped.' }, 'years', String)).toMatch(/^Bins: the Freedman–Diaconis rule .* Capped\.$/);
  });

  test('one bar per bin, each starting where the one before ends, heights in proportion to the counts', async () => {
    const figure = await histogramChart(AGE_BINS, { id: 'age-histogram', name: 'age', unit: 'years', unitsWord: 'customers', format: String, leftOut: '' });
    const bars = markGroup(figure.svg, 'bins').map(bar);
    expect(bars).toHaveLength(3);
    expect(Math.abs((bars[0] as { left: number; width: number }).left + (bars[0] as { width: number }).width - (bars[1] as { left: number }).left)).toBeLessThan(0.01);
    expect((bars[1] as { height: number }).height / (bars[0] as { height: number }).height).toBeCloseTo(12 / 5, 2);
    expect(figure.label).toBe('Histogram of age over 25 customers, from 20 to 50 years, in 3 bins; the fullest bin is 30 to 40 with 12.');
  });
});

const CELLS: ScatterCell[] = [
  { age_low: 20, age_high: 30, value_low: 0, value_high: 10, count: 40 },
  { age_low: 30, age_high: 40, value_low: 0, value_high: 10, count: 0 },
  { age_low: 30, age_high: 40, value_low: 10, value_high: 20, count: 3 },
];

describe('the scatter of age against value', () => {
  test("the caption gives Pearson's r with its interval and test", () => {
    expect(correlationSentence({ n: 950, r: 0.12, ci_low: 0.06, ci_high: 0.18, p_value: 0.0002, note: null }, 0.95)).toBe(
      "Pearson's r = 0.12 (95% CI 0.06 to 0.18, Fisher z), p < 0.001, over 950 units with both an age and a value.",
    );
    expect(correlationSentence({ n: 1, r: null, ci_low: null, ci_high: null, p_value: null, note: 'Too few pairs.' }, 0.95)).toBe('The correlation is not computed: Too few pairs.');
  });

  test('draws one rectangle per occupied cell', async () => {
    const figure = await scatterChart(CELLS, { n: 43, r: 0.3, ci_low: 0, ci_high: 0.55, p_value: 0.05, note: null }, { valueName: 'revenue', unitsWord: 'customers', confidence: 0.95, formatValue: String });
    expect(markGroup(figure.svg, 'cells')).toHaveLength(2);
    expect(figure.data.rows).toHaveLength(2);
  });
});

describe('distribution charts from the snapshot', () => {
  test('a snapshot without binned data gets no charts and a table of its descriptive figures instead', async () => {
    const snapshot = knownSnapshot();
    expect(await distributionCharts(snapshot)).toEqual([]);
    const fallback = distributionFallback(snapshot);
    expect(fallback === '' ? '' : fallback.markup).toContain('the histogram of age, the histogram of value and the scatter of age against value would be drawn from');
  });

  test('a snapshot with bins and a grid gets both histograms and the scatter, and no fallback', async () => {
    const snapshot = knownSnapshot();
    const withBins = { ...snapshot, population: { ...snapshot.population, age_histogram: AGE_BINS, value_histogram: { ...AGE_BINS, rule: 'freedman-diaconis' }, age_value_grid: CELLS } } as Snapshot;
    expect((await distributionCharts(withBins)).map((figure) => figure.id)).toEqual(['age-histogram', 'value-histogram', 'scatter-age-value']);
    expect(distributionFallback(withBins)).toBe('');
  });

  test('malformed bins or grid cells are not drawn', () => {
    expect(readHistogram({ age_histogram: { rule: 'sturges', bin_width: 1, bins: [{ low: 0, high: 1, count: 'x' }] } }, 'age_histogram')).toBeNull();
    expect(readHistogram({ age_histogram: { rule: 'sturges', bin_width: 1, bins: [] } }, 'age_histogram')).toBeNull();
    expect(readGrid({ age_value_grid: [{ age_low: 1 }] })).toBeNull();
    expect(readGrid({})).toBeNull();
  });
});

describe('chart specifications', () => {
  test('every chart compiles and draws without a warning from the charting libraries', async () => {
    const snapshot = knownSnapshot();
    const later = knownSnapshot({ snapshot_id: 'snap-2', sequence: 2, created_at: '2026-03-09T06:00:00.000Z' });
    const specs = [
      intervalChartSpec(intervalRows(snapshot), 'difference'),
      paretoChartSpec(snapshot.dimensions[0] as Snapshot['dimensions'][number], 'contacted customers'),
      trendChartSpec(trendPoints(later, [snapshot, later]), 'conversion rate (%)'),
      histogramSpec(AGE_BINS, { id: 'age-histogram', name: 'age', unit: 'years', unitsWord: 'customers', format: String, leftOut: '' }),
      scatterSpec(CELLS, { valueName: 'revenue', unitsWord: 'customers', confidence: 0.95, formatValue: String }),
    ];
    for (const spec of specs) {
      const warnings: string[] = [];
      await renderChart(spec, warnings);
      expect(warnings).toEqual([]);
    }
  });
});
