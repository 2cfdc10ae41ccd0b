/**
 * Empirical-Bayes shrinkage in the normal–normal model: each group's estimate y_i (with known
 * sampling variance s_i²) is drawn toward a prior centre m_i (itself estimated, with variance
 * v_i) by as much as the spread between groups, τ², says it should be. Used on the logit of a
 * conversion rate (the empirical logit) and on a mean.
 *
 * Model: y_i | θ_i ~ N(θ_i, s_i²), θ_i ~ N(m_i, τ² + v_i). Posterior: B_i = s_i²/(s_i² + τ² + v_i),
 * mean m_i + (1 − B_i)(y_i − m_i), variance s_i²(1 − B_i), plus the term of Morris (1983) for
 * the uncertainty of τ² itself, 2/(k − q − 2)·B_i²·(y_i − m_i)².
 * Sources: Efron, B. & Morris, C. (1975), Data analysis using Stein's estimator and its
 * generalizations, JASA 70, 311–319; Morris, C. N. (1983), Parametric empirical Bayes
 * inference: theory and applications, JASA 78, 47–55; Casella, G. (1985), An introduction to
 * empirical Bayes data analysis, The American Statistician 39, 83–87; the moment estimator of
 * τ² is that of DerSimonian, R. & Laird, N. (1986), Controlled Clinical Trials 7, 177–188.
 * The formulas are quoted from memory of those papers.
 */
import { standardNormalQuantile } from './distributions.js';
import { StatsInputError } from './errors.js';
import type { EstimateWithInterval } from './result.js';
import { requireCount, requireFiniteNumber, requireOpenUnitInterval } from './validate.js';

/** One group's estimate, its sampling variance and the prior centre it is drawn toward. */
export interface ShrinkageObservation {
  readonly estimate: number;
  /** sampling variance of the estimate, s_i² (> 0) */
  readonly variance: number;
  /** the prior centre m_i */
  readonly centre: number;
  /** variance of the prior centre's own estimate, v_i (≥ 0): the parents' uncertainty */
  readonly centreVariance: number;
}

/** The fitted spread between groups and what it was fitted from. */
export interface PriorSpread {
  /** τ², the variance of the true values about their centres (0 when the data show none) */
  readonly betweenVariance: number;
  /** k, the number of groups fitted */
  readonly groups: number;
  /** q, the number of centre parameters estimated from these same groups */
  readonly centresFitted: number;
}

function requireObservation(observation: ShrinkageObservation, index: number): void {
  requireFiniteNumber(`observations[${index}].estimate`, observation.estimate);
  requireFiniteNumber(`observations[${index}].centre`, observation.centre);
  if (!(observation.variance > 0) || !Number.isFinite(observation.variance)) {
    throw new StatsInputError(`observations[${index}].variance`, `the sampling variance must be positive and finite, got ${String(observation.variance)}`);
  }
  if (!(observation.centreVariance >= 0) || !Number.isFinite(observation.centreVariance)) {
    throw new StatsInputError(`observations[${index}].centreVariance`, `the centre's variance must be zero or positive, got ${String(observation.centreVariance)}`);
  }
}

/**
 * The moment estimate of τ² about given centres, weights w_i = 1/s_i²:
 * τ² = max(0, (Q − (k − q)) / (Σw·(k − q)/k)), Q = Σ w_i (y_i − m_i)², where q is the number of
 * centre parameters estimated from these same groups (1 for groups that partition the
 * population whose figure is their centre; the labels of both dimensions less one for the
 * main-effects prediction of a two-way table). With q = 0 or equal weights this is the
 * DerSimonian–Laird estimator; otherwise its denominator is the equal-weights form.
 * @throws StatsInputError for an invalid observation or q that is not a count
 * @example
 * fitPriorSpread([{ estimate: 1, variance: 0.5, centre: 0, centreVariance: 0 }, { estimate: -1, variance: 0.5, centre: 0, centreVariance: 0 }], 0);
 * // { betweenVariance: 0.5, groups: 2, centresFitted: 0 }  (Q = 4, (4 − 2)/4)
 */
