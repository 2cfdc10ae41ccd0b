/**
 * The interval chart: one row per tested segment in rank order, its difference from the rest
 * of the population with the confidence interval, a dashed zero line, the verdict as shape,
 * word and colour, and the segment's n beside it.
 */
import type { TopLevelSpec } from 'vega-lite';
import { formatCount, formatPValue, formatRank, readableSegmentName } from '../../report/wording/index.js';
import { isPublished, type PublishedSegment, type Snapshot, type SnapshotSegment, type Verdict } from '../../report/shapes/index.js';
import type { ChartFigure } from '../figure.js';
import { html } from '../html.js';
import { confidenceLabel, rankingMetric } from '../metric.js';
import { renderChart } from '../render-chart.js';
import { TESTED_VERDICTS, VERDICT_STYLES } from '../verdicts.js';
import { niceScale, type NiceScale } from './scale.js';
import { verdictMetric } from '../../report/definition/index.js';

/** Width of the plotting area in pixels; the labels and the n and verdict columns come on top. */
const INTERVAL_PLOT_WIDTH = 420;
/** Height of one segment's row in pixels. */
const INTERVAL_ROW_STEP = 18;
/** Where the n column ends and the verdict column starts, in pixels from the plot's left edge. */
const COUNT_COLUMN_END = INTERVAL_PLOT_WIDTH + 78;
const VERDICT_COLUMN_START = INTERVAL_PLOT_WIDTH + 88;

/**
 * Most rows the chart draws. With more tested segments it draws those that do better or worse
 * than the rest (where the decisions are) and fills up with the best-ranked others; the table
 * below holds every segment, so the charts stay on the first screens of the page.
 */
export const MAX_INTERVAL_ROWS = 24;

const isDecided = (row: IntervalRow) => row.verdict === 'better' || row.verdict === 'worse';

/**
 * The rows the chart draws, in rank order: all of them when they fit; otherwise every better
 * or worse segment and the best-ranked others up to MAX_INTERVAL_ROWS (or, when even the
 * decided ones are too many, the first and last half of those).
 * @example
 * chartedRows(rows).length; // 24 for the demo's 132 tested segments
 */
export function chartedRows(rows: readonly IntervalRow[]): IntervalRow[] {
  if (rows.length <= MAX_INTERVAL_ROWS) return [...rows];
  const decided = rows.filter(isDecided);
  if (decided.length >= MAX_INTERVAL_ROWS) {
    const half = MAX_INTERVAL_ROWS / 2;
    return [...decided.slice(0, half), ...decided.slice(decided.length - half)];
  }
  const chosen = new Set([...decided, ...rows.filter((row) => !isDecided(row)).slice(0, MAX_INTERVAL_ROWS - decided.length)]);
  return rows.filter((row) => chosen.has(row));
}

export interface IntervalRow {
  rank: number;
  /** the machine label, `dimension=label & …` */
  segment: string;
  /** the segment as people say it ("Fennwick · catalogue mail"), unique within the chart */
  name: string;
  n: number;
  verdict: Verdict;
  /** the difference from the rest and its interval, in drawn units (percentage points or money) */
  estimate: number | null;
  low: number | null;
  high: number | null;
}

/**
 * The rows of the chart: tested segments in rank order with the ranking metric's difference.
 * @example
 * intervalRows(snapshot)[0]; // { rank: 1, segment: 'channel=catalogue mail', n: 480, verdict: 'better', estimate: 9.8, low: 6.9, high: 12.9 }
 */
export function intervalRows(snapshot: Snapshot): IntervalRow[] {
  const metric = rankingMetric(snapshot.definition);
  const drawn = (value: number | null) => (value === null ? null : value * metric.drawnScale);
  // Two segments may read alike (a region and a channel with the same label): those keep their machine label beside the name.
  const nameCounts = new Map<string, number>();
  for (const segment of snapshot.segments) nameCounts.set(readableSegmentName(segment.values), (nameCounts.get(readableSegmentName(segment.values)) ?? 0) + 1);
  const nameOf = (segment: SnapshotSegment) => {
    const name = readableSegmentName(segment.values);
    return (nameCounts.get(name) ?? 0) > 1 ? `${name} (${segment.segment})` : name;
  };
  return snapshot.segments
    .filter((segment): segment is PublishedSegment => segment.tested && segment.rank !== null && isPublished(segment))
    .sort((left, right) => (left.rank as number) - (right.rank as number))
    .map((segment) => {
      const difference = metric.differenceOf(segment);
      return {
        rank: segment.rank as number,
        segment: segment.segment,
        name: nameOf(segment),
        n: segment.n,
        verdict: segment.verdict,
        estimate: drawn(difference.estimate),
        low: drawn(difference.low),
        high: drawn(difference.high),
      };
    });
}

