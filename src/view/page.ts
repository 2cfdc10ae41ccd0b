/**
 * The report as one self-contained web page that leads with the decision: whom to target,
 * whom to avoid and what is still uncertain; then the cautions and (folded) the summary
 * paragraph and the settings behind it; then the charts (SVG drawn on the server); then the full ranked table.
 * Nothing is fetched from elsewhere; the only script and stylesheet are inline and carry the
 * response's CSP nonces. Every piece of data goes through the escaping `html` template.
 */
import { formatConfidence, formatCount, formatMoney, formatPercent, vocabulary } from '../report/wording/index.js';
import type { Snapshot } from '../report/shapes/index.js';
import { distributionCharts, distributionFallback } from './distributions.js';
import { intervalChart, intervalRows } from './charts/interval.js';
import { paretoChart } from './charts/pareto.js';
import { trendChart } from './charts/trend.js';
import { upliftCharts } from './charts/uplift.js';
import { figureHtml, type ChartFigure } from './figure.js';
import { html, trusted, type SafeHtml } from './html.js';
import { rankingMetric } from './metric.js';
import { PAGE_SCRIPT } from './page-script.js';
import { PAGE_STYLE } from './page-style.js';
import { decisionSection } from './decision.js';
import { rankedTable } from './table.js';
import { verdictMetric } from '../report/definition/index.js';

/** One entry of the snapshot picker. */
export interface SnapshotChoice {
  snapshot_id: string;
  sequence: number;
  created_at: string;
}

export interface ReportPageInput {
  snapshot: Snapshot;
  /** snapshots of the same report for the trend (any order; those after `snapshot` are ignored) */
  history: readonly Snapshot[];
  /** the picker's entries, newest first */
  choices: readonly SnapshotChoice[];
  /** key-less demo mode on a loopback address: the page says so */
  openMode: boolean;
  /** the CSP nonces of this response */
  nonces: { script: string; style: string };
  /** the charts, when already drawn (snapshots never change, so their charts can be kept); drawn here otherwise */
  figures?: readonly ChartFigure[];
}

/** The banner the page shows in key-less demo mode. */
export const OPEN_MODE_BANNER = 'Open demo mode: no API key needed on this machine';

const TRIGGER_WORDS: Record<Snapshot['trigger'], string> = {
  manual: 'on request',
  schedule: 'by the weekly schedule',
  command: 'from the command line',
};

const ADJUSTMENT_WORDS: Record<Snapshot['definition']['adjustment'], string> = {
  bh: 'Benjamini–Hochberg (controls the false discovery rate)',
  holm: 'Holm (controls the chance of any false positive)',
  none: 'none (each test on its own; more false positives to expect)',
};

function capitalize(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}

function reportPath(reportId: string): string {
  return `/reports/${encodeURIComponent(reportId)}`;
}

function dataSource(snapshot: Snapshot): SafeHtml {
  const population = snapshot.population;
  if (population.window !== null) {
    return html`sales from ${population.window.from} to ${population.window.to} (both days included); one row per customer`;
  }
  const campaigns = population.campaign_ids ?? [];
  return html`campaign${campaigns.length === 1 ? '' : 's'} ${campaigns.join(', ')}; one row per contacted customer (a campaign report has no time window)`;
}

