/**
 * The holdout charts of a campaign report with holdout customers: each segment's uplift
 * (contacted rate − holdout rate) with its interval against the zero line, and, with
 * economics, its incremental profit per contact against the break-even line. The advice is
 * colour, shape and word on every row, so it reads at a glance; the same drawing approach as
 * the interval chart (Vega-Lite spec rendered to inert SVG, names as data fields only).
 */
import type { TopLevelSpec } from 'vega-lite';
import { formatCount, formatMoney, formatPoints, readableSegmentName } from '../../report/wording/index.js';
import type { Snapshot, SnapshotSegment } from '../../report/shapes/index.js';
import type { ChartFigure } from '../figure.js';
import { html } from '../html.js';
import { confidenceLabel } from '../metric.js';
import { renderChart } from '../render-chart.js';
import { niceScale } from './scale.js';

const PLOT_WIDTH = 420;
const ROW_STEP = 18;
const ADVICE_COLUMN_START = PLOT_WIDTH + 12;

type Advice = 'contact' | 'hold_back' | 'undecided' | 'none';

/** Colour-blind-safe colours (Okabe–Ito) with a shape and a word each, so no reading relies on colour alone. */
const ADVICE_STYLES: Record<Advice, { label: string; colour: string; shape: string }> = {
  contact: { label: 'contact', colour: '#009E73', shape: 'triangle-up' },
  hold_back: { label: 'hold back', colour: '#D55E00', shape: 'triangle-down' },
  undecided: { label: 'undecided', colour: '#555555', shape: 'circle' },
  none: { label: 'no advice', colour: '#999999', shape: 'square' },
};
const ADVICE_ORDER: Advice[] = ['contact', 'undecided', 'hold_back', 'none'];

/**
 * Most rows a holdout chart draws, as the interval chart: with more segments it keeps those
 * with a firm advice (contact or hold back) first, then the others, in the snapshot's rank
 * order; the table and the JSON hold every segment.
 */
export const MAX_UPLIFT_ROWS = 24;

export interface UpliftRow {
  segment: string;
  name: string;
  advice: Advice;
  /** in drawn units: percentage points for the uplift, money for the profit */
  estimate: number;
  low: number;
  high: number;
}

export type UpliftMeasure = 'uplift' | 'incremental_profit';

/** Whether the snapshot carries holdout figures (a campaign report with holdout customers). */
export function hasHoldout(snapshot: Snapshot): boolean {
  return snapshot.segments.some((segment) => segment.holdout_n !== null && segment.holdout_n !== undefined);
}

/**
 * The rows of one holdout chart in rank order (unranked last): segments whose measure was computed.
 * @example
 * upliftRows(snapshot, 'uplift')[0]; // { segment: 'region=Ashgrove', name: 'Ashgrove', advice: 'contact', estimate: 4.2, low: 1.1, high: 7.3 }
 */
export function upliftRows(snapshot: Snapshot, measure: UpliftMeasure): UpliftRow[] {
  const pick = (segment: SnapshotSegment) =>
    measure === 'uplift'
      ? { estimate: segment.uplift, low: segment.uplift_ci_low, high: segment.uplift_ci_high, scale: 100 }
      : { estimate: segment.incremental_profit_per_contact, low: segment.incremental_profit_ci_low, high: segment.incremental_profit_ci_high, scale: 1 };
  const byRank = [...snapshot.segments].sort((left, right) => (left.rank ?? Number.POSITIVE_INFINITY) - (right.rank ?? Number.POSITIVE_INFINITY));
  return byRank.flatMap((segment) => {
    const { estimate, low, high, scale } = pick(segment);
    if (estimate === null || low === null || high === null || estimate === undefined || low === undefined || high === undefined) return [];
    const name = readableSegmentName(segment.values);
    return [{ segment: segment.segment, name: name === '' ? segment.segment : name, advice: segment.advice ?? 'none', estimate: estimate * scale, low: low * scale, high: high * scale }];
  });
}

/** The rows drawn: all when they fit, else the firmly advised ones first, each group in rank order. */
export function chartedUpliftRows(rows: readonly UpliftRow[]): UpliftRow[] {
  if (rows.length <= MAX_UPLIFT_ROWS) return [...rows];
  const firm = (row: UpliftRow) => row.advice === 'contact' || row.advice === 'hold_back';
  const chosen = new Set([...rows.filter(firm), ...rows.filter((row) => !firm(row))].slice(0, MAX_UPLIFT_ROWS));
  return rows.filter((row) => chosen.has(row));
}