/** The x scale: every interval end and estimate, and zero. */
function intervalScale(rows: readonly IntervalRow[]): NiceScale {
  const values = rows.flatMap((row) => [row.estimate, row.low, row.high]).filter((value): value is number => value !== null);
  return niceScale(values, 0);
}

/**
 * The Vega-Lite spec of the chart. Data values never enter an expression: segment names are
 * data fields only, so the library draws them as escaped text.
 */
export function intervalChartSpec(rows: readonly IntervalRow[], axisTitle: string): TopLevelSpec {
  const scale = intervalScale(rows);
  const verdicts = TESTED_VERDICTS.filter((verdict) => rows.some((row) => row.verdict === verdict));
  const labels = verdicts.map((verdict) => VERDICT_STYLES[verdict].label);
  const x = { type: 'quantitative', scale: { domain: scale.domain, nice: false, zero: false } } as const;
  const y = { field: 'name', type: 'nominal', sort: null, axis: { title: null, labelLimit: 320, labelFontSize: 11, ticks: false, domain: false } } as const;
  const values = rows.map((row) => ({
    ...row,
    verdict_label: VERDICT_STYLES[row.verdict].label,
    count_text: formatCount(row.n),
    verdict_text: row.estimate === null ? `${VERDICT_STYLES[row.verdict].label} (no difference computed)` : VERDICT_STYLES[row.verdict].label,
  }));
  // One legend for shape, fill and stroke: the same settings on each lets the library merge them.
  const legend = { title: 'Verdict', orient: 'bottom', direction: 'horizontal', symbolSize: 90, symbolStrokeWidth: 1.6, columns: 4, labelLimit: 220 } as const;
  const verdictScale = (pick: (verdict: Verdict) => string) => ({ domain: labels, range: verdicts.map(pick) });
  return {
    width: INTERVAL_PLOT_WIDTH,
    height: { step: INTERVAL_ROW_STEP },
    data: { values },
    layer: [
      {
        name: 'zero_line',
        data: { values: [{ zero: 0 }] },
        mark: { type: 'rule', color: '#222', strokeDash: [5, 3], strokeWidth: 1 },
        encoding: { x: { ...x, field: 'zero', axis: { title: axisTitle, grid: true, values: scale.ticks, titlePadding: 8, labelOverlap: false } } },
      },
      // The same scale again with its axis on top, so a long chart can be read without scrolling to its foot.
      {
        name: 'top_axis',
        data: { values: [{ zero: 0 }] },
        mark: { type: 'rule', opacity: 0 },
        encoding: { x: { ...x, field: 'zero', axis: { title: null, orient: 'top', grid: false, values: scale.ticks, labelOverlap: false } } },
      },
      {
        name: 'interval_ranges',
        mark: { type: 'rule', strokeWidth: 2 },
        encoding: {
          y,
          x: { ...x, field: 'low', axis: null },
          x2: { field: 'high' },
          color: { field: 'verdict_label', type: 'nominal', scale: verdictScale((verdict) => VERDICT_STYLES[verdict].colour), legend },
        },
      },
      {
        name: 'estimates',
        mark: { type: 'point', filled: true, size: 80, strokeWidth: 1.6, opacity: 1 },
        encoding: {
          y,
          x: { ...x, field: 'estimate', axis: null },
          shape: { field: 'verdict_label', type: 'nominal', scale: verdictScale((verdict) => VERDICT_STYLES[verdict].shape), legend },
          fill: { field: 'verdict_label', type: 'nominal', scale: verdictScale((verdict) => (VERDICT_STYLES[verdict].filled ? VERDICT_STYLES[verdict].colour : '#ffffff')), legend },
          stroke: { field: 'verdict_label', type: 'nominal', scale: verdictScale((verdict) => VERDICT_STYLES[verdict].colour), legend },
        },
      },
      {
        name: 'counts',
        mark: { type: 'text', align: 'right', baseline: 'middle', fontSize: 11, color: '#222' },
        encoding: { y, x: { value: COUNT_COLUMN_END }, text: { field: 'count_text' } },
      },
      {
        name: 'verdict_labels',
        mark: { type: 'text', align: 'left', baseline: 'middle', fontSize: 11, color: '#222' },
        encoding: { y, x: { value: VERDICT_COLUMN_START }, text: { field: 'verdict_text' } },
      },
      ...(['n', 'verdict'] as const).map((header) => ({
        name: `${header}_header`,
        data: { values: [{ header }] },
        mark: { type: 'text', align: header === 'n' ? 'right' : 'left', baseline: 'bottom', fontSize: 11, fontWeight: 'bold', color: '#222', dy: -4 },
        encoding: { x: { value: header === 'n' ? COUNT_COLUMN_END : VERDICT_COLUMN_START }, y: { value: 0 }, text: { field: 'header' } },
      })),
    ],
    resolve: { scale: { shape: 'shared' }, axis: { x: 'independent' } },
  } as TopLevelSpec;
}

