import { beforeAll, describe, expect, test } from 'vitest';
import { MAX_INTERVAL_ROWS, chartedRows, intervalChart, intervalRows, type IntervalRow } from '../../src/view/charts/interval.js';
import type { ChartFigure } from '../../src/view/figure.js';
import type { SnapshotSegment } from '../../src/report/shapes/index.js';
import { escapeHtml } from '../../src/view/html.js';
import { HOSTILE_IMAGE, HOSTILE_SCRIPT, TESTED, knownSnapshot } from '../support/snapshot-fixture.js';
import { axisLabelGroups, horizontalScale, labelValue, markGroup } from './svg-reading.js';

// Positions are compared to within a pixel: the library rounds some coordinates for crisp lines.
const PIXEL = 1;

describe('the interval chart of a small known snapshot', () => {
  let figure: ChartFigure;
  let toX: (value: number) => number;

  beforeAll(async () => {
    figure = await intervalChart(knownSnapshot());
    toX = horizontalScale(figure.svg);
  });

  test('it has one row per tested segment, in rank order, and leaves out the segment too small to test', () => {
    const rows = intervalRows(knownSnapshot());
    expect(rows.map((row) => row.rank)).toEqual([1, 2, 3, 4]);
    expect(rows.map((row) => row.segment)).toEqual(TESTED.map((figures) => `${figures.dimension}=${figures.value}`));
    expect(figure.svg).not.toContain('kiosk');
  });

  test('there is one interval line and one estimate mark per tested segment', () => {
    expect(markGroup(figure.svg, 'interval_ranges').filter((element) => element.tag === 'line')).toHaveLength(TESTED.length);
    expect(markGroup(figure.svg, 'estimates').filter((element) => element.tag === 'path')).toHaveLength(TESTED.length);
  });

  test('each interval starts at its lower bound and ends at its upper bound, in percentage points', () => {
    const lines = markGroup(figure.svg, 'interval_ranges').sort((left, right) => left.y - right.y);
    lines.forEach((line, index) => {
      const [, low, high] = TESTED[index]?.difference as [number, number, number];
      const start = line.x;
      const end = line.x + Number(line.attributes['x2']);
      expect(Math.abs(start - toX(low * 100))).toBeLessThan(PIXEL);
      expect(Math.abs(end - toX(high * 100))).toBeLessThan(PIXEL);
    });
  });

  test('each estimate sits at its difference, and rows go down in rank order', () => {
    const marks = markGroup(figure.svg, 'estimates');
    const byRow = [...marks].sort((left, right) => left.y - right.y);
    byRow.forEach((mark, index) => {
      const [difference] = TESTED[index]?.difference as [number, number, number];
      expect(Math.abs(mark.x - toX(difference * 100))).toBeLessThan(PIXEL);
    });
  });

  test('the dashed zero line is at zero', () => {
    const [zero] = markGroup(figure.svg, 'zero_line');
    expect(zero).toBeDefined();
    expect(Math.abs((zero?.x ?? Number.NaN) - toX(0))).toBeLessThan(PIXEL);
    expect(zero?.attributes['stroke-dasharray']).toBeDefined();
  });

  test('the axis ticks fall on one straight scale that includes zero', () => {
    const numeric = axisLabelGroups(figure.svg).filter((labels) => labels.length >= 2 && labels.every((label) => Number.isFinite(labelValue(label.text))));
    expect(numeric.length).toBeGreaterThanOrEqual(1);
    for (const labels of numeric) {
      expect(labels.map((label) => labelValue(label.text))).toContain(0);
      for (const label of labels) expect(Math.abs(label.x - toX(labelValue(label.text)))).toBeLessThan(PIXEL);
    }
  });

  test('each verdict has its own shape, and its word and the n stand beside the row', () => {
    const shapes = markGroup(figure.svg, 'estimates').map((mark) => mark.attributes['d']);
    expect(new Set(shapes).size).toBe(4);
    const words = markGroup(figure.svg, 'verdict_labels').sort((left, right) => left.y - right.y).map((text) => text.text);
    expect(words).toEqual(['better than the rest', 'inconclusive', 'equivalent to the rest (within the margin)', 'worse than the rest']);
    const counts = markGroup(figure.svg, 'counts').sort((left, right) => left.y - right.y).map((text) => text.text);
    expect(counts).toEqual(['250', '120', '400', '200']);
  });

  test('segment names that contain markup are drawn as escaped text', () => {
    expect(figure.svg).not.toContain('<script');
    expect(figure.svg).not.toContain('<img');
    const labels = axisLabelGroups(figure.svg).flat().map((label) => label.text);
    // Rows are named as people say them: a region by its label alone.
    expect(labels).toContain(escapeHtml(HOSTILE_SCRIPT).replace(/&quot;/g, '"').replace(/&#39;/g, "'"));
    expect(labels).toContain(escapeHtml(HOSTILE_IMAGE).replace(/&quot;/g, '"').replace(/&#39;/g, "'"));
    expect(labels).toContain('catalogue');
  });

  test('the text alternative names the chart, the verdict counts and the first segment', () => {
    expect(figure.label).toMatch(/^Interval chart of the difference in conversion rate between each of 4 tested segments and the rest/);
    expect(figure.label).toContain('1 better than the rest, 1 worse than the rest, 1 equivalent to the rest (within the margin), 1 inconclusive');
    expect(figure.label).toContain('First in rank: catalogue, +12.0 points (95% CI +7.0 points to +17.0 points)');
    expect(figure.data.rows).toHaveLength(4);
    expect(figure.data.rows[0]).toEqual(['1', 'catalogue', '250', '+12.0 points', '+7.0 points', '+17.0 points', '0.040', 'better than the rest']);
  });
});

describe('the interval chart of a report ranked by value', () => {
  test('draws the value difference in money with its interval', async () => {
    const snapshot = knownSnapshot({ definition: { ...knownSnapshot().definition, rank_by: 'value' } });
    const figure = await intervalChart(snapshot);
    const toX = horizontalScale(figure.svg);
    const lines = markGroup(figure.svg, 'interval_ranges');
    expect(lines).toHaveLength(4);
    // Every fixture segment has value_diff 0.5 with interval -0.5 to 1.5.
    for (const line of lines) {
      expect(Math.abs(line.x - toX(-0.5))).toBeLessThan(PIXEL);
      expect(Math.abs(line.x + Number(line.attributes['x2']) - toX(1.5))).toBeLessThan(PIXEL);
    }
    expect(figure.heading).toBe('Difference from the rest, revenue per contacted customer');
  });
});

describe('which rows the interval chart draws when there are many', () => {
  const rowsOf = (verdicts: readonly IntervalRow['verdict'][]): IntervalRow[] =>
    verdicts.map((verdict, index) => ({ rank: index + 1, segment: `s${index + 1}`, name: `s${index + 1}`, n: 100, verdict, estimate: 0, low: -1, high: 1 }));

  test('all of them when they fit', () => {
    const rows = rowsOf(Array.from({ length: MAX_INTERVAL_ROWS }, () => 'inconclusive'));
    expect(chartedRows(rows)).toEqual(rows);
  });

  test('every better and worse segment, wherever it ranks, then the best-ranked others, in rank order', () => {
    // 40 segments: better at ranks 1-3, worse at ranks 20 and 40 (a large segment with a narrow interval can rank mid-table)
    const verdicts = Array.from({ length: 40 }, (_, index): IntervalRow['verdict'] => (index < 3 ? 'better' : index === 19 || index === 39 ? 'worse' : 'inconclusive'));
    const charted = chartedRows(rowsOf(verdicts));
    expect(charted).toHaveLength(MAX_INTERVAL_ROWS);
    // the 5 decided ones (1, 2, 3, 20, 40) and the 19 best-ranked others (4-19, 21-23)
    expect(charted.map((row) => row.rank)).toEqual([...Array.from({ length: 23 }, (_, index) => index + 1), 40]);
    expect(charted.filter((row) => row.verdict === 'worse').map((row) => row.rank)).toEqual([20, 40]);
  });

  test('the first and last half of the decided ones when even those are too many', () => {
    const charted = chartedRows(rowsOf(Array.from({ length: 50 }, (_, index) => (index % 2 === 0 ? 'better' : 'worse'))));
    expect(charted.map((row) => row.rank)).toEqual([...Array.from({ length: 12 }, (_, index) => index + 1), ...Array.from({ length: 12 }, (_, index) => 39 + index)]);
  });
});

describe('interval chart row names', () => {
  test('segments that read alike keep their machine label beside the name', () => {
    const base = knownSnapshot();
    const [first, second] = base.segments as [SnapshotSegment, SnapshotSegment];
    const snapshot = {
      ...base,
      segments: [
        { ...first, segment: 'region=Hollow', dimensions: 'region', values: { region: 'Hollow' } },
        { ...second, segment: 'channel=Hollow', dimensions: 'channel', values: { channel: 'Hollow' } },
        ...base.segments.slice(2),
      ],
    };
    expect(intervalRows(snapshot).slice(0, 2).map((row) => row.name)).toEqual(['Hollow (region=Hollow)', 'Hollow (channel=Hollow)']);
  });
});
