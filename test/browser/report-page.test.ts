/**
 * The report page in a real browser: Chromium (Debian's, or CHROMIUM_PATH), driven headless by
 * playwright-core (no browser is downloaded); skipped without one unless REQUIRE_BROWSER=1.
 * The service listens on an ephemeral loopback port with the invented demo data; the page must
 * load with no console errors and nothing fetched from elsewhere, show every chart with its text
 * alternative, sort its table, switch snapshots, and print without its controls. Screenshots go
 * to test-output/browser/ (git-ignored).
 */
import fs from 'node:fs';
import path from 'node:path';
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createKey } from '../../src/auth/keys.js';
import type { Snapshot } from '../../src/report/shapes/index.js';
import { MAX_INTERVAL_ROWS, chartedRows, intervalRows } from '../../src/view/charts/interval.js';
import { OPEN_MODE_BANNER } from '../../src/view/page.js';
import { DEFAULT_DEMO_OPTIONS, generateDemoData } from '../../seed/generate.js';
import { loadDemoData } from '../../seed/load.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { CHROMIUM_AVAILABLE, CHROMIUM_PATH } from '../support/chromium.js';
import { generateDataset, uploadRows } from '../support/report-data.js';
import { HOSTILE_IMAGE, HOSTILE_SCRIPT } from '../support/snapshot-fixture.js';
import { CSV, toCsv, upload } from '../support/upload-client.js';

const CHROMIUM_ARGS = ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'];
const OUTPUT = path.resolve('test-output', 'browser');
// A clock after every date in the demo data (sales run to mid-November 2026).
const DEMO_NOW = new Date('2026-12-01T12:00:00Z');
const PAGE_TIMEOUT_MS = 60_000;

interface Watched {
  errors: string[];
  foreignRequests: string[];
  dialogs: string[];
}

/** Records console errors, page errors, dialogs and any request that leaves the service. */
function watch(page: Page, origin: string): Watched {
  const watched: Watched = { errors: [], foreignRequests: [], dialogs: [] };
  page.on('console', (message) => {
    if (message.type() === 'error' || message.type() === 'warning') watched.errors.push(`${message.type()}: ${message.text()}`);
  });
  page.on('pageerror', (error) => watched.errors.push(`page error: ${error.message}`));
  page.on('dialog', (dialog) => {
    watched.dialogs.push(dialog.message());
    void dialog.dismiss();
  });
  page.on('request', (request) => {
    const url = request.url();
    if (!url.startsWith(`${origin}/`) && !url.startsWith('data:')) watched.foreignRequests.push(url);
  });
  return watched;
}

async function launch(): Promise<Browser> {
  return chromium.launch({ executablePath: CHROMIUM_PATH, args: CHROMIUM_ARGS });
}

/** Customers whose region is markup, each contacted by the spring campaign, so their segments are tested. */
function hostileUploads(): { customers: string; contacts: string } {
  const customers: Array<Record<string, unknown>> = [];
  const contacts: Array<Record<string, unknown>> = [];
  [HOSTILE_SCRIPT, HOSTILE_IMAGE].forEach((region, regionIndex) => {
    for (let index = 0; index < 40; index += 1) {
      const customerId = `QG-X${regionIndex}${String(index).padStart(3, '0')}`;
      customers.push({ customer_id: customerId, birth_date: `19${60 + (index % 30)}-04-0${1 + (index % 9)}`, region, channel: 'web shop', customer_type: 'individual', newsletter: 'no' });
      const converted = index % 8 === 0;
      contacts.push({ customer_id: customerId, contacted_at: '2026-03-16', converted: converted ? 1 : 0, revenue: converted ? '41.50' : '0' });
    }
  });
  return { customers: toCsv(customers), contacts: toCsv(contacts) };
}

