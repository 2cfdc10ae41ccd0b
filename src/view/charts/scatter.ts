/**
 * Age against value as a binned scatter: each rectangle is one cell of an age × value grid,
 * shaded by how many units fall in it (a plain scatter of thousands of points would outweigh
 * the rest of the page and hide how many points overlap). The caption gives Pearson's r with
 * its Fisher-z interval from the snapshot.
 */
import type { TopLevelSpec } from 'vega-lite';
import { formatCoefficient, formatConfidence, formatCount, formatPValue } from '../../report/wording/index.js';
import type { Correlation } from '../../report/shapes/index.js';
import type { ChartFigure } from '../figure.js';
import { html } from '../html.js';
import { renderChart } from '../render-chart.js';

export interface ScatterCell {
  age_low: number;
  age_high: number;
  value_low: number;
  value_high: number;
  count: number;
}

export interface ScatterSubject {
  /** "revenue per contacted customer" */
  valueName: string;
  unitsWord: string;
  confidence: number;
  formatValue(value: number): string;
}

/** Pearson's r in words, with its interval and test, or the reason it is missing. */
export function correlationSentence(correlation: Correlation, confidence: number): string {
  if (correlation.r === null) return `The correlation is not computed: ${correlation.note ?? 'no reason was recorded'}`;
  const interval =
    correlation.ci_low !== null && correlation.ci_high !== null ? ` (${formatConfidence(confidence)} CI ${formatCoefficient(correlation.ci_low)} to ${formatCoefficient(correlation.ci_high)}, Fisher z)` : '';
  const test = correlation.p_value === null ? '' : `, p ${correlation.p_value < 0.001 ? '' : '= '}${formatPValue(correlation.p_value)}`;
  return `Pearson's r = ${formatCoefficient(correlation.r)}${interval}${test}, over ${formatCount(correlation.n)} units with both an age and a value.`;
}

export function scatterSpec(cells: readonly ScatterCell[], subject: ScatterSubject): TopLevelSpec {
  return {
    width: 380,
    height: 220,
    data: { values: cells.filter((cell) => cell.count > 0).map((cell) => ({ ...cell })) },
    layer: [{ name: 'cells', mark: { type: 'rect', stroke: '#ffffff', strokeWidth: 0.3 }, encoding: {
      x: { field: 'age_low', type: 'quantitative', scale: { zero: false, nice: false }, axis: { title: 'age (years)' } },
      x2: { field: 'age_high' },
      y: { field: 'value_low', type: 'quantitative', scale: { zero: true, nice: false }, axis: { title: `${subject.valueName}` } },
      y2: { field: 'value_high' },
      // A square-root scale keeps the sparse cells visible next to the crowded ones.
      color: { field: 'count', type: 'quantitative', scale: { type: 'sqrt', scheme: 'greys', zero: true }, legend: { title: subject.unitsWord, gradientLength: 160 } },
    } }],
  } as TopLevelSpec;
}

/**
 * The binned scatter as a figure.
 * @example
 * const figure = await scatterChart(cells, correlation, subject);
 */
export async function scatterChart(cells: readonly ScatterCell[], correlation: Correlation, subject: ScatterSubject): Promise<ChartFigure> {
  const occupied = cells.filter((cell) => cell.count > 0);
  const correlationText = correlationSentence(correlation, subject.confidence);
  return {
    id: 'scatter-age-value',
    heading: `Age against ${subject.valueName}`,
    svg: await renderChart(scatterSpec(occupied, subject)),
    wide: false,
    label: `Binned scatter plot of age against ${subject.valueName}, ${occupied.length} occupied cells. ${correlationText}`,
    caption: html`Each rectangle is a range of ages and of ${subject.valueName}; the darker, the more ${subject.unitsWord} fall in it. ${correlationText}`,
    data: {
      columns: ['age from', 'age to', 'value from', 'value to', subject.unitsWord],
      rows: occupied.map((cell) => [String(cell.age_low), String(cell.age_high), subject.formatValue(cell.value_low), subject.formatValue(cell.value_high), formatCount(cell.count)]),
    },
  };
}
