/**
 * A histogram of age or value from bins the snapshot holds: adjacent bars from each bin's low
 * edge to its high edge, with the rule that chose the bins stated in the caption.
 */
import type { TopLevelSpec } from 'vega-lite';
import { formatCount } from '../../report/wording/index.js';
import type { ChartFigure } from '../figure.js';
import { html } from '../html.js';
import { renderChart } from '../render-chart.js';
import { niceScale } from './scale.js';

/** The bins of one distribution, as the statistics core's `histogram` returns them. */
export interface HistogramData {
  rule: 'sturges' | 'freedman-diaconis' | 'fixed' | string;
  bin_width: number;
  /** a null count is a bar withheld by the publication threshold: not drawn, listed as withheld */
  bins: ReadonlyArray<{ low: number; high: number; count: number | null }>;
  /** why the rule was not applied as asked, or null */
  note: string | null;
}

export interface HistogramSubject {
  id: string;
  /** "age" or "revenue per contacted customer" */
  name: string;
  /** "years" or "currency units" */
  unit: string;
  /** the units counted: "contacted customers" */
  unitsWord: string;
  /** how a bin edge is written */
  format(value: number): string;
  /** a sentence on what is left out (unknown ages), or '' */
  leftOut: string;
}

/**
 * The bin rule in words, from the rule's name and the bins themselves.
 * @example
 * binRuleSentence({ rule: 'sturges', bin_width: 5, bins, note: null }, 'years', (v) => String(v));
 * // "Sturges' rule (k = ⌈log₂ n⌉ + 1) gives 12 bins of width 5 years; …"
 */
export function binRuleSentence(data: HistogramData, unit: string, format: (value: number) => string): string {
  const count = data.bins.length;
  const rule =
    data.rule === 'sturges'
      ? "Sturges' rule (k = ⌈log₂ n⌉ + 1)"
      : data.rule === 'freedman-diaconis'
        ? 'the Freedman–Diaconis rule (width 2·IQR·n^(−1/3))'
        : data.rule === 'fixed'
          ? 'a fixed number of bins'
          : `the ${data.rule} rule`;
  const width = data.bin_width > 0 ? ` of width ${format(data.bin_width)} ${unit}` : '';
  return `Bins: ${rule} gives ${count} equal bin${count === 1 ? '' : 's'}${width} from the smallest to the largest value; each bin holds values from its low edge up to but not including its high edge, and the last bin also holds its high edge.${data.note ? ` ${data.note}` : ''}`;
}

export function histogramSpec(data: HistogramData, subject: HistogramSubject): TopLevelSpec {
  const shown = data.bins.filter((bin): bin is { low: number; high: number; count: number } => bin.count !== null);
  const counts = niceScale(
    shown.map((bin) => bin.count),
    0,
    5,
  );
  return {
    width: 380,
    height: 190,
    data: { values: shown.map((bin) => ({ ...bin })) },
    layer: [
      {
        name: 'bins',
        mark: { type: 'bar', color: '#4D6E8F', stroke: '#ffffff', strokeWidth: 0.5 },
        encoding: {
          x: { field: 'low', type: 'quantitative', scale: { zero: false, nice: false }, axis: { title: `${subject.name} (${subject.unit})`, tickCount: 8 } },
          x2: { field: 'high' },
          y: { field: 'count', type: 'quantitative', scale: { domain: counts.domain, nice: false }, axis: { title: subject.unitsWord, values: counts.ticks } },
          // Both ends of each bar given: with x and x2 alone the library would draw thin horizontal bars.
          y2: { datum: 0 },
        },
      },
    ],
  } as TopLevelSpec;
}

/**
 * A histogram as a figure.
 * @example
 * const figure = await histogramChart(data, { id: 'age-histogram', name: 'age', unit: 'years', unitsWord: 'customers', format: String, leftOut: '' });
 */
export async function histogramChart(data: HistogramData, subject: HistogramSubject): Promise<ChartFigure> {
  const shown = data.bins.filter((bin): bin is { low: number; high: number; count: number } => bin.count !== null);
  const withheld = data.bins.length - shown.length;
  const total = shown.reduce((sum, bin) => sum + bin.count, 0);
  const fullest = shown.reduce<(typeof shown)[number] | null>((best, bin) => (best === null || bin.count > best.count ? bin : best), null);
  const withheldSentence =
    withheld === 0 ? '' : ` ${formatCount(withheld)} bar${withheld === 1 ? ' is' : 's are'} withheld and not drawn: too few ${subject.unitsWord} to show on their own.`;
  const first = data.bins[0];
  const last = data.bins[data.bins.length - 1];
  return {
    id: subject.id,
    heading: `Histogram of ${subject.name}`,
    svg: await renderChart(histogramSpec(data, subject)),
    wide: false,
    label: `Histogram of ${subject.name} over ${formatCount(total)} ${subject.unitsWord}${withheld === 0 ? '' : ' shown'}${
      first && last ? `, from ${subject.format(first.low)} to ${subject.format(last.high)} ${subject.unit}` : ''
    }, in ${data.bins.length} bins${fullest ? `; the fullest bin is ${subject.format(fullest.low)} to ${subject.format(fullest.high)} with ${formatCount(fullest.count)}` : ''}.`,
    caption: html`${binRuleSentence(data, subject.unit, subject.format)}${subject.leftOut ? ` ${subject.leftOut}` : ''}${withheldSentence}`,
    data: {
      columns: [`from (${subject.unit})`, `to (${subject.unit})`, subject.unitsWord],
      rows: data.bins.map((bin) => [subject.format(bin.low), subject.format(bin.high), bin.count === null ? 'withheld' : formatCount(bin.count)]),
    },
  };
}