describe.skipIf(!CHROMIUM_AVAILABLE)('the demo report page in headless Chromium', () => {
  let context: TestApp;
  let browser: Browser;
  let origin: string;
  let reportId: string;
  let first: Snapshot;
  let second: Snapshot;

  beforeAll(async () => {
    fs.mkdirSync(OUTPUT, { recursive: true });
    // The event-loop guard is off: loading the demo while a browser starts can stall a busy machine for a moment.
    context = await createTestApp('sqlite', { maxEventLoopDelayMs: 0 }, () => DEMO_NOW);
    await loadDemoData(context.app, generateDemoData(DEFAULT_DEMO_OPTIONS));
    const created = await context.app.inject({ method: 'POST', url: '/v1/reports', payload: { name: 'Spring seed sale 2026', source: { campaign_ids: ['spring-seed-sale-2026'] } } });
    expect(created.statusCode, created.body).toBe(201);
    reportId = created.json().report_id;
    const refresh = async () => {
      const response = await context.app.inject({ method: 'POST', url: `/v1/reports/${reportId}/refresh` });
      expect(response.statusCode, response.body).toBe(201);
      return response.json() as Snapshot;
    };
    first = await refresh();
    const hostile = hostileUploads();
    for (const [url, payload] of [
      ['/v1/customers', hostile.customers],
      ['/v1/campaigns/spring-seed-sale-2026/contacts', hostile.contacts],
    ] as const) {
      const response = await upload(context.app, url, CSV, payload);
      expect(response.statusCode, response.body).toBe(201);
    }
    second = await refresh();
    origin = await context.app.listen({ port: 0, host: '127.0.0.1' });
    browser = await launch();
  }, 120_000);

  afterAll(async () => {
    await browser?.close();
    await context?.close();
  });

  async function open(url: string): Promise<{ page: Page; watched: Watched; bytes: number; browserContext: BrowserContext }> {
    const browserContext = await browser.newContext({ viewport: { width: 1280, height: 900 } });
    const page = await browserContext.newPage();
    const watched = watch(page, origin);
    const response = await page.goto(url, { timeout: PAGE_TIMEOUT_MS });
    expect(response?.status()).toBe(200);
    const bytes = (await response?.body())?.length ?? 0;
    return { page, watched, bytes, browserContext };
  }

  test('the page loads with no console errors, fetches nothing from elsewhere, and is saved as a screenshot', async () => {
    const { page, watched, bytes, browserContext } = await open(`${origin}/reports/${reportId}`);
    try {
      await page.screenshot({ path: path.join(OUTPUT, 'report-page.png'), fullPage: true, timeout: PAGE_TIMEOUT_MS });
      fs.writeFileSync(path.join(OUTPUT, 'page-weight.txt'), `${bytes} bytes of HTML for snapshot #${second.sequence} of the demo report\n`);
      expect(watched.errors).toEqual([]);
      expect(watched.foreignRequests).toEqual([]);
      expect(watched.dialogs).toEqual([]);
      // This report's page measured 389,513 bytes once the expected-figure columns were added
      // (page-height.txt has the latest figure); the budget keeps about 10 % headroom.
      expect(bytes).toBeLessThan(430_000);
      await expect(page.title()).resolves.toBe(`Spring seed sale 2026 — segment report #${second.sequence}`);
      expect(await page.locator('#open-mode-banner').textContent()).toBe(OPEN_MODE_BANNER);
      expect(fs.statSync(path.join(OUTPUT, 'report-page.png')).size).toBeGreaterThan(10_000);
    } finally {
      await browserContext.close();
    }
  }, 120_000);

  test('at 1400 × 900 the decision is on the first screen and everything above the full table fits in four screen heights', async () => {
    const browserContext = await browser.newContext({ viewport: { width: 1400, height: 900 } });
    try {
      const page = await browserContext.newPage();
      const response = await page.goto(`${origin}/reports/${reportId}`, { timeout: PAGE_TIMEOUT_MS });
      const bytes = (await response?.body())?.length ?? 0;
      const top = async (selector: string) => (await page.locator(selector).first().boundingBox())?.y ?? Number.NaN;
      const bottom = async (selector: string) => {
        const box = await page.locator(selector).first().boundingBox();
        return box ? box.y + box.height : Number.NaN;
      };
      // Measured at scroll 0, so viewport coordinates are page coordinates.
      const measured = {
        decisionTop: await top('#decision-heading'),
        firstTargetBottom: await bottom('#decision-target li'),
        tableTop: await top('#table-heading'),
        pageHeight: Number(await page.evaluate('document.documentElement.scrollHeight')),
      };
      const line = `demo report, snapshot #${second.sequence}, 1400 × 900: ${bytes} bytes of HTML; page ${measured.pageHeight} px tall; the full table starts at ${Math.round(measured.tableTop)} px`;
      fs.writeFileSync(path.join(OUTPUT, 'page-height.txt'), `${line}\n`);
      console.log(line);
      expect(measured.firstTargetBottom).toBeLessThanOrEqual(900);
      expect(measured.decisionTop).toBeLessThan(measured.tableTop);
      expect(measured.tableTop).toBeLessThanOrEqual(4 * 900);
      // The table is still all there: one row group per segment.
      expect(await page.locator('#segment-table tbody.segment').count()).toBe(second.segments.length);
    } finally {
      await browserContext.close();
    }
  }, 120_000);

  test('with scripts off the page still works: sentences open on click and the verdict filter shows one verdict', async () => {
    const browserContext = await browser.newContext({ viewport: { width: 1400, height: 900 }, javaScriptEnabled: false });
    try {
      const page = await browserContext.newPage();
      await page.goto(`${origin}/reports/${reportId}`, { timeout: PAGE_TIMEOUT_MS });
      const firstSentence = page.locator('#segment-table tbody.segment').first().locator('details');
      const sentenceText = firstSentence.locator('p');
      expect(await sentenceText.isVisible()).toBe(false);
      await firstSentence.locator('summary').click();
      expect(await sentenceText.isVisible()).toBe(true);
      expect((await sentenceText.textContent())?.length ?? 0).toBeGreaterThan(40);

      const visibleVerdicts = () =>
        page.locator('#segment-table tbody.segment').evaluateAll((bodies) => bodies.filter((body) => body.getBoundingClientRect().height > 0).map((body) => body.getAttribute('data-verdict')));
      expect(await visibleVerdicts()).toHaveLength(second.segments.length);
      await page.locator('#filter-better').check();
      const better = second.segments.filter((segment) => segment.verdict === 'better').length;
      expect(better).toBeGreaterThan(0);
      expect(await visibleVerdicts()).toEqual(Array.from({ length: better }, () => 'better'));
      await page.locator('#filter-all').check();
      expect(await visibleVerdicts()).toHaveLength(second.segments.length);
    } finally {
      await browserContext.close();
    }
  }, 120_000);

  test('every chart is present with a role="img" label, a caption and a hidden data table', async () => {
    const { page, browserContext } = await open(`${origin}/reports/${reportId}`);
    try {
      const figures = await page.locator('figure.chart').evaluateAll((elements) =>
        elements.map((figure) => {
          const image = figure.querySelector('[role="img"]');
          const svg = image?.querySelector('svg');
          const hidden = figure.querySelector('.visually-hidden');
          const box = hidden?.getBoundingClientRect();
          return {
            id: figure.id,
            label: image?.getAttribute('aria-label') ?? '',
            svgWidth: svg?.getBoundingClientRect().width ?? 0,
            caption: figure.querySelector('figcaption')?.textContent?.trim() ?? '',
            labelledBy: figure.getAttribute('aria-labelledby'),
            dataRows: hidden?.querySelectorAll('tbody tr').length ?? 0,
            hiddenSize: box ? box.width * box.height : -1,
          };
        }),
      );
      const ids = figures.map((figure) => figure.id);
      expect(ids.slice(0, 4)).toEqual(['interval-chart', 'pareto-1', 'pareto-2', 'pareto-3']);
      expect(ids).toContain('trend-chart');
      // The snapshot carries the binned distributions, so they are drawn rather than summarised in a table.
      expect(ids).toEqual(expect.arrayContaining(['age-histogram', 'value-histogram', 'scatter-age-value']));
      expect(await page.locator('#distribution-summary').count()).toBe(0);
      for (const figure of figures) {
        expect(figure.label.length, figure.id).toBeGreaterThan(40);
        expect(figure.svgWidth, figure.id).toBeGreaterThan(100);
        expect(figure.caption.length, figure.id).toBeGreaterThan(40);
        expect(figure.labelledBy, figure.id).toBe(`${figure.id}-caption`);
        expect(figure.dataRows, figure.id).toBeGreaterThan(0);
        expect(figure.hiddenSize, figure.id).toBeLessThanOrEqual(1);
      }
      // Beyond MAX_INTERVAL_ROWS tested segments the chart keeps the decided ones and the best-ranked others.
      const charted = chartedRows(intervalRows(second)).length;
      expect(charted).toBe(Math.min(MAX_INTERVAL_ROWS, second.segments.filter((segment) => segment.tested).length));
      expect(figures[0]?.dataRows).toBe(charted);
      expect(await page.locator('#interval-chart svg .estimates_marks path').count()).toBe(charted);
    } finally {
      await browserContext.close();
    }
  }, 120_000);

  test('segment names with markup show as text, and nothing in them runs', async () => {
    const { page, watched, browserContext } = await open(`${origin}/reports/${reportId}`);
    try {
      // Region labels read alone in the table; the machine label is the tooltip.
      const rowHeadings = await page.locator('#segment-table tbody th[scope="row"]').allTextContents();
      expect(rowHeadings).toContain(HOSTILE_SCRIPT);
      expect(rowHeadings).toContain(HOSTILE_IMAGE);
      expect(await page.getByTitle(`region=${HOSTILE_SCRIPT}`, { exact: true }).textContent()).toBe(HOSTILE_SCRIPT);
      expect(await page.locator('img').count()).toBe(0);
      expect(await page.locator('script').count()).toBe(1);
      expect(await page.locator('[onerror],[onload],[onclick]').count()).toBe(0);
      // The region Pareto chart draws every region, the markup-named ones as text labels.
      const axisLabels = await page.locator('#pareto-2 svg text').allTextContents();
      expect(axisLabels.some((text) => text.startsWith('<script>'))).toBe(true);
      expect(watched.dialogs).toEqual([]);
    } finally {
      await browserContext.close();
    }
  }, 120_000);

  test('the ranked table sorts by a column, both ways, keeping missing figures last', async () => {
    const { page, browserContext } = await open(`${origin}/reports/${reportId}`);
    try {
      const nColumn = async () => page.locator('#segment-table tbody tr.figures').evaluateAll((rows) => rows.map((row) => Number(row.querySelectorAll('td, th')[2]?.getAttribute('data-sort'))));
      const heading = page.locator('#segment-table thead th', { has: page.locator('button', { hasText: /^n$/ }) });
      await heading.locator('button').click();
      expect(await heading.getAttribute('aria-sort')).toBe('ascending');
      const ascending = await nColumn();
      expect(ascending).toEqual([...ascending].sort((left, right) => left - right));
      await heading.locator('button').click();
      expect(await heading.getAttribute('aria-sort')).toBe('descending');
      const descending = await nColumn();
      expect(descending).toEqual([...ascending].sort((left, right) => right - left));
      expect(await page.locator('#segment-table thead th[aria-sort="ascending"]').count()).toBe(0);
      expect(await page.locator('#sort-status').textContent()).toBe('Sorted by n, descending.');

      // Untested segments have no rank: they stay at the end in both directions.
      const rankHeading = page.locator('#segment-table thead th', { has: page.locator('button', { hasText: /^Rank$/ }) });
      await rankHeading.locator('button').click();
      await rankHeading.locator('button').click();
      const ranks = await page.locator('#segment-table tbody tr.figures').evaluateAll((rows) => rows.map((row) => row.querySelectorAll('td, th')[0]?.getAttribute('data-sort') ?? ''));
      expect(await rankHeading.getAttribute('aria-sort')).toBe('descending');
      const ranked = ranks.filter((rank) => rank !== '').map(Number);
      expect(ranked[0]).toBe(Math.max(...ranked));
      expect(ranks.slice(ranked.length).every((rank) => rank === '')).toBe(true);
    } finally {
      await browserContext.close();
    }
  }, 120_000);

  test('the snapshot picker switches to an earlier snapshot', async () => {
    const { page, watched, browserContext } = await open(`${origin}/reports/${reportId}`);
    try {
      expect(await page.locator('#snapshot-picker option').count()).toBe(2);
      await Promise.all([page.waitForURL(`**/reports/${reportId}?snapshot=${first.snapshot_id}`, { timeout: PAGE_TIMEOUT_MS }), page.selectOption('#snapshot-picker', first.snapshot_id)]);
      expect(await page.locator('.subtitle').textContent()).toMatch(new RegExp(`^Snapshot #${first.sequence},`));
      expect(await page.locator('#snapshot-picker').inputValue()).toBe(first.snapshot_id);
      // The first snapshot has nothing before it to trend against, and predates the markup-named customers.
      expect(await page.locator('#trend-chart').count()).toBe(0);
      expect(await page.locator('#segment-table tbody th[scope="row"]', { hasText: '<script>' }).count()).toBe(0);
      expect(await page.locator('#csv-link').getAttribute('href')).toBe(`/v1/reports/${reportId}/segments?format=csv&snapshot=${first.snapshot_id}`);
      expect(watched.errors).toEqual([]);
    } finally {
      await browserContext.close();
    }
  }, 120_000);

  test('the CSV and JSON links of the page return the pulls of the shown snapshot', async () => {
    const { page, browserContext } = await open(`${origin}/reports/${reportId}`);
    try {
      const csvHref = await page.locator('#csv-link').getAttribute('href');
      const jsonHref = await page.locator('#json-link').getAttribute('href');
      const csv = await page.request.get(`${origin}${csvHref}`);
      expect(csv.status()).toBe(200);
      expect(csv.headers()['content-type']).toMatch(/^text\/csv/);
      const json = await page.request.get(`${origin}${jsonHref}`);
      expect((await json.json()).snapshot_id).toBe(second.snapshot_id);
    } finally {
      await browserContext.close();
    }
  }, 120_000);

  test('in print, the picker is hidden and every chart fits the page width', async () => {
    const { page, browserContext } = await open(`${origin}/reports/${reportId}`);
    try {
      await page.emulateMedia({ media: 'print' });
      expect(await page.locator('#snapshot-picker').isVisible()).toBe(false);
      const main = await page.locator('main').boundingBox();
      const rights = await page.locator('figure.chart svg').evaluateAll((charts) => charts.map((chart) => chart.getBoundingClientRect().right));
      expect(rights.length).toBeGreaterThan(0);
      for (const right of rights) expect(right).toBeLessThanOrEqual((main?.x ?? 0) + (main?.width ?? 0) + 1);
      await page.locator('#interval-chart').screenshot({ path: path.join(OUTPUT, 'interval-chart-print.png') });
    } finally {
      await browserContext.close();
    }
  }, 120_000);

  test('in greyscale and with red-green colour blindness emulated, the charts are saved for a look', async () => {
    const { page, browserContext } = await open(`${origin}/reports/${reportId}`);
    try {
      const session = await browserContext.newCDPSession(page);
      for (const deficiency of ['achromatopsia', 'deuteranopia'] as const) {
        await session.send('Emulation.setEmulatedVisionDeficiency', { type: deficiency });
        const file = path.join(OUTPUT, `interval-chart-${deficiency}.png`);
        await page.locator('#interval-chart').screenshot({ path: file });
        expect(fs.statSync(file).size).toBeGreaterThan(10_000);
      }
      // Shape and word carry the verdict, not colour alone: four verdicts, four shapes, four words.
      const shapes = await page.locator('#interval-chart svg .estimates_marks path').evaluateAll((paths) => new Set(paths.map((shape) => shape.getAttribute('d'))).size);
      const words = new Set(await page.locator('#interval-chart svg .verdict_labels_marks text').allTextContents());
      expect(shapes).toBe(new Set(chartedRows(intervalRows(second)).map((row) => row.verdict)).size);
      expect(words.size).toBe(shapes);
    } finally {
      await browserContext.close();
    }
  }, 120_000);
});

