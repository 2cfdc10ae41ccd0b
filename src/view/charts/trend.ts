/**
 * The trend chart: the ranking metric of the top segments of the shown snapshot across the
 * report's snapshots up to it. Each segment has its own dash pattern and point shape as well as
 * its own shade, so the lines stay apart in greyscale.
 */
import type { TopLevelSpec } from 'vega-lite';
import type { Snapshot } from '../../report/shapes/index.js';
import type { ChartFigure } from '../figure.js';
import { html } from '../html.js';
import { rankingMetric } from '../metric.js';
import { renderChart } from '../render-chart.js';
import { niceScale } from './scale.js';

/** How many of the top segments the trend follows. */
const TREND_SEGMENTS = 5;
/** How many snapshots, up to the shown one, the trend covers at most. */
export const TREND_SNAPSHOTS = 12;

const SHAPES = ['circle', 'square', 'triangle-up', 'diamond', 'triangle-down'];
const DASHES = [[1, 0], [6, 3], [2, 2], [8, 3, 2, 3], [3, 5]];
const COLOURS = ['#000000', '#0072B2', '#D55E00', '#009E73', '#CC79A7'];

export interface TrendPoint {
  sequence: number;
  snapshot: string;
  segment: string;
  /** the ranking metric's level, in drawn units (percent or money); null when the segment was not in that snapshot */
  level: number | null;
}

/**
 * The points of the trend: for each of the top segments of `shown`, its level in each snapshot
 * (oldest first). Snapshots after `shown` are ignored.
 * @example
 * trendPoints(shown, [first, second, shown]).length; // 5 segments × 3 snapshots = 15
 */
export function trendPoints(shown: Snapshot, history: readonly Snapshot[]): TrendPoint[] {
  const metric = rankingMetric(shown.definition);
  const top = shown.segments
    .filter((segment) => segment.rank !== null)
    .sort((left, right) => (left.rank as number) - (right.rank as number))
    .slice(0, TREND_SEGMENTS)
    .map((segment) => segment.segment);
  const snapshots = history
    .filter((snapshot) => snapshot.sequence <= shown.sequence)
    .sort((left, right) => left.sequence - right.sequence)
    .slice(-TREND_SNAPSHOTS);
  return snapshots.flatMap((snapshot) => {
    const bySegment = new Map(snapshot.segments.map((segment) => [segment.segment, segment]));
    return top.map((name) => {
      const segment = bySegment.get(name);
      const level = segment ? metric.levelOf(segment).estimate : null;
      return { sequence: snapshot.sequence, snapshot: `#${snapshot.sequence} ${snapshot.created_at.slice(0, 10)}`, segment: name, level: level === null ? null : level * metric.drawnScale };
    });
  });
}

export function trendChartSpec(points: readonly TrendPoint[], axisTitle: string): TopLevelSpec {
  const segments = [...new Set(points.map((point) => point.segment))];
  const scale = niceScale(
    points.flatMap((point) => (point.level === null ? [] : [point.level])),
    0,
    5,
  );
  const legend = { title: 'Segment, by rank in the shown snapshot', orient: 'bottom', direction: 'vertical', labelLimit: 420, titleLimit: 420, symbolSize: 70, symbolStrokeWidth: 1.5 } as const;
  const series = { field: 'segment_label', type: 'nominal', scale: { domain: segments.map((segment, index) => `${index + 1}. ${segment}`) } } as const;
  const lastSequence = Math.max(...points.map((point) => point.sequence));
  const values = points.map((point) => ({ ...point, segment_label: `${segments.indexOf(point.segment) + 1}. ${point.segment}`, rank_text: String(segments.indexOf(point.segment) + 1), is_last: point.sequence === lastSequence }));
  return {
    width: 560,
    height: 220,
    data: { values },
    encoding: {
      x: { field: 'snapshot', type: 'ordinal', sort: { field: 'sequence' }, axis: { title: 'snapshot', labelAngle: 0 } },
      y: { field: 'level', type: 'quantitative', scale: { domain: scale.domain, nice: false }, axis: { title: axisTitle, values: scale.ticks } },
      color: { ...series, scale: { ...series.scale, range: COLOURS.slice(0, segments.length) }, legend },
    },
    layer: [
      { name: 'trend_lines', mark: { type: 'line', strokeWidth: 1.6 }, encoding: { strokeDash: { ...series, scale: { ...series.scale, range: DASHES.slice(0, segments.length) }, legend } } },
      { name: 'trend_points', mark: { type: 'point', filled: true, size: 50, opacity: 1 }, encoding: { shape: { ...series, scale: { ...series.scale, range: SHAPES.slice(0, segments.length) }, legend } } },
      // Each line ends in its rank number, so it can be told apart without colour or legend.
      {
        name: 'trend_labels',
        transform: [{ filter: 'datum.is_last && datum.level !== null' }],
        mark: { type: 'text', align: 'left', dx: 8, fontSize: 11, fontWeight: 'bold' },
        encoding: { text: { field: 'rank_text' } },
      },
    ],
  } as TopLevelSpec;
}

/**
 * The trend figure, or null when there is only one snapshot to show.
 * @example
 * const figure = await trendChart(shown, history); // null for a report's first snapshot
 */
export async function trendChart(shown: Snapshot, history: readonly Snapshot[]): Promise<ChartFigure | null> {
  const points = trendPoints(shown, history);
  const sequences = [...new Set(points.map((point) => point.sequence))];
  if (sequences.length < 2) return null;
  const metric = rankingMetric(shown.definition);
  const unit = metric.drawnScale === 100 ? '%' : 'currency units';
  const segments = [...new Set(points.map((point) => point.segment))];
  const level = (value: number | null) => (value === null ? 'not in this snapshot' : metric.level(value / metric.drawnScale));
  return {
    id: 'trend-chart',
    heading: `Trend of the top ${segments.length} segments`,
    svg: await renderChart(trendChartSpec(points, `${metric.name} (${unit})`)),
    wide: true,
    label: `Line chart of the ${metric.name} of the top ${segments.length} segments across ${sequences.length} snapshots, from #${sequences[0]} to #${sequences[sequences.length - 1]}.`,
    caption: html`The ${metric.name} of each of the top ${segments.length} segments of this snapshot, in each of the last ${sequences.length} snapshots up to it. Each segment has its own line pattern and point shape. A segment missing from a snapshot leaves a gap.`,
    data: {
      columns: ['snapshot', ...segments],
      rows: sequences.map((sequence) => {
        const row = points.filter((point) => point.sequence === sequence);
        return [row[0]?.snapshot ?? `#${sequence}`, ...segments.map((segment) => level(row.find((point) => point.segment === segment)?.level ?? null))];
      }),
    },
  };
}
