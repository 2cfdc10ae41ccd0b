/**
 * The distribution charts of a snapshot: histograms of age and of value, and age against
 * value. They are drawn from binned data the snapshot carries under `population`
 * (`age_histogram`, `value_histogram`: bins as the statistics core's `histogram` returns them;
 * `age_value_grid`: counts of an age × value grid). A snapshot without them (one stored before
 * they existed) gets the descriptive figures in a table instead, and the page says which
 * charts are missing and why; nothing is drawn from data the snapshot does not hold.
 */
import { formatCoefficient, formatCount, formatMoney, formatYears, vocabulary } from '../report/wording/index.js';
import type { Descriptives, Snapshot } from '../report/shapes/index.js';
import { histogramChart, type HistogramData } from './charts/histogram.js';
import { correlationSentence, scatterChart, type ScatterCell } from './charts/scatter.js';
import type { ChartFigure } from './figure.js';
import { html, type SafeHtml } from './html.js';

function isFiniteNumber(value: unknown): value is number {
  return typeof value === 'number' && Number.isFinite(value);
}

/** The histogram under `key`, when it is there and well-formed. */
export function readHistogram(population: object, key: string): HistogramData | null {
  const candidate = (population as Record<string, unknown>)[key];
  if (typeof candidate !== 'object' || candidate === null) return null;
  const { rule, bin_width: binWidth, bins, note } = candidate as Record<string, unknown>;
  if (typeof rule !== 'string' || !isFiniteNumber(binWidth) || !Array.isArray(bins) || bins.length === 0) return null;
  const wellFormed = bins.every(
    (bin: unknown) => typeof bin === 'object' && bin !== null && isFiniteNumber((bin as Record<string, unknown>)['low']) && isFiniteNumber((bin as Record<string, unknown>)['high']) && (isFiniteNumber((bin as Record<string, unknown>)['count']) || (bin as Record<string, unknown>)['count'] === null),
  );
  if (!wellFormed) return null;
  return { rule, bin_width: binWidth, bins: bins as HistogramData['bins'], note: typeof note === 'string' ? note : null };
}

/** The age × value grid, when it is there and well-formed. */
export function readGrid(population: object): ScatterCell[] | null {
  const candidate = (population as Record<string, unknown>)['age_value_grid'];
  if (!Array.isArray(candidate) || candidate.length === 0) return null;
  const fields = ['age_low', 'age_high', 'value_low', 'value_high', 'count'];
  const wellFormed = candidate.every((cell: unknown) => typeof cell === 'object' && cell !== null && fields.every((field) => isFiniteNumber((cell as Record<string, unknown>)[field])));
  return wellFormed ? (candidate as ScatterCell[]) : null;
}

function unitsWord(snapshot: Snapshot): string {
  return snapshot.population.unit === 'contact' ? 'contacted customers' : 'customers';
}

/** The charts the snapshot has data for, in page order: age, value, age against value. */
export async function distributionCharts(snapshot: Snapshot): Promise<ChartFigure[]> {
  const population = snapshot.population;
  const words = vocabulary(snapshot.definition);
  const figures: ChartFigure[] = [];
  const ageBins = readHistogram(population, 'age_histogram');
  if (ageBins) {
    figures.push(
      await histogramChart(ageBins, {
        id: 'age-histogram',
        name: 'age',
        unit: 'years',
        unitsWord: unitsWord(snapshot),
        format: (value) => String(Math.round(value * 10) / 10),
        leftOut: snapshot.data_quality.unknown_age > 0 ? `${formatCount(snapshot.data_quality.unknown_age)} ${unitsWord(snapshot)} without a known age are not in it.` : '',
      }),
    );
  }
  const valueBins = readHistogram(population, 'value_histogram');
  if (valueBins) {
    figures.push(
      await histogramChart(valueBins, {
        id: 'value-histogram',
        name: words.valueName,
        unit: 'currency units',
        unitsWord: words.valueUnits,
        format: formatMoney,
        leftOut: '',
      }),
    );
  }
  const grid = readGrid(population);
  if (grid) {
    figures.push(
      await scatterChart(grid, population.age_value_correlation, { valueName: words.valueName, unitsWord: unitsWord(snapshot), confidence: snapshot.definition.confidence, formatValue: formatMoney }),
    );
  }
  return figures;
}

/** "a", "a and b", "a, b and c". */
function listInWords(items: readonly string[]): string {
  return items.length <= 1 ? items.join('') : `${items.slice(0, -1).join(', ')} and ${items[items.length - 1] as string}`;
}

function descriptiveRow(name: string, figures: Descriptives, format: (value: number) => string): SafeHtml {
  const cell = (value: number | null) => (value === null ? '—' : format(value));
  return html`<tr><th scope="row">${name}</th><td class="num">${formatCount(figures.n)}</td><td class="num">${cell(figures.mean)}</td><td class="num">${cell(figures.median)}</td><td class="num">${cell(figures.q1)}</td><td class="num">${cell(figures.q3)}</td><td class="num">${cell(figures.standard_deviation)}</td><td class="num">${figures.skewness === null ? '—' : formatCoefficient(figures.skewness)}</td></tr>`;
}

/**
 * For a snapshot without the binned data: which charts are missing and why, the descriptive
 * figures of age and value in a table, and the correlation in words. Empty when nothing is missing.
 */
export function distributionFallback(snapshot: Snapshot): SafeHtml | '' {
  const population = snapshot.population;
  const missing = [
    readHistogram(population, 'age_histogram') ? null : 'the histogram of age',
    readHistogram(population, 'value_histogram') ? null : 'the histogram of value',
    readGrid(population) ? null : 'the scatter of age against value',
  ].filter((entry): entry is string => entry !== null);
  if (missing.length === 0) return '';
  const words = vocabulary(snapshot.definition);
  return html`<div class="distribution-summary" id="distribution-summary">
<h3>Distributions of age and value</h3>
<p>This snapshot does not hold the binned counts that ${listInWords(missing)} would be drawn from, so ${missing.length === 1 ? 'that chart is' : 'those charts are'} left out rather than drawn from anything else. Its descriptive figures:</p>
<div class="table-wrap"><table class="segments"><thead><tr><th scope="col"></th><th scope="col" class="num">n</th><th scope="col" class="num">mean</th><th scope="col" class="num">median</th><th scope="col" class="num">lower quartile</th><th scope="col" class="num">upper quartile</th><th scope="col" class="num">standard deviation</th><th scope="col" class="num">skewness</th></tr></thead>
<tbody>${descriptiveRow('age (years)', population.age_descriptives, formatYears)}${descriptiveRow(words.valueName, population.value_descriptives, formatMoney)}</tbody></table></div>
<p>Age and ${words.valueName}: ${correlationSentence(population.age_value_correlation, snapshot.definition.confidence)}</p>
</div>`;
}