describe.skipIf(!CHROMIUM_AVAILABLE)('the report page in headless Chromium with API keys', () => {
  let context: TestApp;
  let browser: Browser;
  let origin: string;
  let reportId: string;
  let readKey: string;

  beforeAll(async () => {
    context = await createTestApp('sqlite', { authMode: 'keys', maxEventLoopDelayMs: 0 });
    const admin = `Bearer ${(await createKey(context.database.handle.db, 'admin', 'setup')).key}`;
    readKey = (await createKey(context.database.handle.db, 'read', 'analyst browser')).key;
    const dataset = generateDataset({ seed: 11, customers: 400, baseRate: 0.12, plantedRegion: 'Northfield', plantedRate: 0.25 });
    await uploadRows(context.app, '/v1/customers', dataset.customers, { authorization: admin });
    await uploadRows(context.app, '/v1/campaigns/thaw/contacts', dataset.contacts, { authorization: admin });
    const created = await context.app.inject({ method: 'POST', url: '/v1/reports', headers: { authorization: admin }, payload: { name: 'Thaw', source: { campaign_ids: ['thaw'] }, dimensions: ['region'] } });
    reportId = created.json().report_id;
    expect((await context.app.inject({ method: 'POST', url: `/v1/reports/${reportId}/refresh`, headers: { authorization: admin } })).statusCode).toBe(201);
    origin = await context.app.listen({ port: 0, host: '127.0.0.1' });
    browser = await launch();
  }, 120_000);

  afterAll(async () => {
    await browser?.close();
    await context?.close();
  });

  test('the browser logs in with the read key as the Basic password, and sees no demo banner', async () => {
    const browserContext = await browser.newContext({ httpCredentials: { username: 'analyst', password: readKey } });
    try {
      const page = await browserContext.newPage();
      const watched = watch(page, origin);
      const response = await page.goto(`${origin}/reports/${reportId}`, { timeout: PAGE_TIMEOUT_MS });
      expect(response?.status()).toBe(200);
      expect(await page.locator('h1').textContent()).toBe('Thaw');
      expect(await page.locator('#open-mode-banner').count()).toBe(0);
      expect(watched.errors).toEqual([]);
    } finally {
      await browserContext.close();
    }
  }, 120_000);

  test('without credentials the page answers 401 with a Basic challenge', async () => {
    const browserContext = await browser.newContext();
    try {
      const response = await browserContext.request.get(`${origin}/reports/${reportId}`);
      expect(response.status()).toBe(401);
      expect(response.headers()['www-authenticate']).toMatch(/^Basic realm="segrank"/);
    } finally {
      await browserContext.close();
    }
  }, 120_000);
});
