/**
 * Two rates compared within strata (for a report: within each campaign) and pooled: the
 * Cochran–Mantel–Haenszel test and the Mantel–Haenszel risk difference with Sato's variance.
 * A stratum holds group 1 (the segment: x₁ of n₁ converted) and group 2 (the rest: x₂ of n₂).
 */
import { standardNormalTwoSidedPValue, twoSidedCriticalZ } from './distributions.js';
import { computed, notComputable, type EstimateWithInterval, type Outcome } from './result.js';
import { requireSuccessesWithinTrials } from './validate.js';

export interface RateStratum {
  x1: number;
  n1: number;
  x2: number;
  n2: number;
}

export interface StratifiedRateTestResult {
  /** the CMH statistic without continuity correction, as a signed normal deviate (its square is the χ² on 1 df) */
  z: number;
  pValue: number;
  /** strata that carried information (both groups present and some but not all converted) */
  strataUsed: number;
}

function validateStrata(strata: readonly RateStratum[]): void {
  strata.forEach((stratum, index) => {
    requireSuccessesWithinTrials(`strata[${index}].x1`, stratum.x1, `strata[${index}].n1`, stratum.n1);
    requireSuccessesWithinTrials(`strata[${index}].x2`, stratum.x2, `strata[${index}].n2`, stratum.n2);
  });
}

/**
 * Cochran–Mantel–Haenszel test of no association in any stratum, without continuity
 * correction: with Nₖ = n₁ₖ + n₂ₖ and mₖ = x₁ₖ + x₂ₖ,
 * z = Σ(x₁ₖ − n₁ₖmₖ/Nₖ) / √Σ(n₁ₖn₂ₖmₖ(Nₖ − mₖ)/(Nₖ²(Nₖ − 1))), two-sided p from the normal
 * (z² is the CMH χ² on 1 df). Strata with Nₖ < 2 add nothing. Sources: Cochran, W. G. (1954),
 * Biometrics 10, 417–451; Mantel, N. & Haenszel, W. (1959), J. National Cancer Institute 22,
 * 719–748; as statsmodels' `StratifiedTable.test_null_odds(correction=False)`. Undefined
 * (with a reason) when no stratum has variance (nobody, or everybody, converted in all of them).
 * @throws StatsInputError for invalid counts
 * @example
 * cochranMantelHaenszelTest([{ x1: 0, n1: 3, x2: 0, n2: 3 }, …]); // see the test for statsmodels' values
 */
export function cochranMantelHaenszelTest(strata: readonly RateStratum[]): Outcome<StratifiedRateTestResult> {
  validateStrata(strata);
  let observedMinusExpected = 0;
  let variance = 0;
  let strataUsed = 0;
  for (const { x1, n1, x2, n2 } of strata) {
    const total = n1 + n2;
    const converted = x1 + x2;
    if (total < 2) continue;
    const stratumVariance = (n1 * n2 * converted * (total - converted)) / (total * total * (total - 1));
    if (stratumVariance === 0) continue;
    observedMinusExpected += x1 - (n1 * converted) / total;
    variance += stratumVariance;
    strataUsed += 1;
  }
  if (variance === 0) return notComputable('The stratified rate test is undefined: no stratum has both groups and both outcomes.');
  const z = observedMinusExpected / Math.sqrt(variance);
  return computed({ z, pValue: standardNormalTwoSidedPValue(z), strataUsed });
}

/**
 * Mantel–Haenszel pooled risk difference with Sato's variance, and its Wald interval:
 * wₖ = n₁ₖn₂ₖ/Nₖ, RD = Σwₖ(x₁ₖ/n₁ₖ − x₂ₖ/n₂ₖ)/Σwₖ,
 * Var = (RD·ΣPₖ + ΣQₖ)/(Σwₖ)², Pₖ = (n₁ₖ²x₂ₖ − n₂ₖ²x₁ₖ + n₁ₖn₂ₖ(n₂ₖ − n₁ₖ)/2)/Nₖ²,
 * Qₖ = (x₁ₖ(n₂ₖ − x₂ₖ) + x₂ₖ(n₁ₖ − x₁ₖ))/(2Nₖ). The variance is consistent both with many
 * small strata and with few large ones; with one stratum it is the unpooled Wald variance
 * p₁(1 − p₁)/n₁ + p₂(1 − p₂)/n₂. Sources: Greenland, S. & Robins, J. M. (1985), Biometrics
 * 41, 55–68 (the estimator); Sato, T. (1989), On the variance estimator for the
 * Mantel–Haenszel risk difference, Biometrics 45, 1323–1324 (the variance; the formula as
 * given in Rothman, Greenland & Lash, Modern Epidemiology, 3rd ed., ch. 15, from memory).
 * Strata missing either group add nothing. Undefined (with a reason) when no stratum has both.
 * @throws StatsInputError for invalid counts or a confidence outside (0, 1)
 */
export function mantelHaenszelRiskDifference(strata: readonly RateStratum[], confidence = 0.95): Outcome<EstimateWithInterval & { standardError: number }> {
  validateStrata(strata);
  const criticalZ = twoSidedCriticalZ(confidence);
  let weightSum = 0;
  let weightedDifference = 0;
  let pSum = 0;
  let qSum = 0;
  for (const { x1, n1, x2, n2 } of strata) {
    if (n1 === 0 || n2 === 0) continue;
    const total = n1 + n2;
    const weight = (n1 * n2) / total;
    weightSum += weight;
    weightedDifference += weight * (x1 / n1 - x2 / n2);
    pSum += (n1 * n1 * x2 - n2 * n2 * x1 + (n1 * n2 * (n2 - n1)) / 2) / (total * total);
    qSum += (x1 * (n2 - x2) + x2 * (n1 - x1)) / (2 * total);
  }
  if (weightSum === 0) return notComputable('The pooled difference of rates is undefined: no stratum has both the segment and the rest.');
  const estimate = weightedDifference / weightSum;
  const variance = Math.max(0, (estimate * pSum + qSum) / (weightSum * weightSum));
  const standardError = Math.sqrt(variance);
  return computed({ estimate, standardError, interval: { low: Math.max(-1, estimate - criticalZ * standardError), high: Math.min(1, estimate + criticalZ * standardError) } });
}
