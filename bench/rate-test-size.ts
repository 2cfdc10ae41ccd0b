/**
 * The exact size of the report's rate test (rateTest: pooled z, Fisher's exact test when an
 * expected count is below 5) for one segment of n contacts against the rest of a population
 * of N, when every contact converts at the same rate p, at the per-test level α/m that Holm's
 * first step (and Benjamini–Hochberg's smallest p-value) compares with. Computed, not
 * simulated: conditional on the total conversions T the segment's count is hypergeometric,
 * and T is binomial(N, p), so
 *   size = Σ_T Binom(T; N, p) · Σ_x Hyp(x; N, T, n) · [rateTest(x, n, T − x, N − n) rejects].
 * Printed per direction (a false `better` and a false `worse`), each against α/(2m), and beside
 * it the size of Fisher's exact test (Fisher 1935) and of its mid-p version (Lancaster 1961,
 * JASA 56, 223–234), the published small-sample alternatives, at the same level.
 *
 *   npx tsx bench/rate-test-size.ts [population=4000] [rate=0.1] [tests=34]
 */
import hypergeometricPmf from '@stdlib/stats-base-dists-hypergeometric-pmf';
import { rateTest } from '../src/report/analysis/segment-tests.js';

const population = Math.max(100, Number(process.argv[2] ?? 4000));
const rate = Number(process.argv[3] ?? 0.1);
const tests = Math.max(1, Number(process.argv[4] ?? 34));
const alpha = 0.05 / tests;

/** Binomial(N, p) probabilities by the ratio recurrence (no special functions needed). */
function binomialProbabilities(trials: number, probability: number): number[] {
  const probabilities = [Math.pow(1 - probability, trials)];
  for (let k = 0; k < trials; k += 1) {
    probabilities.push(((probabilities[k] as number) * (trials - k) * probability) / ((k + 1) * (1 - probability)));
  }
  return probabilities;
}

interface Sizes {
  better: number;
  worse: number;
  /** Fisher's exact test (R's two-sided rule) at the same level, both directions */
  fisher: number;
  /** Lancaster's mid-p version of it: p − ½·P(the observed table) */
  midP: number;
}

// As fisherExactTest and R's fisher.test: tables within a factor 1 + 1e-7 count as tied.
const FISHER_RELATIVE_TOLERANCE = 1 + 1e-7;

function exactSize(segmentSize: number): Sizes {
  const totals = binomialProbabilities(population, rate);
  const sizes: Sizes = { better: 0, worse: 0, fisher: 0, midP: 0 };
  totals.forEach((totalProbability, total) => {
    if (totalProbability < 1e-15) return;
    const smallest = Math.max(0, total - (population - segmentSize));
    const largest = Math.min(segmentSize, total);
    const conditional: number[] = [];
    for (let x = smallest; x <= largest; x += 1) conditional.push(hypergeometricPmf(x, population, total, segmentSize));
    for (let x = smallest; x <= largest; x += 1) {
      const probability = totalProbability * (conditional[x - smallest] as number);
      const threshold = (conditional[x - smallest] as number) * FISHER_RELATIVE_TOLERANCE;
      const fisherP = conditional.reduce((sum, value) => (value <= threshold ? sum + value : sum), 0);
      if (fisherP < alpha) sizes.fisher += probability;
      if (fisherP - (conditional[x - smallest] as number) / 2 < alpha) sizes.midP += probability;
      const test = rateTest(x, segmentSize, total - x, population - segmentSize);
      if (!test.ok || test.value.pValue >= alpha) continue;
      if (x / segmentSize > (total - x) / (population - segmentSize)) sizes.better += probability;
      else sizes.worse += probability;
    }
  });
  return sizes;
}

console.log(`Population ${population}, rate ${rate} everywhere, level α/m = 0.05/${tests} = ${alpha.toPrecision(4)} (each direction's share α/(2m) = ${(alpha / 2).toPrecision(4)})`);
console.log('| segment contacts | expected conversions | rate test: false better | rate test: false worse | rate test size / (α/m) | Fisher size / (α/m) | mid-p size / (α/m) |');
console.log('| ---: | ---: | ---: | ---: | ---: | ---: | ---: |');
for (const segmentSize of [100, 167, 250, 400, 667, 1000]) {
  if (segmentSize >= population) continue;
  const sizes = exactSize(segmentSize);
  const ratio = (size: number) => (size / alpha).toFixed(2);
  console.log(`| ${segmentSize} | ${(segmentSize * rate).toFixed(1)} | ${sizes.better.toPrecision(3)} | ${sizes.worse.toPrecision(3)} | ${ratio(sizes.better + sizes.worse)} | ${ratio(sizes.fisher)} | ${ratio(sizes.midP)} |`);
}