/** The Vega-Lite spec: intervals, estimates by advice, a dashed reference line at 0 and the advice word beside each row. */
function upliftChartSpec(rows: readonly UpliftRow[], axisTitle: string, lineName: string): TopLevelSpec {
  const scale = niceScale(rows.flatMap((row) => [row.estimate, row.low, row.high]), 0);
  const x = { type: 'quantitative', scale: { domain: scale.domain, nice: false, zero: false } } as const;
  const y = { field: 'name', type: 'nominal', sort: null, axis: { title: null, labelLimit: 320, labelFontSize: 11, ticks: false, domain: false } } as const;
  const present = ADVICE_ORDER.filter((advice) => rows.some((row) => row.advice === advice));
  const adviceScale = (pick: (advice: Advice) => string) => ({ domain: present.map((advice) => ADVICE_STYLES[advice].label), range: present.map(pick) });
  const legend = { title: 'Advice', orient: 'bottom', direction: 'horizontal', symbolSize: 90, columns: 4 } as const;
  const values = rows.map((row) => ({ ...row, advice_label: ADVICE_STYLES[row.advice].label }));
  return {
    width: PLOT_WIDTH,
    height: { step: ROW_STEP },
    data: { values },
    layer: [
      {
        name: 'reference_line',
        data: { values: [{ zero: 0, line: lineName }] },
        mark: { type: 'rule', color: '#222', strokeDash: [5, 3], strokeWidth: 1 },
        encoding: { x: { ...x, field: 'zero', axis: { title: axisTitle, grid: true, values: scale.ticks, titlePadding: 8, labelOverlap: false } } },
      },
      {
        name: 'interval_ranges',
        mark: { type: 'rule', strokeWidth: 2 },
        encoding: { y, x: { ...x, field: 'low', axis: null }, x2: { field: 'high' }, color: { field: 'advice_label', type: 'nominal', scale: adviceScale((advice) => ADVICE_STYLES[advice].colour), legend } },
      },
      {
        name: 'estimates',
        mark: { type: 'point', filled: true, size: 80, opacity: 1 },
        encoding: {
          y,
          x: { ...x, field: 'estimate', axis: null },
          shape: { field: 'advice_label', type: 'nominal', scale: adviceScale((advice) => ADVICE_STYLES[advice].shape), legend },
          color: { field: 'advice_label', type: 'nominal', scale: adviceScale((advice) => ADVICE_STYLES[advice].colour), legend },
        },
      },
      {
        name: 'advice_labels',
        mark: { type: 'text', align: 'left', baseline: 'middle', fontSize: 11, color: '#222' },
        encoding: { y, x: { value: ADVICE_COLUMN_START }, text: { field: 'advice_label' } },
      },
    ],
    resolve: { scale: { shape: 'shared' }, axis: { x: 'independent' } },
  } as TopLevelSpec;
}

/**
 * The holdout figures of a snapshot: the uplift chart, and the profit chart when economics
 * are set; none for a report without holdout customers.
 * @example
 * (await upliftCharts(snapshot)).map((figure) => figure.id); // ['uplift-chart', 'profit-chart']
 */
export async function upliftCharts(snapshot: Snapshot): Promise<ChartFigure[]> {
  if (!hasHoldout(snapshot)) return [];
  const confidence = confidenceLabel(snapshot.definition);
  const economics = snapshot.definition.economics;
  const figures: ChartFigure[] = [];
  const measures: UpliftMeasure[] = economics ? ['uplift', 'incremental_profit'] : ['uplift'];
  for (const measure of measures) {
    const allRows = upliftRows(snapshot, measure);
    if (allRows.length === 0) continue;
    const rows = chartedUpliftRows(allRows);
    const omitted = allRows.length > rows.length ? ` It shows ${formatCount(rows.length)} of ${formatCount(allRows.length)} segments, those advised contact or hold back first; the others are in the table below.` : '';
    const isUplift = measure === 'uplift';
    const axisTitle = isUplift ? `Uplift: contacted rate − holdout rate, percentage points (${confidence})` : `Incremental profit per contact, money (${confidence})`;
    const lineName = isUplift ? 'no uplift' : 'break-even';
    const svg = await renderChart(upliftChartSpec(rows, axisTitle, lineName));
    const count = (advice: Advice) => rows.filter((row) => row.advice === advice).length;
    const tally = ADVICE_ORDER.filter((advice) => count(advice) > 0).map((advice) => `${formatCount(count(advice))} ${ADVICE_STYLES[advice].label}`).join(', ');
    const text = (value: number) => (isUplift ? formatPoints(value / 100) : formatMoney(value));
    figures.push({
      id: isUplift ? 'uplift-chart' : 'profit-chart',
      heading: isUplift ? 'What contacting added: uplift against the holdout' : 'What contacting earned: incremental profit per contact',
      svg,
      wide: true,
      label: `Interval chart of ${isUplift ? 'the uplift' : 'the incremental profit per contact'} of ${formatCount(rows.length)} segments against the ${lineName} line; advice: ${tally}.${omitted}`,
      caption: isUplift
        ? html`Each row is a segment: the mark is its conversion rate among contacted customers minus that among its holdout, the line its ${confidence} (Newcombe's hybrid score). The dashed line is no uplift: an interval wholly right of it means the campaign moved that segment. Colour, shape and word give the advice (${economics ? 'read on the profit' : 'read on the uplift'}, with intervals widened for the number of segments): ▲ contact, ● undecided, ▼ hold back.${omitted}`
        : html`Each row is a segment: the mark is margin × (revenue per contacted customer − revenue per held-out customer) − cost per contact (margin ${economics?.margin ?? ''}, cost ${formatMoney(economics?.cost_per_contact ?? 0)}), the line its ${confidence} (Welch). The dashed line is break-even: contact a segment when its interval lies wholly right of it (▲ contact), hold it back when wholly left (▼ hold back); otherwise ● undecided.${omitted}`,
      data: {
        columns: ['segment', isUplift ? 'uplift' : 'incremental profit per contact', `${confidence} low`, `${confidence} high`, 'advice'],
        rows: rows.map((row) => [row.name, text(row.estimate), text(row.low), text(row.high), ADVICE_STYLES[row.advice].label]),
      },
    });
  }
  return figures;
}
