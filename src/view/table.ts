/**
 * The ranked table of a snapshot: every segment in rank order (untested ones last), named as
 * people say it, its figures with their intervals (and adjusted p-values under the
 * differences), the verdict as symbol and word, and under them its sentence across the whole
 * width, folded away until opened; a filter above shows one verdict at a time. Each segment is one <tbody> (figures row and sentence row), so
 * sorting moves the two together. Each cell carries a plain sort key, so the page's script
 * sorts without parsing formatted text.
 */
import { formatCount, formatMoney, formatPercent, formatPoints, formatPValue, formatRank, formatRatio, formatSignedMoney, readableSegmentName } from '../report/wording/index.js';
import type { Snapshot, SnapshotSegment, Verdict } from '../report/shapes/index.js';
import { html, type SafeHtml } from './html.js';
import { VERDICT_STYLES } from './verdicts.js';

interface Column {
  heading: string;
  /** how the column's sort keys compare */
  type: 'number' | 'text';
  numeric: boolean;
  cell(segment: SnapshotSegment): { text: SafeHtml | string; sortKey: string };
}

const VERDICT_ORDER = ['better', 'equivalent', 'inconclusive', 'worse', 'too_small'];

function keyOf(value: number | null): string {
  return value === null ? '' : String(value);
}

/** The estimate, and under it in small type the interval and, for a comparison, the adjusted p-value. */
function withInterval(estimate: number | null, low: number | null, high: number | null, format: (value: number) => string, adjustedP?: number | null): SafeHtml {
  if (estimate === null) return html`<span title="not computed">—</span>`;
  const interval = low !== null && high !== null ? html`<span class="ci">${format(low)} to ${format(high)}</span>` : '';
  const test = adjustedP === undefined || adjustedP === null ? '' : html`<span class="ci">p ${adjustedP < 0.001 ? '' : '= '}${formatPValue(adjustedP)}</span>`;
  return html`${format(estimate)}${interval}${test}`;
}

const COLUMNS: readonly Column[] = [
  { heading: 'Rank', type: 'number', numeric: true, cell: (segment) => ({ text: segment.rank === null ? '—' : formatRank(segment.rank), sortKey: keyOf(segment.rank) }) },
  {
    heading: 'Segment',
    type: 'text',
    numeric: false,
    // Named as people say it; the machine label (as in the CSV) is the tooltip and the sort key.
    cell: (segment) => ({ text: html`<span title="${segment.segment}">${readableSegmentName(segment.values)}</span>`, sortKey: segment.segment }),
  },
  {
    heading: 'n',
    type: 'number',
    numeric: true,
    cell: (segment) =>
      segment.n === null || segment.share === null
        ? { text: html`fewer than ${formatCount(segment.withheld_below ?? 0)}<span class="ci">withheld</span>`, sortKey: '0' }
        : { text: html`${formatCount(segment.n)}<span class="ci">${formatPercent(segment.share)} of all</span>`, sortKey: String(segment.n) },
  },
  {
    heading: 'Conversion rate',
    type: 'number',
    numeric: true,
    cell: (segment) => ({ text: withInterval(segment.conversion_rate, segment.conversion_rate_ci_low, segment.conversion_rate_ci_high, formatPercent), sortKey: keyOf(segment.conversion_rate) }),
  },
  {
    heading: 'Expected rate',
    type: 'number',
    numeric: true,
    cell: (segment) => ({ text: withInterval(segment.rate_expected, segment.rate_expected_ci_low, segment.rate_expected_ci_high, formatPercent), sortKey: keyOf(segment.rate_expected) }),
  },
  {
    heading: 'Rate vs rest (points)',
    type: 'number',
    numeric: true,
    cell: (segment) => ({ text: withInterval(segment.rate_diff, segment.rate_diff_ci_low, segment.rate_diff_ci_high, formatPoints, segment.rate_p_adjusted), sortKey: keyOf(segment.rate_diff) }),
  },
  {
    heading: 'Lift',
    type: 'number',
    numeric: true,
    cell: (segment) => ({ text: withInterval(segment.lift, segment.lift_ci_low, segment.lift_ci_high, formatRatio), sortKey: keyOf(segment.lift) }),
  },
  {
    heading: 'Value mean',
    type: 'number',
    numeric: true,
    cell: (segment) => ({ text: withInterval(segment.value_mean, segment.value_ci_low, segment.value_ci_high, formatMoney), sortKey: keyOf(segment.value_mean) }),
  },
  {
    heading: 'Expected value',
    type: 'number',
    numeric: true,
    cell: (segment) => ({ text: withInterval(segment.value_expected, segment.value_expected_ci_low, segment.value_expected_ci_high, formatMoney), sortKey: keyOf(segment.value_expected) }),
  },
  {
    heading: 'Value vs rest',
    type: 'number',
    numeric: true,
    cell: (segment) => ({ text: withInterval(segment.value_diff, segment.value_diff_ci_low, segment.value_diff_ci_high, formatSignedMoney, segment.value_p_adjusted), sortKey: keyOf(segment.value_diff) }),
  },
  {
    heading: 'Verdict',
    type: 'number',
    numeric: false,
    cell: (segment) => {
      const style = VERDICT_STYLES[segment.verdict];
      const explained = segment.explained_by === null ? '' : html`<span class="ci">explained by ${segment.explained_by}</span>`;
      return {
        text: html`<span class="verdict verdict-${segment.verdict}"><span aria-hidden="true">${style.symbol}</span> ${style.label}</span>${explained}`,
        sortKey: String(VERDICT_ORDER.indexOf(segment.verdict)),
      };
    },
  },
];

