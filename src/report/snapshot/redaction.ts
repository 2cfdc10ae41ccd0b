/**
 * What an erasure does to stored snapshots. Snapshots are records of what a report showed at
 * the time, so their published figures are not computed again; they are redacted:
 *
 * 1. Every snapshot whose population may have held the customer (campaign reports over a
 *    campaign they were contacted in; every sales report, since every stored customer is a
 *    unit of one) is withheld at the current publication threshold, so no figure of it
 *    describes fewer units than that, even one stored before withholding existed.
 * 2. The withheld segments that carry one of the customer's own labels (their region,
 *    channel, type or an extra attribute's value) are removed whole, so not even the label of
 *    a small group they were in stays behind: a unique attribute value is itself about them.
 * 3. The body is written back with `disclosure.redacted_at` and the row's `redacted_at` set.
 *
 * What stays is aggregates over at least the threshold's number of units, to which the
 * customer contributed one unit among many (see README, Privacy, for why and the limits).
 */
import type { Executor } from '../../db/executor.js';
import type { ReportDefinition } from '../definition/index.js';
import type { Snapshot, SnapshotSegment } from '../shapes/index.js';
import * as repository from '../store/index.js';
import { withholdSnapshot } from './withholding.js';

/** What the stored reports may hold about an erased customer. */
export interface ErasedCustomerLabels {
  /** label per customer dimension: region, channel, customer_type and each extra attribute */
  labels: Record<string, string>;
  campaignIds: string[];
}

function mayInclude(definition: ReportDefinition, customer: ErasedCustomerLabels): boolean {
  const source = definition.source;
  if (!('campaign_ids' in source)) return true;
  return source.campaign_ids.some((campaignId) => customer.campaignIds.includes(campaignId));
}

function carriesLabelOf(segment: SnapshotSegment, customer: ErasedCustomerLabels): boolean {
  return Object.entries(segment.values).some(([dimension, label]) => customer.labels[dimension] === label);
}

/**
 * The snapshot withheld at `threshold` and without the withheld segments that carry a label
 * of the customer (pure; see the module comment).
 */
function redactSnapshot(snapshot: Snapshot, customer: ErasedCustomerLabels, threshold: number, redactedAt: string): Snapshot {
  const withheld = withholdSnapshot(snapshot, threshold);
  const segments = withheld.segments.filter((segment) => segment.withheld_below === null || !carriesLabelOf(segment, customer));
  const removed = withheld.segments.length - segments.length;
  const { disclosure, ...rest } = withheld;
  return {
    ...rest,
    segments,
    row_counts: { ...withheld.row_counts, segments: withheld.row_counts.segments - removed, too_small: withheld.row_counts.too_small - removed },
    verdict_counts: { ...withheld.verdict_counts, too_small: withheld.verdict_counts.too_small - removed },
    // `disclosure` stays the last field (see storedTextIsWithheldAt).
    disclosure: { ...(disclosure as NonNullable<Snapshot['disclosure']>), withheld_segments: (disclosure?.withheld_segments ?? 0) - removed, redacted_at: redactedAt },
  };
}

/**
 * Redacts every stored snapshot that may describe the customer, inside the erasure's
 * transaction; returns how many snapshots were rewritten.
 */
export async function redactStoredSnapshots(trx: Executor, customer: ErasedCustomerLabels, settings: { threshold: number; now: () => Date }): Promise<number> {
  const redactedAt = settings.now().toISOString();
  let rewritten = 0;
  for (const report of await repository.listReports(trx)) {
    if (!mayInclude(JSON.parse(report.definition) as ReportDefinition, customer)) continue;
    for (const stored of await repository.snapshotBodies(trx, report.report_id)) {
      const snapshot = redactSnapshot(JSON.parse(stored.body) as Snapshot, customer, settings.threshold, redactedAt);
      await repository.replaceRedactedBody(trx, stored.snapshot_id, { body: JSON.stringify(snapshot), segmentCount: snapshot.segments.length, redactedAt });
      rewritten += 1;
    }
  }
  return rewritten;
}
