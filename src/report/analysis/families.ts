/**
 * Which comparisons a report makes once: the two values of a yes/no dimension are one
 * comparison seen from both sides, and a report over several campaigns compares within each
 * campaign (the strata of the Cochran–Mantel–Haenszel test).
 */
import { UNKNOWN, type CampaignCellCount, type Group } from '../../segments/index.js';
import type { RateStratum } from '../../stats/index.js';
import { segmentLabel } from './segment-row.js';

/**
 * The mirrors of a report: for each dimension with exactly two values and no unknowns, the
 * second value's one-way segment (in label order) mapped to the first's label. Its rest is the
 * first segment, so testing both would count one comparison twice in the family.
 */
export function mirroredSegments(groups: readonly Group[]): Map<string, string> {
  const byDimension = new Map<string, Group[]>();
  for (const group of groups) {
    if (group.dimensions.length !== 1) continue;
    const dimension = group.dimensions[0] as string;
    byDimension.set(dimension, [...(byDimension.get(dimension) ?? []), group]);
  }
  const mirrors = new Map<string, string>();
  for (const members of byDimension.values()) {
    if (members.length !== 2 || members.some((group) => group.labels[0] === UNKNOWN)) continue;
    const [first, second] = members as [Group, Group];
    mirrors.set(segmentLabel(second.dimensions, second.labels), segmentLabel(first.dimensions, first.labels));
  }
  return mirrors;
}

/**
 * For reports over several campaigns, a function giving a segment's 2×2 table in each
 * campaign (segment against the rest of that campaign); null for one campaign.
 */
export function campaignStrata(counts: readonly CampaignCellCount[], dimensions: readonly string[]): (group: Group) => RateStratum[] | null {
  const campaigns = new Map<string, { n: number; conversions: number }>();
  for (const count of counts) {
    const total = campaigns.get(count.campaign) ?? { n: 0, conversions: 0 };
    campaigns.set(count.campaign, { n: total.n + count.n, conversions: total.conversions + count.conversions });
  }
  if (campaigns.size < 2) return () => null;
  // Per set of dimensions, each label combination's units and conversions per campaign, summed
  // in one pass over the counts (instead of one pass per segment).
  const byDimensions = new Map<string, Map<string, Map<string, { n: number; conversions: number }>>>();
  const campaignSums = (group: Group) => {
    const dimensionsKey = JSON.stringify(group.dimensions);
    let byLabels = byDimensions.get(dimensionsKey);
    if (!byLabels) {
      const positions = group.dimensions.map((dimension) => dimensions.indexOf(dimension));
      byLabels = new Map();
      for (const count of counts) {
        const labelsKey = JSON.stringify(positions.map((position) => count.labels[position]));
        let inSegment = byLabels.get(labelsKey);
        if (!inSegment) byLabels.set(labelsKey, (inSegment = new Map()));
        const sum = inSegment.get(count.campaign) ?? { n: 0, conversions: 0 };
        inSegment.set(count.campaign, { n: sum.n + count.n, conversions: sum.conversions + count.conversions });
      }
      byDimensions.set(dimensionsKey, byLabels);
    }
    return byLabels.get(JSON.stringify(group.labels)) ?? new Map<string, { n: number; conversions: number }>();
  };
  return (group) => {
    const inSegment = campaignSums(group);
    return [...campaigns].map(([campaign, total]) => {
      const own = inSegment.get(campaign) ?? { n: 0, conversions: 0 };
      return { x1: own.conversions, n1: own.n, x2: total.conversions - own.conversions, n2: total.n - own.n };
    });
  };
}
