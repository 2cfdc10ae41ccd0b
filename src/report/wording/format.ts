/**
 * The one formatter of numbers in words. Every sentence of a report writes its numbers
 * through these functions from the snapshot's own fields, so the words and the fields cannot
 * disagree (a test re-formats the fields and finds them in the sentences).
 */

function withThousands(integerDigits: string): string {
  return integerDigits.replace(/\B(?=(\d{3})+(?!\d))/g, ',');
}

function fixed(value: number, decimals: number): string {
  const text = value.toFixed(decimals);
  // "-0.0" reads as a negative difference that is not there.
  return /^-0(\.0+)?$/.test(text) ? text.slice(1) : text;
}

function grouped(text: string): string {
  const negative = text.startsWith('-');
  const body = negative ? text.slice(1) : text;
  const [integer, fraction] = body.split('.') as [string, string | undefined];
  return `${negative ? '-' : ''}${withThousands(integer)}${fraction === undefined ? '' : `.${fraction}`}`;
}

/**
 * A count of units, with thousands separators.
 * @example
 * formatCount(12345); // '12,345'
 */
export function formatCount(count: number): string {
  return grouped(fixed(count, 0));
}

/**
 * A rate or share (a fraction) as a percentage with one decimal.
 * @example
 * formatPercent(0.14123); // '14.1%'
 */
export function formatPercent(fraction: number): string {
  return `${grouped(fixed(fraction * 100, 1))}%`;
}

/**
 * A difference of rates in percentage points with one decimal and an explicit sign.
 * @example
 * formatPoints(0.0231); // '+2.3'
 * formatPoints(-0.004); // '-0.4'
 */
export function formatPoints(difference: number): string {
  const text = grouped(fixed(difference * 100, 1));
  return text.startsWith('-') || /^0(\.0+)?$/.test(text) ? text : `+${text}`;
}

/**
 * The size of a rate difference in percentage points, without a sign (for thresholds).
 * @example
 * formatPointsMagnitude(0.0214); // '2.1'
 */
export function formatPointsMagnitude(difference: number): string {
  return grouped(fixed(Math.abs(difference) * 100, 1));
}

/**
 * An amount of money in major units with two decimals (no currency symbol: the data do not say which).
 * @example
 * formatMoney(1234.5); // '1,234.50'
 */
export function formatMoney(amount: number): string {
  return grouped(fixed(amount, 2));
}

/**
 * A difference of money with an explicit sign.
 * @example
 * formatSignedMoney(3.456); // '+3.46'
 */
export function formatSignedMoney(difference: number): string {
  const text = formatMoney(difference);
  return text.startsWith('-') || /^0\.00$/.test(text) ? text : `+${text}`;
}

/**
 * A ratio (lift) with two decimals.
 * @example
 * formatRatio(1.2345); // '1.23'
 */
export function formatRatio(ratio: number): string {
  return grouped(fixed(ratio, 2));
}

/**
 * An age, or a spread of ages, in years with one decimal.
 * @example
 * formatYears(41.26); // '41.3'
 */
export function formatYears(years: number): string {
  return grouped(fixed(years, 1));
}

/**
 * A coefficient (a correlation, a skewness) with two decimals. Unlike a difference, a
 * coefficient that rounds to zero keeps its sign: -0.00 still tells which way a tiny
 * association or asymmetry goes.
 * @example
 * formatCoefficient(0.1234); // '0.12'
 * formatCoefficient(-0.004); // '-0.00'
 */
export function formatCoefficient(coefficient: number): string {
  return coefficient.toFixed(2);
}

/**
 * A p-value with two significant digits, or `< 0.001` below that.
 * @example
 * formatPValue(0.03456); // '0.035'
 * formatPValue(0.00002); // '< 0.001'
 */
export function formatPValue(pValue: number): string {
  if (pValue < 0.001) return '< 0.001';
  return pValue.toPrecision(2);
}

/**
 * A confidence level as a percentage without needless decimals.
 * @example
 * formatConfidence(0.95); // '95%'
 * formatConfidence(0.975); // '97.5%'
 */
export function formatConfidence(confidence: number): string {
  return `${Number((confidence * 100).toFixed(4))}%`;
}

/**
 * A whole-number rank or rank change.
 * @example
 * formatRank(3); // '3'
 */
export function formatRank(rank: number): string {
  return String(rank);
}
