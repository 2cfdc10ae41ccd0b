/**
 * The page's opening answer to "whom do we target next": the segments to target (better than
 * the rest), to avoid (worse), and those still too uncertain to call, each with its expected
 * level of the ranking metric and the interval in words, then one line for the rest. The full
 * evidence follows in the charts and the table; this is what to tell marketing.
 */
import { formatConfidence, formatCount, readableSegmentName, vocabulary } from '../report/wording/index.js';
import { isPublished, type PublishedSegment, type Snapshot, type SnapshotSegment } from '../report/shapes/index.js';
import { html, type SafeHtml } from './html.js';
import { rankingMetric } from './metric.js';
import { VERDICT_STYLES } from './verdicts.js';
import { verdictMetric } from '../report/definition/index.js';

/** How many segments each list names before pointing to the table. */
const LISTED_PER_VERDICT = 5;

/** A segment's expected level with its interval and the rest's level: "29.6% (22.3% to 38.1%) vs 11.7% for the rest". */
function expectation(snapshot: Snapshot, segment: PublishedSegment): string {
  const metric = rankingMetric(snapshot.definition);
  const level = metric.levelOf(segment);
  const rest = verdictMetric(snapshot.definition) === 'conversion_rate' ? segment.rest.conversion_rate : segment.rest.value_mean;
  if (level.estimate === null) return `${metric.name} not computed`;
  const interval = level.low !== null && level.high !== null ? ` (${metric.level(level.low)} to ${metric.level(level.high)})` : '';
  return `${metric.level(level.estimate)}${interval}${rest === null ? '' : ` vs ${metric.level(rest)} for the rest`}`;
}

function entry(snapshot: Snapshot, segment: PublishedSegment): SafeHtml {
  return html`<li><strong>${readableSegmentName(segment.values)}</strong>: ${expectation(snapshot, segment)}; n ${formatCount(segment.n)}</li>`;
}

/** One list of the answer, or a line saying there is none. */
function verdictList(snapshot: Snapshot, options: { id: string; title: string; empty: string; note: string; segments: readonly PublishedSegment[] }): SafeHtml {
  const { segments } = options;
  const more = segments.length > LISTED_PER_VERDICT ? html`<p class="more">… and ${formatCount(segments.length - LISTED_PER_VERDICT)} more in the table below.</p>` : '';
  const body =
    segments.length === 0
      ? html`<p class="none">${options.empty}</p>`
      : html`<p class="note">${options.note}</p><ul>${segments.slice(0, LISTED_PER_VERDICT).map((segment) => entry(snapshot, segment))}</ul>${more}`;
  return html`<div class="decision-list" id="${options.id}"><h3>${options.title} (${formatCount(segments.length)})</h3>${body}</div>`;
}

/** "1 does", "3 do": a count with its verb in agreement. */
function counted(count: number, singular: string, plural: string): string {
  return `${formatCount(count)} ${count === 1 ? singular : plural}`;
}

function byRank(left: SnapshotSegment, right: SnapshotSegment): number {
  return (left.rank ?? Number.MAX_SAFE_INTEGER) - (right.rank ?? Number.MAX_SAFE_INTEGER);
}

/**
 * The decision section of the page.
 * @example
 * decisionSection(snapshot); // <section aria-labelledby="decision-heading"> … Target (11) … Avoid (5) …
 */
export function decisionSection(snapshot: Snapshot): SafeHtml {
  const metric = rankingMetric(snapshot.definition);
  // Withheld segments (small cells) are never named with figures; they count among the too small.
  const published = snapshot.segments.filter(isPublished);
  const of = (verdict: SnapshotSegment['verdict']) => published.filter((segment) => segment.verdict === verdict);
  const better = of('better').sort(byRank);
  // The worst first: the lowest upper bound is the clearest case for leaving a group out.
  const worse = of('worse').sort((left, right) => (metric.differenceOf(left).high ?? 0) - (metric.differenceOf(right).high ?? 0));
  // The uncertain ones that could matter most first: the highest upper bound of the difference.
  const uncertain = of('inconclusive').sort((left, right) => (metric.differenceOf(right).high ?? 0) - (metric.differenceOf(left).high ?? 0));
  const alike = of('equivalent').length;
  const small = snapshot.segments.length - published.length + of('too_small').length;
  const tested = snapshot.segments.length - small;
  return html`<section aria-labelledby="decision-heading" class="decision">
<h2 id="decision-heading">Whom to target next</h2>
<p class="lead">Of ${formatCount(tested)} ${tested === 1 ? 'segment' : 'segments'} tested on ${metric.name}, ${counted(better.length, 'does', 'do')} better than the rest, ${counted(worse.length, 'does', 'do')} worse, ${counted(uncertain.length, 'is', 'are')} still too uncertain to call and ${counted(alike, 'is', 'are')} equivalent to the rest within the margin${small > 0 ? `; ${counted(small, 'is', 'are')} too small to test` : ''}.
Each segment below: its expected ${metric.name} with the ${formatConfidence(snapshot.definition.confidence)} confidence interval, against everyone else, and how many ${vocabulary(snapshot.definition).units} it holds (n).</p>
<div class="decision-lists">
${verdictList(snapshot, {
  id: 'decision-target',
  title: `${VERDICT_STYLES.better.symbol} Target`,
  empty: 'No segment does clearly better than the rest.',
  note: 'Clearly better than the rest, after allowing for the number of segments tested; best first.',
  segments: better,
})}
${verdictList(snapshot, {
  id: 'decision-avoid',
  title: `${VERDICT_STYLES.worse.symbol} Avoid or rethink`,
  empty: 'No segment does clearly worse than the rest.',
  note: 'Clearly worse than the rest; the clearest first.',
  segments: worse,
})}
${verdictList(snapshot, {
  id: 'decision-uncertain',
  title: `${VERDICT_STYLES.inconclusive.symbol} Too uncertain yet`,
  empty: 'No segment is left undecided.',
  note: 'Could be better or worse by as much as this data can detect; more contacts would settle them. Those with the most to gain first.',
  segments: uncertain,
})}
</div>
${alike > 0 ? html`<p>${VERDICT_STYLES.equivalent.symbol} ${formatCount(alike)} ${alike === 1 ? 'segment is' : 'segments are'} equivalent to the rest within the equivalence margin: plan ${alike === 1 ? 'it' : 'them'} like everyone else.</p>` : ''}
</section>`;
}
