/** Ordering of text in code: SQL collations differ between engines, so text is never ordered in SQL. */

/** Code-unit order, the same on every machine and engine (SQL collations are not). */
export function compareText(left: string, right: string): number {
  if (left === right) return 0;
  return left < right ? -1 : 1;
}

/** Orders lists of dimension values element by element, by code units. */
export function compareLabelLists(left: readonly string[], right: readonly string[]): number {
  for (let index = 0; index < Math.max(left.length, right.length); index += 1) {
    const order = compareText(left[index] ?? '', right[index] ?? '');
    if (order !== 0) return order;
  }
  return 0;
}