export function fitPriorSpread(observations: readonly ShrinkageObservation[], centresFitted: number): PriorSpread {
  requireCount('centresFitted', centresFitted);
  observations.forEach(requireObservation);
  const k = observations.length;
  let q = 0;
  let sumWeights = 0;
  for (const observation of observations) {
    const weight = 1 / observation.variance;
    const residual = observation.estimate - observation.centre;
    q += weight * residual * residual;
    sumWeights += weight;
  }
  const residualDegrees = k - centresFitted;
  const betweenVariance = residualDegrees > 0 ? Math.max(0, (q - residualDegrees) / ((sumWeights * residualDegrees) / k)) : 0;
  return { betweenVariance, groups: k, centresFitted };
}

/** A shrunk estimate: posterior mean, variance, the shrinkage factor B and the interval. */
export interface ShrunkEstimate extends EstimateWithInterval {
  readonly variance: number;
  /** B_i: 0 keeps the group's own estimate, 1 replaces it by the centre */
  readonly shrinkage: number;
}

/**
 * The posterior of one group under the fitted spread, with a normal interval at `confidence`.
 * When fewer than three groups are left after the fitted centres (k − q ≤ 2) the spread
 * cannot be judged, and the group keeps its own estimate and sampling variance (B = 0).
 * @throws StatsInputError for an invalid observation or confidence
 * @example
 * shrinkObservation({ estimate: 2, variance: 1, centre: 0, centreVariance: 0 }, { betweenVariance: 1, groups: 10, centresFitted: 0 }, 0.95);
 * // B = 0.5: estimate 1, variance 0.5 + 2/8·0.25·4 = 0.75, interval 1 ± 1.96·√0.75
 */
export function shrinkObservation(observation: ShrinkageObservation, spread: PriorSpread, confidence: number): ShrunkEstimate {
  requireObservation(observation, 0);
  requireOpenUnitInterval('confidence', confidence);
  requireCount('spread.groups', spread.groups);
  const freeGroups = spread.groups - spread.centresFitted - 2;
  const z = standardNormalQuantile(1 - (1 - confidence) / 2);
  if (freeGroups <= 0) {
    const sd = Math.sqrt(observation.variance);
    return { estimate: observation.estimate, variance: observation.variance, shrinkage: 0, interval: { low: observation.estimate - z * sd, high: observation.estimate + z * sd } };
  }
  const priorVariance = spread.betweenVariance + observation.centreVariance;
  const shrinkage = observation.variance / (observation.variance + priorVariance);
  const residual = observation.estimate - observation.centre;
  const estimate = observation.centre + (1 - shrinkage) * residual;
  const variance = observation.variance * (1 - shrinkage) + (2 / freeGroups) * shrinkage * shrinkage * residual * residual;
  const sd = Math.sqrt(variance);
  return { estimate, variance, shrinkage, interval: { low: estimate - z * sd, high: estimate + z * sd } };
}

/**
 * The empirical logit of x successes in n trials and its variance:
 * log((x + ½)/(n − x + ½)), 1/(x + ½) + 1/(n − x + ½). Source: Cox, D. R. (1970), The
 * Analysis of Binary Data, §3.2; Gart, J. J. & Zweifel, J. R. (1967), Biometrika 54, 181–187
 * (from memory). Defined for every x from 0 to n.
 * @throws StatsInputError when x or n is not a count or x > n or n = 0
 * @example
 * empiricalLogit(3, 10); // { estimate: log(3.5/7.5) ≈ −0.76214, variance: 1/3.5 + 1/7.5 ≈ 0.41905 }
 */
export function empiricalLogit(successes: number, trials: number): { estimate: number; variance: number } {
  requireCount('successes', successes);
  requireCount('trials', trials);
  if (trials === 0 || successes > trials) throw new StatsInputError('successes', `needs 0 ≤ successes ≤ trials and trials > 0, got ${successes} of ${trials}`);
  const yes = successes + 0.5;
  const no = trials - successes + 0.5;
  return { estimate: Math.log(yes / no), variance: 1 / yes + 1 / no };
}

/**
 * The logistic function, the inverse of the logit.
 * @example
 * logistic(0); // 0.5
 */
export function logistic(x: number): number {
  requireFiniteNumber('x', x);
  return x >= 0 ? 1 / (1 + Math.exp(-x)) : Math.exp(x) / (1 + Math.exp(x));
}
