/**
 * A chart as the page shows it: the SVG inside an element with role="img" and a short
 * aria-label, a visible caption, and the data behind the chart as a visually hidden table
 * (hidden by a wrapping element: a table ignores the width and height that hide it),
 * so a screen reader gets the figures and not only a description.
 */
import { html, trusted, type SafeHtml } from './html.js';

export interface DataTable {
  columns: readonly string[];
  rows: ReadonlyArray<readonly string[]>;
}

export interface ChartFigure {
  /** unique within the page; used for element ids */
  id: string;
  heading: string;
  /** inert SVG from `renderChart` */
  svg: string;
  /** the short text alternative: what the chart shows and its main reading */
  label: string;
  caption: SafeHtml;
  data: DataTable;
  /** a wider figure takes the whole width of the page */
  wide: boolean;
}

/**
 * The markup of one figure.
 * @example
 * figureHtml({ id: 'pareto-region', heading: 'Region', svg, label: 'Bar chart …', caption: html`…`, data, wide: false });
 */
export function figureHtml(figure: ChartFigure): SafeHtml {
  const captionId = `${figure.id}-caption`;
  return html`<figure class="chart${figure.wide ? ' wide' : ''}" id="${figure.id}" aria-labelledby="${captionId}">
<h3>${figure.heading}</h3>
<div class="chart-image" role="img" aria-label="${figure.label}">${trusted(figure.svg)}</div>
<figcaption id="${captionId}">${figure.caption}</figcaption>
<div class="visually-hidden"><table class="chart-data"><caption>Data of the chart: ${figure.heading}</caption>
<thead><tr>${figure.data.columns.map((column) => html`<th scope="col">${column}</th>`)}</tr></thead>
<tbody>${figure.data.rows.map((row) => html`<tr>${row.map((cell) => html`<td>${cell}</td>`)}</tr>`)}</tbody></table></div>
</figure>`;
}