/** The verdicts in the order the filter offers them. */
const FILTER_VERDICTS: readonly Verdict[] = ['better', 'worse', 'inconclusive', 'equivalent', 'too_small'];

/**
 * Radio buttons that show only the segments of one verdict. The stylesheet does the hiding
 * (`:has()` on the checked button), so the filter works with scripts off.
 */
function verdictFilter(segments: readonly SnapshotSegment[]): SafeHtml {
  const option = (value: string, label: SafeHtml | string, count: number, checked: boolean) =>
    html`<label><input type="radio" name="verdict-filter" id="filter-${value}" value="${value}"${checked ? html` checked` : ''}> ${label} (${formatCount(count)})</label>`;
  const options = FILTER_VERDICTS.map((verdict) => [verdict, segments.filter((segment) => segment.verdict === verdict).length] as const)
    .filter(([, count]) => count > 0)
    .map(([verdict, count]) => option(verdict, html`<span aria-hidden="true">${VERDICT_STYLES[verdict].symbol}</span> ${VERDICT_STYLES[verdict].label}`, count, false));
  return html`<fieldset class="verdict-filter no-print"><legend>Show</legend>${option('all', 'all segments', segments.length, true)}${options}</fieldset>`;
}

/**
 * The ranked table as HTML: sortable headings (buttons, with aria-sort), one row per segment.
 * @example
 * rankedTable(snapshot); // <table id="segment-table" …>
 */
export function rankedTable(snapshot: Snapshot): SafeHtml {
  const segments = [...snapshot.segments].sort((left, right) => {
    if (left.rank !== null && right.rank !== null) return left.rank - right.rank;
    if (left.rank !== null) return -1;
    if (right.rank !== null) return 1;
    return 0;
  });
  const header = COLUMNS.map((column) => {
    const numeric = column.numeric ? html` class="num"` : '';
    // The table arrives in rank order, so that column starts as the sorted one.
    const sort = column.heading === 'Rank' ? 'ascending' : 'none';
    return html`<th scope="col" data-type="${column.type}" aria-sort="${sort}"${numeric}><button type="button">${column.heading}</button></th>`;
  });
  const bodies = segments.map((segment) => {
    const cells = COLUMNS.map((column) => {
      const cell = column.cell(segment);
      return column.heading === 'Segment'
        ? html`<th scope="row" data-sort="${cell.sortKey}">${cell.text}</th>`
        : html`<td${column.numeric ? html` class="num"` : ''} data-sort="${cell.sortKey}">${cell.text}</td>`;
    });
    // The sentence is folded away (open on click, no script needed), so the table stays a table.
    return html`<tbody class="segment" data-verdict="${segment.verdict}"><tr class="figures">${cells}</tr><tr class="sentence"><td colspan="${COLUMNS.length}"><details><summary>In words</summary><p>${segment.summary}</p></details></td></tr></tbody>\n`;
  });
  return html`${verdictFilter(segments)}<div class="table-wrap"><table class="segments" id="segment-table">
<caption class="visually-hidden">Ranked segments of this snapshot, each followed by its sentence, folded; the sortable column headings are buttons.</caption>
<thead><tr>${header}</tr></thead>
${bodies}</table></div>
<p class="visually-hidden" id="sort-status" role="status" aria-live="polite"></p>`;
}
