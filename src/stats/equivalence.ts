/**
 * Equivalence tests: two one-sided tests (TOST) that a difference lies within ± a margin
 * the analyst sets. The difference is declared within the margin at level α when both
 * one-sided nulls (difference ≤ −margin, difference ≥ +margin) are rejected at α; the TOST
 * p-value is the larger of the two one-sided p-values, and the test is the same as asking
 * whether the (1 − 2α) interval lies inside (−margin, +margin). Source: Schuirmann, D. J.
 * (1987). A comparison of the two one-sided tests procedure and the power approach for
 * assessing the equivalence of average bioavailability. J. Pharmacokinetics and
 * Biopharmaceutics 15, 657–680.
 */
import { standardNormalCdf, studentTCdf } from './distributions.js';
import { computed, notComputable, type Outcome } from './result.js';
import { validateSummary, type Summary } from './summary.js';
import { requireFiniteNumber, requireSuccessesWithinTrials } from './validate.js';
import { StatsInputError } from './errors.js';

export interface EquivalenceTestResult {
  /** the estimate the test uses (for rates the Agresti–Caffo adjusted difference) */
  difference: number;
  standardError: number;
  /** p-value of the null "difference ≤ −margin" */
  lowerPValue: number;
  /** p-value of the null "difference ≥ +margin" */
  upperPValue: number;
  /** the TOST p-value: the larger of the two */
  pValue: number;
  /** Welch–Satterthwaite degrees of freedom (means); null for rates (normal reference) */
  degreesOfFreedom: number | null;
}

function requireMargin(margin: number): void {
  requireFiniteNumber('margin', margin);
  if (margin <= 0) throw new StatsInputError('margin', `margin must be greater than 0, got ${margin}`);
}

/**
 * TOST for the difference of two independent rates p₁ − p₂ within ± margin, on the
 * Agresti–Caffo scale: one success and one failure are added to each group,
 * p̃ᵢ = (xᵢ + 1)/(nᵢ + 2), d̃ = p̃₁ − p̃₂, SE = √(p̃₁(1 − p̃₁)/(n₁ + 2) + p̃₂(1 − p̃₂)/(n₂ + 2)),
 * p_lower = 1 − Φ((d̃ + margin)/SE), p_upper = Φ((d̃ − margin)/SE). The adjustment keeps the
 * Wald interval's coverage near nominal even for small groups and rates near 0. Source:
 * Agresti, A. & Caffo, B. (2000). Simple and effective confidence intervals for proportions
 * and differences of proportions result from adding two successes and two failures. The
 * American Statistician 54, 280–288; as statsmodels' `tost_proportions_2indep(…,
 * method='agresti-caffo')`. Undefined (with a reason) when a group is empty.
 * @throws StatsInputError for invalid counts or a margin ≤ 0
 * @example
 * rateEquivalenceTest(150, 1000, 160, 1000, 0.05);
 * // { ok: true, value: { difference: -0.00998…, pValue: 0.00094…, … } } (statsmodels 0.13.5, see the test)
 */
export function rateEquivalenceTest(x1: number, n1: number, x2: number, n2: number, margin: number): Outcome<EquivalenceTestResult> {
  requireSuccessesWithinTrials('x1', x1, 'n1', n1);
  requireSuccessesWithinTrials('x2', x2, 'n2', n2);
  requireMargin(margin);
  if (n1 === 0 || n2 === 0) return notComputable('The equivalence test of the rates is undefined: one of the two groups is empty.');
  const adjusted1 = (x1 + 1) / (n1 + 2);
  const adjusted2 = (x2 + 1) / (n2 + 2);
  const difference = adjusted1 - adjusted2;
  const standardError = Math.sqrt((adjusted1 * (1 - adjusted1)) / (n1 + 2) + (adjusted2 * (1 - adjusted2)) / (n2 + 2));
  const lowerPValue = 1 - standardNormalCdf((difference + margin) / standardError);
  const upperPValue = standardNormalCdf((difference - margin) / standardError);
  return computed({ difference, standardError, lowerPValue, upperPValue, pValue: Math.max(lowerPValue, upperPValue), degreesOfFreedom: null });
}

/**
 * TOST for the difference of two means a − b within ± margin with Welch's standard error and
 * degrees of freedom (unequal variances): t_lower = (d + margin)/SE, p_lower = 1 − T_ν(t_lower);
 * t_upper = (d − margin)/SE, p_upper = T_ν(t_upper). Sources: Schuirmann (1987); Welch (1947),
 * Biometrika 34, 28–35; as statsmodels' `ttost_ind(…, usevar='unequal')`. Undefined (with a
 * reason) when a group has fewer than 2 values or neither varies.
 * @throws StatsInputError for an invalid summary or a margin ≤ 0
 * @example
 * meanEquivalenceTest(summarize([19.1, 20.3, 22.0, 18.7]), summarize([17.2, 18.0, 16.9, 19.5, 17.7]), 3);
 * // { ok: true, value: { difference: 2.165, pValue: 0.17…, … } } (statsmodels 0.13.5, see the test)
 */
export function meanEquivalenceTest(a: Summary, b: Summary, margin: number): Outcome<EquivalenceTestResult> {
  validateSummary('a', a);
  validateSummary('b', b);
  requireMargin(margin);
  if (a.n < 2 || b.n < 2) return notComputable(`The equivalence test of the means is undefined: each group needs at least 2 values, got ${a.n} and ${b.n}.`);
  const varianceA = a.sumSquaredDeviations / (a.n - 1) / a.n;
  const varianceB = b.sumSquaredDeviations / (b.n - 1) / b.n;
  const variance = varianceA + varianceB;
  if (variance === 0) return notComputable('The equivalence test of the means is undefined: neither group varies.');
  const degreesOfFreedom = (variance * variance) / ((varianceA * varianceA) / (a.n - 1) + (varianceB * varianceB) / (b.n - 1));
  const standardError = Math.sqrt(variance);
  const difference = a.mean - b.mean;
  const lowerPValue = 1 - studentTCdf((difference + margin) / standardError, degreesOfFreedom);
  const upperPValue = studentTCdf((difference - margin) / standardError, degreesOfFreedom);
  return computed({ difference, standardError, lowerPValue, upperPValue, pValue: Math.max(lowerPValue, upperPValue), degreesOfFreedom });
}
