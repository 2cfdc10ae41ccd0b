/**
 * Parents of a two-way segment (its two one-way segments), and whether a cross's difference
 * from the rest is explained by one of them: the cross compared with the other members of
 * the parent shows no difference (two-sided p ≥ α, unadjusted, so that a real difference
 * within the parent is the easier finding) while the parent itself has the cross's verdict.
 */
import { subtractGroup, type Group } from '../../segments/index.js';
import { type ReportDefinition, verdictMetric } from '../definition/index.js';
import type { SnapshotSegment } from '../shapes/index.js';
import { segmentLabel } from './segment-row.js';
import { rateTest, valueTest, valueSummary } from './segment-tests.js';
import type { PositiveLogs } from './value-logs.js';

/** The labels of a segment's one-way parents: two for a cross, none for a one-way segment. */
function parentLabels(group: Pick<Group, 'dimensions' | 'labels'>): string[] {
  if (group.dimensions.length !== 2) return [];
  return group.dimensions.map((dimension, index) => segmentLabel([dimension], [group.labels[index] as string]));
}

/** The two-sided p-value of the cross against the other members of its parent on the report's metric, or null when it cannot be computed. */
function withinParentPValue(cross: Group, parent: Group, definition: ReportDefinition, logs: PositiveLogs): number | null {
  const others = subtractGroup(parent.stats, cross.stats);
  if (others.n < definition.min_n) return null;
  if (verdictMetric(definition) === 'conversion_rate') {
    const test = rateTest(cross.stats.conversions, cross.stats.n, others.conversions, others.n);
    return test.ok ? test.value.pValue : null;
  }
  const test = valueTest(
    { summary: valueSummary(cross.stats, definition.value_basis), conversions: cross.stats.conversions, logPositive: logs.summary(logs.of(cross)) },
    { summary: valueSummary(others, definition.value_basis), conversions: others.conversions, logPositive: logs.summary(logs.without(logs.of(parent), logs.of(cross))) },
    definition.confidence,
  );
  return test.ok ? test.value.pValue : null;
}

/**
 * The label of the parent that explains a cross's better or worse verdict, or null. When both
 * parents qualify, the one within which the cross differs least (the larger p-value) is named.
 */
export function explainingParent(
  cross: { group: Group; segment: SnapshotSegment },
  parents: ReadonlyMap<string, { group: Group; segment: SnapshotSegment }>,
  definition: ReportDefinition,
  logs: PositiveLogs,
): string | null {
  const verdict = cross.segment.verdict;
  if (verdict !== 'better' && verdict !== 'worse') return null;
  const alpha = 1 - definition.confidence;
  let best: { label: string; pValue: number } | null = null;
  for (const label of parentLabels(cross.group)) {
    const parent = parents.get(label);
    if (parent === undefined || parent.segment.verdict !== verdict) continue;
    const pValue = withinParentPValue(cross.group, parent.group, definition, logs);
    if (pValue === null || pValue < alpha) continue;
    if (best === null || pValue > best.pValue) best = { label, pValue };
  }
  return best?.label ?? null;
}
