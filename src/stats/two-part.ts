/**
 * The two-part test of a semicontinuous outcome (zero, or a positive amount such as revenue):
 * part one compares the share of positive values (the pooled two-proportion z-test), part two
 * compares the logarithms of the positive values (Student's pooled t-test), and the sum of
 * squares X² = Z² + T² is referred to the chi-square distribution with 2 degrees of freedom,
 * whose upper tail is exp(−X²/2) exactly. When every value of both groups is positive (a mean
 * per conversion) only part two remains, and its own two-sided p-value is used. Sources: Lachenbruch, P. A. (1976), Analysis of data
 * with clumping at zero, Biometrische Zeitschrift 18, 351–356; Lachenbruch, P. A. (2001),
 * Comparisons of two-part models with competitors, Statistics in Medicine 20, 1215–1234 (from
 * memory). Log-scale part: the positive values are taken as log-normal, the case where the
 * test keeps its size while tests of the raw means do not (measured in
 * bench/calibration/value-test.ts).
 */
import { studentTTest } from './means.js';
import { twoProportionZTest } from './proportions.js';
import { computed, notComputable, type Outcome } from './result.js';
import type { Summary } from './summary.js';

/** One group of a two-part comparison: its size and the summary of the logarithms of its positive values. */
export interface TwoPartGroup {
  readonly n: number;
  /** n, mean and sum of squared deviations of log(v) over the positive values v */
  readonly logPositive: Summary;
}

export interface TwoPartTestResult {
  /** z of the share of positive values (0 when both groups are all positive) */
  readonly z: number;
  /** Student's t of the mean log of the positive values */
  readonly t: number;
  /** Z² + T² */
  readonly chiSquare: number;
  /** upper tail of chi-square with 2 degrees of freedom: exp(−X²/2) */
  readonly pValue: number;
}

/**
 * Lachenbruch's two-part test of group a against group b.
 * @throws StatsInputError for invalid counts or summaries (from the statistics core)
 * @example
 * twoPartTest({ n: 100, logPositive: summarize([3, 3.5, 4, 4.5]) }, { n: 200, logPositive: summarize([2, 2.5, 3, 3.5, 4, 3]) });
 */
export function twoPartTest(a: TwoPartGroup, b: TwoPartGroup): Outcome<TwoPartTestResult> {
  if (a.logPositive.n < 2 || b.logPositive.n < 2) {
    return notComputable(`The two-part test is undefined: each group needs at least 2 positive values, got ${a.logPositive.n} and ${b.logPositive.n}.`);
  }
  const allPositive = a.logPositive.n === a.n && b.logPositive.n === b.n;
  let z = 0;
  if (!allPositive) {
    const share = twoProportionZTest(a.logPositive.n, a.n, b.logPositive.n, b.n);
    if (!share.ok) return share;
    z = share.value.z;
  }
  const logs = studentTTest(a.logPositive, b.logPositive);
  if (!logs.ok) return logs;
  const t = logs.value.t;
  const chiSquare = z * z + t * t;
  return computed({ z, t, chiSquare, pValue: allPositive ? logs.value.pValue : Math.exp(-chiSquare / 2) });
}
