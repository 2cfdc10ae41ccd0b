/**
 * The Pareto chart of one dimension: its values as bars in descending share of the
 * population, the cumulative share as a line on a second axis, and the 80 % mark on that axis.
 */
import type { TopLevelSpec } from 'vega-lite';
import { formatCount, formatPercent } from '../../report/wording/index.js';
import type { DimensionProfile } from '../../report/shapes/index.js';
import type { ChartFigure } from '../figure.js';
import { html } from '../html.js';
import { renderChart } from '../render-chart.js';
import { niceScale } from './scale.js';

/** The reference line of a Pareto chart: the share of units the first few values usually cover (common practice). */
const PARETO_MARK = 0.8;
const BAR_COLOUR = '#4D6E8F';
const LINE_COLOUR = '#1A1A1A';

/** How many values, taken in Pareto order, are needed to reach `PARETO_MARK` of the units. */
export function valuesToReachMark(profile: DimensionProfile): number {
  const index = profile.values.findIndex((value) => value.cumulative_share >= PARETO_MARK - 1e-12);
  return index === -1 ? profile.values.length : index + 1;
}

/** The readable name of a dimension: "age band" for `age_band`. */
function dimensionName(dimension: string): string {
  return dimension.replace(/_/g, ' ');
}

/** The Vega-Lite spec: bars on the left axis (share), line and 80 % rule on the right axis (cumulative share). */
export function paretoChartSpec(profile: DimensionProfile, unitsWord: string): TopLevelSpec {
  const values = profile.values.map((value, index) => ({
    order: index,
    value: value.value,
    share: value.share * 100,
    cumulative: value.cumulative_share * 100,
  }));
  const shareScale = niceScale(
    values.map((value) => value.share),
    0,
    5,
  );
  const longestLabel = Math.max(0, ...values.map((value) => value.value.length));
  const x = { field: 'value', type: 'nominal', sort: null, axis: { title: dimensionName(profile.dimension), labelAngle: longestLabel * values.length > 40 ? -35 : 0, labelLimit: 140 } } as const;
  const cumulativeAxis = { domain: [0, 100], nice: false } as const;
  const width = Math.max(220, Math.min(420, values.length * 46));
  return {
    width,
    height: 190,
    data: { values },
    layer: [
      {
        name: 'shares',
        mark: { type: 'bar', color: BAR_COLOUR, width: { band: 0.7 } },
        encoding: {
          x,
          y: { field: 'share', type: 'quantitative', scale: { domain: shareScale.domain, nice: false }, axis: { title: `share of ${unitsWord} (%)`, values: shareScale.ticks, titleColor: BAR_COLOUR } },
        },
      },
      {
        layer: [
          {
            name: 'cumulative',
            mark: { type: 'line', color: LINE_COLOUR, strokeWidth: 1.5, point: { filled: true, color: LINE_COLOUR, size: 30 } },
            encoding: {
              x,
              y: { field: 'cumulative', type: 'quantitative', scale: cumulativeAxis, axis: { title: 'cumulative share (%)', orient: 'right', values: [0, 20, 40, 60, 80, 100], grid: false } },
            },
          },
          {
            name: 'pareto_mark',
            data: { values: [{ mark: PARETO_MARK * 100, label: `${PARETO_MARK * 100} % mark` }] },
            layer: [
              { mark: { type: 'rule', color: LINE_COLOUR, strokeDash: [6, 4], strokeWidth: 1 }, encoding: { y: { field: 'mark', type: 'quantitative', scale: cumulativeAxis } } },
              {
                mark: { type: 'text', align: 'right', baseline: 'bottom', dx: -2, dy: -2, fontSize: 10, color: LINE_COLOUR },
                encoding: { x: { value: width }, y: { field: 'mark', type: 'quantitative', scale: cumulativeAxis }, text: { field: 'label' } },
              },
            ],
          },
        ],
      },
    ],
    resolve: { scale: { y: 'independent' } },
  } as TopLevelSpec;
}

/**
 * The Pareto chart of one dimension as a figure.
 * @example
 * const figure = await paretoChart(snapshot.dimensions[0], 0);
 */
export async function paretoChart(profile: DimensionProfile, index: number, unitsWord: string): Promise<ChartFigure> {
  const name = dimensionName(profile.dimension);
  const reach = valuesToReachMark(profile);
  const total = profile.values.reduce((sum, value) => sum + value.n, 0);
  const largest = profile.values[0];
  return {
    id: `pareto-${index + 1}`,
    heading: `Pareto chart: ${name}`,
    svg: await renderChart(paretoChartSpec(profile, unitsWord)),
    wide: false,
    label: `Pareto chart of ${name}: ${profile.values.length} values in descending share of ${formatCount(total)} ${unitsWord}${
      largest ? `; the largest is ${largest.value} with ${formatPercent(largest.share)}` : ''
    }; the first ${reach} of them cover at least ${PARETO_MARK * 100} % of them.`,
    caption: html`Bars: each value's share of the ${unitsWord} (left axis), largest first. Line: the cumulative share (right axis). The dashed line marks ${PARETO_MARK * 100} % of them; the first ${reach} of ${profile.values.length} values reach it.`,
    data: {
      columns: [name, 'n', 'share', 'cumulative share'],
      rows: profile.values.map((value) => [value.value, formatCount(value.n), formatPercent(value.share), formatPercent(value.cumulative_share)]),
    },
  };
}
