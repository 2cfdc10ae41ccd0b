/**
 * The page's stylesheet: system fonts only (nothing is fetched), dark ink on white so it reads
 * in greyscale, charts that shrink to the width available, and a print stylesheet that drops
 * the controls and keeps each chart on one page.
 */
// Each verdict's filter button hides every other segment; `:has()` lets the stylesheet do it without a script.
const FILTER_RULES = ['better', 'worse', 'inconclusive', 'equivalent', 'too_small']
  .map((verdict) => `main:has(#filter-${verdict}:checked) #segment-table tbody.segment:not([data-verdict="${verdict}"]) { display: none; }`)
  .join('\n');

export const PAGE_STYLE = `
:root { color-scheme: light; --ink: #1a1a1a; --muted: #555; --rule: #d0d0d0; --accent: #0b4f8a; --banner: #fff4d6; }
* { box-sizing: border-box; }
body { margin: 0; font: 15px/1.5 system-ui, -apple-system, "Segoe UI", Roboto, "Helvetica Neue", Arial, sans-serif; color: var(--ink); background: #fff; }
main { max-width: 1360px; margin: 0 auto; padding: 1rem 1.5rem 3rem; }
h1 { font-size: 1.6rem; margin: 0.5rem 0 0.25rem; }
h2 { font-size: 1.25rem; margin: 2rem 0 0.5rem; border-bottom: 1px solid var(--rule); padding-bottom: 0.25rem; }
h3 { font-size: 1rem; margin: 0 0 0.5rem; }
a { color: var(--accent); }
.banner { background: var(--banner); border: 2px solid #8a6d00; padding: 0.5rem 1rem; font-weight: 600; margin: 0 0 1rem; }
.subtitle { color: var(--muted); margin: 0 0 1rem; }
.controls { display: flex; flex-wrap: wrap; gap: 1rem 2rem; align-items: center; margin: 0.5rem 0 1rem; }
.controls form { display: flex; gap: 0.5rem; align-items: center; }
select, button { font: inherit; }
.summary { font-size: 1.05rem; max-width: 75ch; }
dl.facts { display: grid; grid-template-columns: max-content 1fr; gap: 0.2rem 1rem; margin: 1rem 0; }
dl.facts dt { font-weight: 600; }
dl.facts dd { margin: 0; }
.cautions { border-left: 4px solid var(--ink); padding: 0.25rem 1rem; background: #f6f6f6; }
.cautions li { margin: 0.25rem 0; }
.charts { display: grid; grid-template-columns: repeat(auto-fit, minmax(420px, 1fr)); gap: 1.5rem; }
figure.chart { margin: 0; padding: 0.75rem; border: 1px solid var(--rule); min-width: 0; }
figure.chart.wide { grid-column: 1 / -1; }
.chart-image svg { display: block; max-width: 100%; height: auto; }
figcaption { color: var(--muted); font-size: 0.9rem; margin-top: 0.5rem; max-width: 90ch; }
.visually-hidden { position: absolute !important; width: 1px; height: 1px; padding: 0; margin: -1px; overflow: hidden; clip: rect(0 0 0 0); white-space: nowrap; border: 0; }
.table-wrap { overflow-x: auto; }
table.segments { border-collapse: collapse; width: 100%; font-size: 0.85rem; }
table.segments th, table.segments td { border-bottom: 1px solid var(--rule); padding: 0.3rem 0.4rem; text-align: left; vertical-align: top; }
table.segments td.num, table.segments th.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
table.segments tr.figures > * { border-bottom: none; padding-bottom: 0.1rem; }
table.segments tr.sentence td { padding: 0 0.4rem 0.5rem 2.5rem; color: #333; border-bottom: 1px solid var(--rule); }
table.segments tbody.segment { break-inside: avoid; page-break-inside: avoid; }
table.segments thead th { position: sticky; top: 0; background: #fff; border-bottom: 2px solid var(--ink); vertical-align: bottom; }
table.segments .part { display: block; white-space: nowrap; }
table.segments .joiner { display: none; }
table.segments th button { all: unset; cursor: pointer; font-weight: 700; }
table.segments th button:focus-visible { outline: 2px solid var(--accent); outline-offset: 2px; }
table.segments th[aria-sort="ascending"] button::after { content: " ▲"; }
table.segments th[aria-sort="descending"] button::after { content: " ▼"; }
.ci { display: block; color: var(--muted); font-size: 0.8rem; }
.verdict { display: inline-block; min-width: 14ch; }
.verdict-better, .verdict-worse { font-weight: 700; }
.decision { border: 2px solid var(--ink); padding: 0.25rem 1rem 0.75rem; margin: 1rem 0; }
.decision h2 { border: none; margin: 0.5rem 0; }
.decision .lead { font-size: 1.05rem; margin: 0 0 0.5rem; }
.decision-lists { display: grid; grid-template-columns: repeat(auto-fit, minmax(330px, 1fr)); gap: 0.5rem 1.5rem; }
.decision-list ul { margin: 0; padding-left: 1.1rem; }
.decision-list li { margin: 0.2rem 0; }
.decision-list .note, .decision-list .more, .decision-list .none { color: var(--muted); font-size: 0.9rem; margin: 0 0 0.25rem; }
details.method > summary, table.segments details > summary { cursor: pointer; color: var(--accent); }
table.segments tr.sentence details > p { margin: 0.25rem 0 0; }
.verdict-filter { border: 1px solid var(--rule); display: flex; flex-wrap: wrap; gap: 0.25rem 1.25rem; margin: 0 0 0.75rem; }
.verdict-filter label { white-space: nowrap; }
${FILTER_RULES}
footer { margin-top: 2rem; color: var(--muted); font-size: 0.85rem; }
@media print {
  body { font-size: 10pt; }
  main { max-width: none; padding: 0; }
  .controls form, .no-print { display: none !important; }
  table.segments tbody.segment { display: table-row-group !important; }
  .charts { display: block; }
  figure.chart { break-inside: avoid; page-break-inside: avoid; border: none; padding: 0; margin: 0 0 1rem; }
  .chart-image svg { width: 100%; max-width: 100%; height: auto; }
  .table-wrap { overflow: visible; }
  table.segments { font-size: 7.5pt; }
  table.segments thead th { position: static; }
  a { color: var(--ink); text-decoration: none; }
  h2 { break-after: avoid; }
  @page { margin: 12mm; }
}
`;
