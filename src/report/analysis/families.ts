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
  return (group) => {
    const positions = group.dimensions.map((dimension) => dimensions.indexOf(dimension));
    const inSegment = new Map<string, { n: number; conversions: number }>();
    for (const count of counts) {
      if (!positions.every((position, index) => count.labels[position] === group.labels[index])) continue;
      const sum = inSegment.get(count.campaign) ?? { n: 0, conversions: 0 };
      inSegment.set(count.campaign, { n: sum.n + count.n, conversions: sum.conversions + count.conversions });
    }
    return [...campaigns].map(([campaign, total]) => {
      const own = inSegment.get(campaign) ?? { n: 0, conversions: 0 };
      return { x1: own.conversions, n1: own.n, x2: total.conversions - own.conversions, n2: total.n - own.n };
    });
  };
}
