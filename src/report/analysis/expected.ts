/**
 * Expected (shrunk) figures of every segment: the conversion rate and the value mean drawn
 * toward what the segment's parents predict, by as much as the spread between segments of
 * its dimension set says (empirical Bayes, `src/stats/shrinkage.ts`).
 *
 * - One-way segments of one dimension are drawn toward the population, with the spread
 *   fitted across that dimension's segments (one centre fitted: they partition the population).
 * - Two-way segments are drawn toward what their two parents predict when the dimensions do
 *   not interact: on the logit scale for the rate (logit a + logit b − logit total, the main-
 *   effects logit model; Agresti, Categorical Data Analysis, ch. 5), additively for the value
 *   mean (a + b − total). The parents' own (shrunk) variances are added to the prior's, so the
 *   interval carries the uncertainty of the prediction; the spread of the interaction is
 *   fitted across the crosses of that dimension pair, with the parents' labels counted as
 *   fitted centres (k − q = residual degrees of freedom of the two-way table).
 *
 * The rate works on the empirical logit (its variance from the segment's own counts); the
 * value mean uses the population's variance of the value over the segment's units, so a
 * segment whose few values happen to be small is not made more certain by them.
 */
import { empiricalLogit, fitPriorSpread, logistic, shrinkObservation, type ShrinkageObservation } from '../../stats/index.js';
import type { Group, GroupStats } from '../../segments/index.js';
import type { ValueBasis } from '../definition/index.js';
import { parentLabels } from './parents.js';
import { segmentLabel } from './segment-row.js';
import { valueSummary } from './segment-tests.js';

export interface ExpectedFigure {
  estimate: number;
  low: number;
  high: number;
}

export interface ExpectedFigures {
  rate: ExpectedFigure | null;
  value: ExpectedFigure | null;
}

interface Posterior {
  estimate: number;
  variance: number;
}

interface MetricScale {
  /** the group's estimate and sampling variance on the scale shrinkage works on, or null when it has none */
  observe(stats: GroupStats): Posterior | null;
  /** back from that scale to the metric */
  toMetric(x: number): number;
}

function setKey(group: Group): string {
  return group.dimensions.join('\u0000');
}

/** Shrinks one metric over all groups; returns each group's posterior on the working scale, by index. */
function shrinkMetric(groups: readonly Group[], total: GroupStats, scale: MetricScale, confidence: number): Array<{ posterior: Posterior; figure: ExpectedFigure } | null> {
  const results: Array<{ posterior: Posterior; figure: ExpectedFigure } | null> = groups.map(() => null);
  const totalObserved = scale.observe(total);
  if (totalObserved === null) return results;
  const byLabel = new Map<string, Posterior>();
  const sets = new Map<string, number[]>();
  groups.forEach((group, index) => {
    const members = sets.get(setKey(group)) ?? [];
    members.push(index);
    sets.set(setKey(group), members);
  });

  const shrinkSet = (members: number[], centreOf: (group: Group) => Posterior | null, centresFitted: (used: Group[]) => number) => {
    const used: Array<{ index: number; observation: ShrinkageObservation }> = [];
    for (const index of members) {
      const group = groups[index] as Group;
      const observed = scale.observe(group.stats);
      const centre = centreOf(group);
      if (observed === null || centre === null) continue;
      used.push({ index, observation: { estimate: observed.estimate, variance: observed.variance, centre: centre.estimate, centreVariance: centre.variance } });
    }
    const q = Math.min(centresFitted(used.map(({ index }) => groups[index] as Group)), used.length);
    const spread = fitPriorSpread(
      used.map(({ observation }) => observation),
      q,
    );
    for (const { index, observation } of used) {
      const shrunk = shrinkObservation(observation, spread, confidence);
      const group = groups[index] as Group;
      const posterior = { estimate: shrunk.estimate, variance: shrunk.variance };
      if (group.dimensions.length === 1) byLabel.set(segmentLabel(group.dimensions, group.labels), posterior);
      results[index] = {
        posterior,
        figure: { estimate: scale.toMetric(shrunk.estimate), low: scale.toMetric(shrunk.interval.low), high: scale.toMetric(shrunk.interval.high) },
      };
    }
  };

  for (const members of sets.values()) {
    if ((groups[members[0] as number] as Group).dimensions.length !== 1) continue;
    shrinkSet(members, () => totalObserved, () => 1);
  }
  for (const members of sets.values()) {
    if ((groups[members[0] as number] as Group).dimensions.length !== 2) continue;
    shrinkSet(
      members,
      (group) => {
        const parents = parentLabels(group).map((label) => byLabel.get(label));
        const [first, second] = parents;
        if (first === undefined || second === undefined) return null;
        return { estimate: first.estimate + second.estimate - totalObserved.estimate, variance: first.variance + second.variance + totalObserved.variance };
      },
      // the main-effects model of the two-way table fits one centre per label of each dimension, less one
      (used) => new Set(used.map((group) => group.labels[0])).size + new Set(used.map((group) => group.labels[1])).size - 1,
    );
  }
  return results;
}

/**
 * Expected rate and value (with intervals at `confidence`) of every group, in the order given.
 * A figure is null when the group has no units of that metric (or the value never varies).
 */
export function expectedFigures(groups: readonly Group[], total: GroupStats, settings: { confidence: number; valueBasis: ValueBasis }): ExpectedFigures[] {
  const rateScale: MetricScale = {
    observe: (stats) => (stats.n > 0 ? empiricalLogit(stats.conversions, stats.n) : null),
    toMetric: logistic,
  };
  const populationValue = valueSummary(total, settings.valueBasis);
  const populationVariance = populationValue.n >= 2 ? populationValue.sumSquaredDeviations / (populationValue.n - 1) : 0;
  const valueScale: MetricScale = {
    observe: (stats) => {
      const summary = valueSummary(stats, settings.valueBasis);
      return summary.n > 0 && populationVariance > 0 ? { estimate: summary.mean, variance: populationVariance / summary.n } : null;
    },
    toMetric: (x) => x,
  };
  const rates = shrinkMetric(groups, total, rateScale, settings.confidence);
  const values = shrinkMetric(groups, total, valueScale, settings.confidence);
  return groups.map((_group, index) => ({ rate: rates[index]?.figure ?? null, value: values[index]?.figure ?? null }));
}