/**
 * The interval chart of a snapshot as a figure, with its caption and data table.
 * @example
 * const figure = await intervalChart(snapshot); // figure.svg holds one interval per tested segment
 */
export async function intervalChart(snapshot: Snapshot): Promise<ChartFigure> {
  const definition = snapshot.definition;
  const metric = rankingMetric(definition);
  const confidence = confidenceLabel(definition);
  const allRows = intervalRows(snapshot);
  const rows = chartedRows(allRows);
  const left = allRows.length - rows.length;
  const omitted =
    left > 0
      ? ` It shows ${formatCount(rows.length)} of the ${formatCount(allRows.length)} tested segments: ${
          rows.every(isDecided) ? 'the first and the last of those that do better or worse than the rest' : 'every one that does better or worse than the rest, and the best-ranked of the others'
        }; the other ${formatCount(left)} are in the table below.`
      : '';
  const axisTitle = `Difference from the rest: ${metric.name}, ${metric.differenceUnit} (${confidence})`;
  const svg = await renderChart(intervalChartSpec(rows, axisTitle));
  const counts = TESTED_VERDICTS.map((verdict) => `${allRows.filter((row) => row.verdict === verdict).length} ${VERDICT_STYLES[verdict].label}`).join(', ');
  const bySegment = new Map(snapshot.segments.map((segment) => [segment.segment, segment]));
  const first = snapshot.segments.find((segment) => segment.rank === 1);
  const firstText = first
    ? (() => {
        const difference = metric.differenceOf(first);
        return difference.estimate === null
          ? ` First in rank: ${readableSegmentName(first.values)}.`
          : ` First in rank: ${readableSegmentName(first.values)}, ${metric.difference(difference.estimate)}${difference.low !== null && difference.high !== null ? ` (${confidence} ${metric.difference(difference.low)} to ${metric.difference(difference.high)})` : ''}.`;
      })()
    : '';
  const adjusted = definition.adjustment === 'none' ? 'raw p-values (no adjustment for the number of tests)' : `p-values adjusted for the ${formatCount(verdictMetric(definition) === 'conversion_rate' ? snapshot.row_counts.rate_tests : snapshot.row_counts.value_tests)} tests`;
  return {
    id: 'interval-chart',
    heading: `Difference from the rest, ${metric.name}`,
    svg,
    wide: true,
    label: `Interval chart of the difference in ${metric.name} between ${left > 0 ? `${rows.length} of the ${allRows.length}` : `each of ${rows.length}`} tested segments and the rest, in rank order: ${counts}.${firstText}${omitted}`,
    caption: html`Each row is a tested segment, in rank order (${
      definition.rank_order === 'lower_bound' ? 'by the lower confidence bound' : 'by the estimate'
    }). The mark is the segment's ${metric.name} minus that of everyone else; the line is its ${confidence} (${metric.intervalMethod}). The dashed line is no difference. Shape and word give the verdict: ${TESTED_VERDICTS.map(
      (verdict) => `${VERDICT_STYLES[verdict].symbol} ${VERDICT_STYLES[verdict].label}`,
    ).join(', ')}. Verdicts use ${adjusted}, so an interval that only just misses the line may still be inconclusive. The n column counts the segment's ${
      snapshot.population.unit === 'contact' ? 'contacted customers' : 'customers'
    }.${omitted}`,
    data: {
      columns: ['rank', 'segment', 'n', `difference (${metric.differenceUnit})`, `${confidence} low`, `${confidence} high`, 'adjusted p', 'verdict'],
      rows: rows.map((row) => {
        const segment = bySegment.get(row.segment);
        const difference = segment ? metric.differenceOf(segment) : { estimate: null, low: null, high: null };
        const adjustedP = segment ? (verdictMetric(definition) === 'conversion_rate' ? segment.rate_p_adjusted : segment.value_p_adjusted) : null;
        const text = (value: number | null) => (value === null ? 'not computed' : metric.difference(value));
        return [
          formatRank(row.rank),
          row.name,
          formatCount(row.n),
          text(difference.estimate),
          text(difference.low),
          text(difference.high),
          adjustedP === null ? 'not computed' : formatPValue(adjustedP),
          VERDICT_STYLES[row.verdict].label,
        ];
      }),
    },
  };
}