function facts(snapshot: Snapshot): SafeHtml {
  const { definition, population, row_counts: counts, data_quality: quality } = snapshot;
  const metric = rankingMetric(definition);
  const words = vocabulary(definition);
  const confidence = formatConfidence(definition.confidence);
  const family = verdictMetric(definition) === 'conversion_rate' ? counts.rate_tests : counts.value_tests;
  const rate =
    population.conversion_rate === null
      ? 'not computed'
      : `${formatPercent(population.conversion_rate)}${
          population.conversion_rate_ci_low !== null && population.conversion_rate_ci_high !== null
            ? ` (${confidence} CI ${formatPercent(population.conversion_rate_ci_low)} to ${formatPercent(population.conversion_rate_ci_high)})`
            : ''
        }`;
  const value =
    population.value_mean === null
      ? 'not computed'
      : `${formatMoney(population.value_mean)}${
          population.value_ci_low !== null && population.value_ci_high !== null ? ` (${confidence} CI ${formatMoney(population.value_ci_low)} to ${formatMoney(population.value_ci_high)})` : ''
        } over ${formatCount(population.value_n)} ${words.valueUnits}${definition.value_basis === 'per_unit' ? ' (zeros included)' : ''}`;
  const rejected = quality.rejected_rows.filter((entry) => entry.rejected > 0);
  return html`<dl class="facts">
<dt>Data</dt><dd>${dataSource(snapshot)}</dd>
<dt>n</dt><dd>${formatCount(population.n)} ${population.unit === 'contact' ? 'contacted customers' : 'customers'}; ${formatCount(population.conversions)} converted</dd>
<dt>${capitalize(words.rateName)}</dt><dd>${rate}</dd>
<dt>${capitalize(words.valueName)}</dt><dd>${value}</dd>
<dt>Confidence level</dt><dd>${confidence}</dd>
<dt>Adjustment</dt><dd>${ADJUSTMENT_WORDS[definition.adjustment]}, over ${formatCount(family)} tests of the ${metric.name}</dd>
<dt>Ranking</dt><dd>by ${metric.name}, ${definition.rank_order === 'lower_bound' ? 'lower confidence bound first (a cautious order)' : 'estimate'}; segments under ${formatCount(definition.min_n)} are not tested</dd>
<dt>Segments</dt><dd>${formatCount(counts.segments)} (dimensions: ${definition.dimensions.join(', ')}); ${formatCount(counts.tested)} tested, ${formatCount(counts.too_small)} too small</dd>
<dt>Unknown age</dt><dd>${formatCount(quality.unknown_age)}${quality.unknown_age_share === null ? '' : ` (${formatPercent(quality.unknown_age_share)})`}, kept in the band “unknown”</dd>
${rejected.length > 0 ? html`<dt>Rejected rows</dt><dd>${rejected.map((entry) => `${formatCount(entry.rejected)} ${entry.kind} rows in ${formatCount(entry.ingests)} uploads`).join('; ')}</dd>` : ''}
<dt>Compared with</dt><dd>${snapshot.comparison.note}</dd>
</dl>`;
}

function picker(input: ReportPageInput): SafeHtml {
  const { snapshot } = input;
  const choices = input.choices.some((choice) => choice.snapshot_id === snapshot.snapshot_id)
    ? input.choices
    : [{ snapshot_id: snapshot.snapshot_id, sequence: snapshot.sequence, created_at: snapshot.created_at }, ...input.choices];
  const options = choices.map(
    (choice) =>
      html`<option value="${choice.snapshot_id}"${choice.snapshot_id === snapshot.snapshot_id ? html` selected` : ''}>#${choice.sequence} — ${choice.created_at.slice(0, 16).replace('T', ' ')} UTC</option>`,
  );
  return html`<form method="get" action="${reportPath(snapshot.report_id)}" class="picker">
<label for="snapshot-picker">Snapshot</label>
<select id="snapshot-picker" name="snapshot">${options}</select>
<button type="submit">Show</button>
</form>`;
}

function downloads(snapshot: Snapshot): SafeHtml {
  const base = `/v1/reports/${encodeURIComponent(snapshot.report_id)}`;
  const query = `snapshot=${encodeURIComponent(snapshot.snapshot_id)}`;
  return html`<p class="downloads">Ranked table of this snapshot:
<a href="${`${base}/segments?format=csv&${query}`}" id="csv-link">CSV</a> ·
<a href="${`${base}/segments?${query}`}" id="json-link">JSON</a> ·
whole snapshot: <a href="${`${base}/snapshots/${encodeURIComponent(snapshot.snapshot_id)}`}">JSON</a></p>`;
}

