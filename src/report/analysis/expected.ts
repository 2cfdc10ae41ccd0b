/**
 * Expected (shrunk) figures of every segment: the conversion rate and the value mean drawn
 * toward what the segment's parents predict, by as much as the spread between segments of
 * its dimension set says (empirical Bayes, `src/stats/shrinkage.ts`).
 *
 * - One-way segments of one dimension are drawn toward the population, with the spread
 *   fitted across that dimension's segments (one centre fitted: they partition the population).
 * - Two-way segments of a dimension pair are the cells of its two-way table, drawn toward the
 *   table's main-effects model (on the logit scale for the rate, the main-effects logit model;
 *   Agresti, Categorical Data Analysis, ch. 5; additively for the value mean). The labels'
 *   effects are themselves drawn toward zero with the spread their one-way segments showed
 *   (free when it cannot be judged), the interactions' spread τ² is fitted across the table,
 *   and each cell is predicted jointly from the whole table (a mixed model; `shrinkTwoWayTable`),
 *   so the interval carries the uncertainty of the main-effects prediction.
 *
 * The rate works on the empirical logit (its variance from the segment's own counts); the
 * value mean uses the population's variance of the value over the segment's units, so a
 * segment whose few values happen to be small is not made more certain by them.
 */
import { empiricalLogit, fitPriorSpread, logistic, shrinkObservation, shrinkTwoWayTable, type ShrunkEstimate } from '../../stats/index.js';
import type { Group, GroupStats } from '../../segments/index.js';
import type { ValueBasis } from '../definition/index.js';
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

interface Observed {
  estimate: number;
  variance: number;
}

interface MetricScale {
  /** the group's estimate and sampling variance on the scale shrinkage works on, or null when it has none */
  observe(stats: GroupStats): Observed | null;
  /** back from that scale to the metric */
  toMetric(x: number): number;
}

function setKey(group: Group): string {
  return group.dimensions.join('\u0000');
}

/** Shrinks one metric over all groups; returns each group's expected figure, by index. */
function shrinkMetric(groups: readonly Group[], total: GroupStats, scale: MetricScale, confidence: number): Array<ExpectedFigure | null> {
  const results: Array<ExpectedFigure | null> = groups.map(() => null);
  const totalObserved = scale.observe(total);
  if (totalObserved === null) return results;
  const sets = new Map<string, number[]>();
  groups.forEach((group, index) => {
    const members = sets.get(setKey(group)) ?? [];
    members.push(index);
    sets.set(setKey(group), members);
  });

  const record = (index: number, shrunk: ShrunkEstimate) => {
    results[index] = { estimate: scale.toMetric(shrunk.estimate), low: scale.toMetric(shrunk.interval.low), high: scale.toMetric(shrunk.interval.high) };
  };
  const observed = (members: number[]) =>
    members.flatMap((index) => {
      const observation = scale.observe((groups[index] as Group).stats);
      return observation === null ? [] : [{ index, group: groups[index] as Group, observation }];
    });

  // one-way segments: toward the population, one centre fitted (they partition it); the spread
  // of a dimension's labels is kept for its crosses when it can be judged (k − q − 2 > 0)
  const labelSpread = new Map<string, number | null>();
  for (const members of sets.values()) {
    const dimensions = (groups[members[0] as number] as Group).dimensions;
    if (dimensions.length !== 1) continue;
    const used = observed(members).map(({ index, observation }) => ({
      index,
      observation: { estimate: observation.estimate, variance: observation.variance, centre: totalObserved.estimate, centreVariance: totalObserved.variance },
    }));
    const spread = fitPriorSpread(
      used.map(({ observation }) => observation),
      Math.min(1, used.length),
    );
    labelSpread.set(dimensions[0] as string, spread.groups - spread.centresFitted - 2 > 0 ? spread.betweenVariance : null);
    for (const { index, observation } of used) record(index, shrinkObservation(observation, spread, confidence));
  }
  // two-way segments: the cells of the dimension pair's table, shrunk toward its main-effects
  // model with the labels' effects drawn from their dimensions' spreads
  for (const members of sets.values()) {
    const dimensions = (groups[members[0] as number] as Group).dimensions;
    if (dimensions.length !== 2) continue;
    const used = observed(members);
    const { estimates } = shrinkTwoWayTable(
      used.map(({ group, observation }) => ({ rowLabel: group.labels[0] as string, columnLabel: group.labels[1] as string, estimate: observation.estimate, variance: observation.variance })),
      { row: labelSpread.get(dimensions[0] as string) ?? null, column: labelSpread.get(dimensions[1] as string) ?? null },
      confidence,
    );
    used.forEach(({ index }, position) => record(index, estimates[position] as ShrunkEstimate));
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
  return groups.map((_group, index) => ({ rate: rates[index] ?? null, value: values[index] ?? null }));
}
