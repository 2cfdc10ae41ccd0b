/** Sentences agree in number with their counts and do not speak of "the other 0". */
import { describe, expect, test } from 'vitest';
import { vocabulary, reportSummary, segmentSummary } from '../../src/report/wording/index.js';
import type { Verdict } from '../../src/report/shapes/index.js';
import { knownSnapshot } from '../support/snapshot-fixture.js';

const snapshot = knownSnapshot();
const definition = snapshot.definition;
const words = vocabulary(definition);

function summaryWith(tooSmall: number): string {
  const counts: Record<Verdict, number> = { better: 1, worse: 1, equivalent: 1, inconclusive: 1, too_small: tooSmall };
  return reportSummary({ definition, vocabulary: words, population: { n: 1000, conversion_rate: 0.1, value_mean: null }, counts, familySize: 4, top: null, reversals: 0 });
}

describe('sentence grammar', () => {
  test('one untested segment "has" fewer units; two "have"', () => {
    expect(summaryWith(1)).toContain(` 1 has fewer than ${definition.min_n} ${words.units} (or leaves fewer than that outside) and was not tested.`);
    expect(summaryWith(2)).toContain(` 2 have fewer than ${definition.min_n} ${words.units} (or leave fewer than that outside) and were not tested.`);
  });

  test('a segment holding everyone says no one is left to compare with, not "the other 0"', () => {
    const segment = snapshot.segments[0];
    if (segment === undefined || segment.rest === null) throw new Error('the fixture has no published segment');
    const rest = segment.rest;
    const context = { definition, vocabulary: words, familySizes: { conversion_rate: 1, value: 1 }, hasPreviousSnapshot: false, comparedWith: null };
    const everyone = segmentSummary({ ...segment, verdict: 'too_small', n: 5000, rest: { ...rest, n: 0 } }, context);
    expect(everyone).toMatch(/covers everyone: no contacted customers are left outside it to compare with, so it was not tested\./);
    expect(everyone).not.toMatch(/the other 0/);
    const one = segmentSummary({ ...segment, verdict: 'too_small', n: 5000, rest: { ...rest, n: 1 } }, context);
    expect(one).toMatch(/the other 1 contacted customer is fewer than the /);
  });
});