/** Every chart of a snapshot, in page order. */
export async function reportCharts(snapshot: Snapshot, history: readonly Snapshot[]): Promise<ChartFigure[]> {
  const unitsWord = snapshot.population.unit === 'contact' ? 'contacted customers' : 'customers';
  const figures: ChartFigure[] = [];
  // An empty chart says nothing: a snapshot without tested segments (or a dimension without values) gets none.
  if (intervalRows(snapshot).length > 0) figures.push(await intervalChart(snapshot));
  figures.push(...(await upliftCharts(snapshot)));
  for (const [index, profile] of snapshot.dimensions.entries()) if (profile.values.length > 0) figures.push(await paretoChart(profile, index, unitsWord));
  figures.push(...(await distributionCharts(snapshot)));
  const trend = await trendChart(snapshot, history);
  if (trend) figures.push(trend);
  return figures;
}

/**
 * The whole page as an HTML string.
 * @throws Error when a chart cannot be drawn (a programming error: the specs are built here)
 * @example
 * const page = await renderReportPage({ snapshot, history: [snapshot], choices, openMode: false, nonces });
 */
export async function renderReportPage(input: ReportPageInput): Promise<string> {
  const { snapshot } = input;
  const figures = input.figures ?? (await reportCharts(snapshot, input.history));
  const noCharts = figures.length === 0 ? html`<p>No segment could be tested and no dimension has values in this snapshot, so there is nothing to chart.</p>` : '';
  const reversals = snapshot.reversals.length === 0 ? '' : html`<h3>Reversals</h3><ul>${snapshot.reversals.map((reversal) => html`<li>${reversal.sentence}</li>`)}</ul>`;
  const page = html`<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${snapshot.report_name} — segment report #${snapshot.sequence}</title>
<link rel="icon" href="data:,">
<style nonce="${input.nonces.style}">${trusted(PAGE_STYLE)}</style>
</head>
<body>
<main>
${input.openMode ? html`<p class="banner" role="note" id="open-mode-banner">${OPEN_MODE_BANNER}</p>` : ''}
<header>
<h1>${snapshot.report_name}</h1>
<p class="subtitle">Snapshot #${snapshot.sequence}, computed ${snapshot.created_at.slice(0, 16).replace('T', ' ')} UTC ${TRIGGER_WORDS[snapshot.trigger]}</p>
<div class="controls">${picker(input)}${downloads(snapshot)}</div>
</header>
${decisionSection(snapshot)}
<section aria-labelledby="summary-heading">
<h2 id="summary-heading">Cautions and method</h2>
<div class="cautions"><h3>Cautions</h3><ul>${snapshot.cautions.map((caution) => html`<li>${caution}</li>`)}</ul>${reversals}</div>
<details class="method"><summary>The report in one paragraph, and how these figures were made: data, n, confidence level, adjustment, ranking</summary>
<p class="summary">${snapshot.summary}</p>
${facts(snapshot)}</details>
</section>
<section aria-labelledby="charts-heading">
<h2 id="charts-heading">Charts</h2>
<div class="charts">
${noCharts}${figures.map((figure) => html`${figureHtml(figure)}\n`)}
</div>
${distributionFallback(snapshot)}
</section>
<section aria-labelledby="table-heading">
<h2 id="table-heading">Ranked segments</h2>
<p class="no-print">Press a column heading to sort by it; press it again to reverse the order. Open “In words” under a segment for its verdict in a sentence.</p>
${rankedTable(snapshot)}
</section>
<footer>
<p>Report ${snapshot.report_id}, snapshot ${snapshot.snapshot_id}; fingerprint ${snapshot.fingerprint.slice(0, 16)}… Every figure on this page is read from that snapshot.</p>
</footer>
</main>
<script nonce="${input.nonces.script}">${trusted(PAGE_SCRIPT)}</script>
</body>
</html>
`;
  return page.markup;
}
