/**
 * Adjustment of p-values for multiple testing over one family of tests (for a report: all
 * segment-versus-rest tests of one metric).
 */
import { StatsInputError } from './errors.js';
import { requireClosedUnitInterval } from './validate.js';

/** `'bh'` Benjamini–Hochberg, `'holm'` Holm step-down, `'bonferroni'`, or `'none'`. */
export type AdjustmentMethod = 'bh' | 'holm' | 'bonferroni' | 'none';

/**
 * Adjusts a family of p-values, returned in the input order, as R's `p.adjust`:
 * - `'bh'` (false discovery rate): with the m tested p-values sorted ascending,
 *   p̃₍ᵢ₎ = min over j ≥ i of min(1, m·p₍ⱼ₎/j). Source: Benjamini, Y. & Hochberg, Y. (1995).
 *   Controlling the false discovery rate. JRSS B 57, 289–300.
 * - `'holm'` (family-wise error, step-down): p̃₍ᵢ₎ = max over j ≤ i of min(1, (m − j + 1)·p₍ⱼ₎).
 *   Source: Holm, S. (1979). A simple sequentially rejective multiple test procedure.
 *   Scandinavian Journal of Statistics 6, 65–70.
 * - `'bonferroni'`: min(1, m·p) (common practice).
 * - `'none'`: unchanged.
 * Adjusted values are ≥ the raw ones, ≤ 1, and in the same order as the raw ones. `null`
 * entries (tests not run, e.g. segments too small) are passed through as `null` and are not
 * counted in the family size m.
 * @throws StatsInputError when a p-value is outside [0, 1] or the method is unknown
 * @example
 * adjustPValues([0.01, null, 0.04, 0.03], 'bh'); // [0.03, null, 0.04, 0.04]
 */
export function adjustPValues(
  pValues: ReadonlyArray<number | null>,
  method: AdjustmentMethod,
): Array<number | null> {
  if (!Array.isArray(pValues)) throw new StatsInputError('pValues', 'pValues must be an array of numbers or nulls');
  if (method !== 'bh' && method !== 'holm' && method !== 'bonferroni' && method !== 'none') {
    throw new StatsInputError('method', `method must be 'bh', 'holm', 'bonferroni' or 'none', got ${JSON.stringify(method)}`);
  }
  const tested: Array<{ index: number; pValue: number }> = [];
  pValues.forEach((pValue, index) => {
    if (pValue === null) return;
    requireClosedUnitInterval(`pValues[${index}]`, pValue);
    tested.push({ index, pValue });
  });
  const adjusted: Array<number | null> = pValues.map(() => null);
  const familySize = tested.length;
  if (method === 'none' || method === 'bonferroni') {
    for (const { index, pValue } of tested) {
      adjusted[index] = method === 'none' ? pValue : Math.min(1, familySize * pValue);
    }
    return adjusted;
  }
  // Stable sort, so tied p-values keep their input order (the adjusted values of ties are equal anyway).
  const ascending = [...tested].sort((left, right) => left.pValue - right.pValue);
  if (method === 'bh') {
    let runningMinimum = 1;
    for (let rank = familySize; rank >= 1; rank -= 1) {
      const entry = ascending[rank - 1] as { index: number; pValue: number };
      // m/i first, as R does: the factor is ≥ 1, so rounding can never push the result below p.
      runningMinimum = Math.min(runningMinimum, (familySize / rank) * entry.pValue);
      adjusted[entry.index] = runningMinimum;
    }
    return adjusted;
  }
  let runningMaximum = 0;
  for (let rank = 1; rank <= familySize; rank += 1) {
    const entry = ascending[rank - 1] as { index: number; pValue: number };
    runningMaximum = Math.max(runningMaximum, Math.min(1, (familySize - rank + 1) * entry.pValue));
    adjusted[entry.index] = runningMaximum;
  }
  return adjusted;
}
