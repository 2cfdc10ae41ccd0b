/**
 * Renders a Vega-Lite specification to SVG on the server: compile to Vega, run a headless
 * view (renderer "none": no canvas, no DOM) and serialise the scene graph as SVG. The result
 * is checked to be inert before it is returned.
 */
import * as vega from 'vega';
import { compile, type TopLevelSpec } from 'vega-lite';
import { assertInertSvg } from './svg-safety.js';
import { measureTextItem, type TextItem } from './text-width.js';

// The library's documented hook for a text measure when no canvas is available (its own
// source names vl-convert as a user of it): without it every character counts as 0.8 em.
(vega as unknown as { textMetrics: { width: (item: TextItem, text: unknown) => number } }).textMetrics.width = measureTextItem;

/** Settings every chart shares: no per-mark ARIA text (each figure carries its own text alternative), system fonts, dark ink. */
const CHART_CONFIG = {
  aria: false,
  background: null,
  font: 'system-ui, -apple-system, "Segoe UI", Roboto, sans-serif',
  axis: { labelFontSize: 11, titleFontSize: 11, labelColor: '#222', titleColor: '#222', domainColor: '#555', tickColor: '#555', gridColor: '#e4e4e4' },
  legend: { labelFontSize: 11, titleFontSize: 11, labelColor: '#222', titleColor: '#222' },
  view: { stroke: null },
} as const;

/** A logger in the libraries' own interface that keeps warnings instead of printing them to the console. */
function collectingLogger(warnings: string[]): vega.LoggerInterface {
  return vega.logger(vega.Warn, undefined, (_method: string, level: string, input: readonly unknown[]) => {
    warnings.push(`${level}: ${Array.from(input).map(String).join(' ')}`);
  });
}

/**
 * Compiles a Vega-Lite spec (Vega-Lite 5) and renders it with Vega 5's headless view to an SVG
 * string. The libraries' warnings (a setting dropped, a conflict resolved) go into `warnings`
 * rather than the console; the tests of each chart expect none.
 * @throws Error when the spec does not compile, or UnsafeSvgError when the output is not inert
 * @example
 * const svg = await renderChart({ data: { values: [{ a: 1 }] }, mark: 'point', encoding: { x: { field: 'a', type: 'quantitative' } } });
 * // '<svg xmlns="http://www.w3.org/2000/svg" …>…</svg>'
 */
export async function renderChart(spec: TopLevelSpec, warnings: string[] = []): Promise<string> {
  const withConfig = { ...spec, config: { ...CHART_CONFIG, ...(spec.config ?? {}) } } as TopLevelSpec;
  const logger = collectingLogger(warnings);
  const view = new vega.View(vega.parse(compile(withConfig, { logger }).spec), { renderer: 'none', logger });
  try {
    const svg = await view.toSVG();
    assertInertSvg(svg);
    return svg;
  } finally {
    view.finalize();
  }
}
