import { beforeAll, describe, expect, test } from 'vitest';
import type { Snapshot } from '../../src/report/shapes/index.js';
import { escapeHtml } from '../../src/view/html.js';
import { OPEN_MODE_BANNER, renderReportPage, type ReportPageInput } from '../../src/view/page.js';
import { HOSTILE_IMAGE, HOSTILE_SCRIPT, knownSnapshot } from '../support/snapshot-fixture.js';

const NONCES = { script: 'scriptnonce0123456789abcdef', style: 'stylenonce0123456789abcdef' };

function input(overrides: Partial<ReportPageInput> = {}): ReportPageInput {
  const snapshot = knownSnapshot();
  return {
    snapshot,
    history: [snapshot],
    choices: [{ snapshot_id: snapshot.snapshot_id, sequence: snapshot.sequence, created_at: snapshot.created_at }],
    openMode: false,
    nonces: NONCES,
    ...overrides,
  };
}

/**
 * Every start tag of the page with its attributes. Attribute values are double-quoted and
 * escaped throughout the page, so a quoted value cannot hold a '"' and this reading is exact.
 */
function startTags(page: string): Array<{ name: string; attributes: string; names: string[]; values: Record<string, string> }> {
  return [...page.matchAll(/<([a-zA-Z][\w:-]*)((?:\s+[\w:-]+(?:="[^"]*")?)*)\s*\/?>/g)].map((match) => {
    const attributes = match[2] ?? '';
    const pairs = [...attributes.matchAll(/\s+([\w:-]+)(?:="([^"]*)")?/g)];
    return {
      name: (match[1] as string).toLowerCase(),
      attributes,
      names: pairs.map((pair) => (pair[1] as string).toLowerCase()),
      values: Object.fromEntries(pairs.map((pair) => [(pair[1] as string).toLowerCase(), pair[2] ?? ''])),
    };
  });
}

function figures(page: string): string[] {
  return [...page.matchAll(/<figure\b[\s\S]*?<\/figure>/g)].map((match) => match[0]);
}

describe('the report page of a small known snapshot', () => {
  let page: string;

  beforeAll(async () => {
    page = await renderReportPage(input());
  });

  test('the top shows the summary, the data, n, the confidence level, the adjustment and the cautions', () => {
    expect(page).toContain('The population holds 1,000 contacted customers &lt;with a summary that mentions a tag&gt;.');
    expect(page).toContain('<dt>Data</dt><dd>campaign winter-bulbs; one row per contacted customer');
    expect(page).toContain('<dt>n</dt><dd>1,000 contacted customers; 131 converted</dd>');
    expect(page).toContain('<dt>Confidence level</dt><dd>95%</dd>');
    expect(page).toContain('<dt>Adjustment</dt><dd>Benjamini–Hochberg (controls the false discovery rate), over 4 tests of the conversion rate</dd>');
    expect(page).toContain('<li>Targeting by age may be restricted; check local law.</li>');
    expect(page).toContain('<li>Birth dates are personal data.</li>');
  });

  test('a sales report shows its window', async () => {
    const snapshot = knownSnapshot();
    const sales: Snapshot = { ...snapshot, population: { ...snapshot.population, unit: 'customer', campaign_ids: null, window: { from: '2026-01-01', to: '2026-03-31' } } };
    const salesPage = await renderReportPage(input({ snapshot: sales, history: [sales] }));
    expect(salesPage).toContain('sales from 2026-01-01 to 2026-03-31 (both days included)');
  });

  test('segment names and the report name with markup appear only as escaped text', () => {
    expect(page).not.toContain(HOSTILE_SCRIPT);
    expect(page).not.toContain(HOSTILE_IMAGE);
    expect(page).not.toContain('<b>bulbs</b>');
    expect(page).toContain(escapeHtml(HOSTILE_SCRIPT));
    expect(page).toContain(escapeHtml(HOSTILE_IMAGE));
    expect(page).toContain('<h1>Winter &lt;b&gt;bulbs&lt;/b&gt;</h1>');
    expect(startTags(page).filter((tag) => tag.name === 'img')).toHaveLength(0);
  });

  test('the only script and the only stylesheet are inline with the response nonces, and no tag has a handler or a style attribute', () => {
    const tags = startTags(page);
    // Every "<" that opens a tag was read as one, so none escaped the checks below.
    expect(tags).toHaveLength([...page.matchAll(/<[a-zA-Z]/g)].length);
    expect(tags.filter((tag) => tag.name === 'script').map((tag) => tag.attributes)).toEqual([` nonce="${NONCES.script}"`]);
    expect(tags.filter((tag) => tag.name === 'style').map((tag) => tag.attributes)).toEqual([` nonce="${NONCES.style}"`]);
    for (const tag of tags) {
      expect(tag.names.filter((name) => name.startsWith('on') || name === 'style'), `<${tag.name}${tag.attributes}>`).toEqual([]);
    }
  });

  test('nothing is loaded from elsewhere: no src attributes, and links stay on this service or are data URLs', () => {
    const tags = startTags(page);
    expect(tags.filter((tag) => tag.names.includes('src'))).toHaveLength(0);
    const targets = tags.flatMap((tag) => [tag.values['href'], tag.values['action']].filter((target): target is string => target !== undefined));
    expect(targets.length).toBeGreaterThan(0);
    for (const target of targets) expect(target).toMatch(/^(\/|#|data:)/);
    expect(page).not.toMatch(/@import|url\(/);
  });

  test('every chart is a figure with role="img", an aria-label, a caption and a hidden data table', () => {
    const charts = figures(page);
    // The interval chart and one Pareto chart per dimension; one snapshot has no trend.
    expect(charts).toHaveLength(3);
    for (const chart of charts) {
      expect(chart).toMatch(/<div class="chart-image" role="img" aria-label="[^"]{20,}">\s*<svg/);
      expect(chart).toMatch(/<figcaption id="[\w-]+-caption">[^<]{20,}/);
      expect(chart).toMatch(/<div class="visually-hidden"><table class="chart-data"><caption>Data of the chart: [^<]+<\/caption>[\s\S]*<tbody><tr>/);
    }
    expect(charts.map((chart) => /id="([\w-]+)"/.exec(chart)?.[1])).toEqual(['interval-chart', 'pareto-1', 'pareto-2']);
  });

  test('the ranked table lists every segment in rank order, named as people say it, with its sentence folded away, and has sortable headings', () => {
    const table = /<table class="segments" id="segment-table">[\s\S]*?<\/table>/.exec(page)?.[0] ?? '';
    const rows = [...table.matchAll(/<tbody class="segment" data-verdict="([a-z_]+)"><tr class="figures"><td class="num" data-sort="([^"]*)">/g)].map((match) => [match[2], match[1]]);
    expect(rows).toEqual([
      ['1', 'better'],
      ['2', 'inconclusive'],
      ['3', 'equivalent'],
      ['4', 'worse'],
      ['', 'too_small'],
    ]);
    expect(table).toContain('<tr class="sentence"><td colspan="11"><details><summary>In words</summary><p>Sentence about channel kiosk.</p></details></td></tr></tbody>');
    // the readable name shows; the machine label (as in the CSV) is the tooltip and the sort key
    expect(table).toContain('<th scope="row" data-sort="channel=catalogue"><span title="channel=catalogue">catalogue</span></th>');
    expect(table).toContain('<th scope="row" data-sort="region=Northmoor"><span title="region=Northmoor">Northmoor</span></th>');
    expect(table).toContain('<th scope="col" data-type="number" aria-sort="ascending" class="num"><button type="button">Rank</button></th>');
    expect(table).toContain('<th scope="col" data-type="number" aria-sort="none" class="num"><button type="button">n</button></th>');
    expect(table).toContain('<button type="button">Expected rate</button>');
  });

  test('the picker offers the snapshots and the CSV and JSON pulls are linked for the shown snapshot', async () => {
    const second = knownSnapshot({ snapshot_id: 'snap-2', sequence: 2, created_at: '2026-03-09T06:00:00.000Z' });
    const first = knownSnapshot();
    const twoPage = await renderReportPage(
      input({
        snapshot: first,
        history: [first, second],
        choices: [
          { snapshot_id: 'snap-2', sequence: 2, created_at: second.created_at },
          { snapshot_id: 'snap-1', sequence: 1, created_at: first.created_at },
        ],
      }),
    );
    expect(twoPage).toContain('<form method="get" action="/reports/report-1" class="picker">');
    expect(twoPage).toContain('<option value="snap-2">#2 — 2026-03-09 06:00 UTC</option>');
    expect(twoPage).toContain('<option value="snap-1" selected>#1 — 2026-03-02 06:00 UTC</option>');
    expect(twoPage).toContain('<a href="/v1/reports/report-1/segments?format=csv&amp;snapshot=snap-1" id="csv-link">CSV</a>');
    expect(twoPage).toContain('<a href="/v1/reports/report-1/segments?snapshot=snap-1" id="json-link">JSON</a>');
    // The trend covers snapshots up to the shown one only: here there is just one.
    expect(twoPage).not.toContain('id="trend-chart"');
  });

  test('with several snapshots the trend chart follows the top segments', async () => {
    const first = knownSnapshot();
    const second = knownSnapshot({ snapshot_id: 'snap-2', sequence: 2, created_at: '2026-03-09T06:00:00.000Z' });
    const trendPage = await renderReportPage(input({ snapshot: second, history: [second, first] }));
    expect(trendPage).toContain('id="trend-chart"');
    expect(figures(trendPage)).toHaveLength(4);
  });

  test('the open demo mode banner shows in open mode only', async () => {
    expect(page).not.toContain(OPEN_MODE_BANNER);
    const open = await renderReportPage(input({ openMode: true }));
    expect(open).toContain(`<p class="banner" role="note" id="open-mode-banner">${OPEN_MODE_BANNER}</p>`);
  });

  test('the print stylesheet hides the picker and fits charts to the page width', () => {
    const print = /@media print \{([\s\S]*)\}\s*<\/style>/.exec(page)?.[1] ?? '';
    expect(print).toMatch(/\.controls form[^{]*\{ display: none !important; \}/);
    expect(print).toMatch(/\.chart-image svg \{ width: 100%; max-width: 100%; height: auto; \}/);
  });
});

describe('the report page of an empty population', () => {
  test('renders without charts that would be empty, and says why', async () => {
    const base = knownSnapshot();
    const empty: Snapshot = {
      ...base,
      segments: base.segments.filter((segment) => !segment.tested),
      dimensions: base.dimensions.map((profile) => ({ ...profile, values: [] })),
      population: { ...base.population, n: 0, age_value_correlation: { n: 0, r: null, ci_low: null, ci_high: null, p_value: null, note: 'There are no units with both an age and a value.' } },
    };
    const page = await renderReportPage(input({ snapshot: empty, history: [empty] }));
    expect(figures(page)).toHaveLength(0);
    expect(page).toContain('No segment could be tested and no dimension has values in this snapshot, so there is nothing to chart.');
    expect(page).toContain('The correlation is not computed: There are no units with both an age and a value.');
  });
});

describe('the top of the page: the decision', () => {
  let page: string;

  beforeAll(async () => {
    page = await renderReportPage(input());
  });

  test('the decision comes before the summary, the charts and the table', () => {
    const at = (marker: string) => page.indexOf(marker);
    expect(at('id="decision-heading"')).toBeGreaterThan(0);
    expect(at('id="decision-heading"')).toBeLessThan(at('id="summary-heading"'));
    expect(at('id="summary-heading"')).toBeLessThan(at('id="charts-heading"'));
    expect(at('id="charts-heading"')).toBeLessThan(at('id="table-heading"'));
  });

  test('it names the segment to target, the one to avoid and the uncertain one, each with its expected rate, interval and n', () => {
    const section = /<section aria-labelledby="decision-heading"[\s\S]*?<\/section>/.exec(page)?.[0] ?? '';
    expect(section).toContain('Of 4 segments tested on conversion rate, 1 does better than the rest, 1 does worse, 1 is still too uncertain to call and 1 is equivalent to the rest within the margin; 1 is too small to test.');
    // catalogue: 60 of 250 = 24.0%; the fixture's interval is ±20% of the rate, the rest converts at 10%
    expect(section).toMatch(/id="decision-target"><h3>▲ Target \(1\)<\/h3>[\s\S]*<li><strong>catalogue<\/strong>: 24\.0% \(19\.2% to 28\.8%\) vs 10\.0% for the rest; n 250<\/li>/);
    // the markup-named region is escaped here too: 8 of 200 = 4.0%
    expect(section).toContain(`id="decision-avoid"><h3>▼ Avoid or rethink (1)</h3>`);
    expect(section).toContain(`<li><strong>${escapeHtml(HOSTILE_IMAGE)}</strong>: 4.0% (3.2% to 4.8%) vs 10.0% for the rest; n 200</li>`);
    expect(section).toContain(`<li><strong>${escapeHtml(HOSTILE_SCRIPT)}</strong>: 15.0% (12.0% to 18.0%) vs 10.0% for the rest; n 120</li>`);
    expect(section).toContain('1 segment is equivalent to the rest within the equivalence margin: plan it like everyone else.');
    expect(section).not.toContain('Northmoor');
  });

  test('the settings behind the figures are folded away, and the filter offers each verdict present with its count', () => {
    expect(page).toMatch(/<details class="method"><summary>The report in one paragraph, and how these figures were made[^<]*<\/summary>\n<p class="summary">[^<]+<\/p>\n<dl class="facts">/);
    const filter = /<fieldset class="verdict-filter no-print">[\s\S]*?<\/fieldset>/.exec(page)?.[0] ?? '';
    expect([...filter.matchAll(/id="filter-([a-z_]+)"/g)].map((match) => match[1])).toEqual(['all', 'better', 'worse', 'inconclusive', 'equivalent', 'too_small']);
    expect(filter).toContain('<input type="radio" name="verdict-filter" id="filter-all" value="all" checked> all segments (5)');
  });
});
