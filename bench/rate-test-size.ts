/**
 * The exact size of the report's rate test (rateTest: pooled z, Fisher's exact test when an
 * expected count is below 5) for one segment of n contacts against the rest of a population
 * of N, when every contact converts at the same rate p, at the per-test level α/m that Holm's
 * first step (and Benjamini–Hochberg's smallest p-value) compares with. Computed, not
 * simulated: conditional on the total conversions T the segment's count is hypergeometric,
 * and T is binomial(N, p), so
 *   size = Σ_T Binom(T; N, p) · Σ_x Hyp(x; N, T, n) · [rateTest(x, n, T − x, N − n) rejects].
 * Printed per direction (a false `better` and a false `worse`), each against α/(2m).
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

function exactSize(segmentSize: number): { better: number; worse: number } {
  const totals = binomialProbabilities(population, rate);
  let better = 0;
  let worse = 0;
  totals.forEach((totalProbability, total) => {
    if (totalProbability < 1e-15) return;
    for (let x = Math.max(0, total - (population - segmentSize)); x <= Math.min(segmentSize, total); x += 1) {
      const test = rateTest(x, segmentSize, total - x, population - segmentSize);
      if (!test.ok || test.value.pValue >= alpha) continue;
      const probability = totalProbability * hypergeometricPmf(x, population, total, segmentSize);
      if (x / segmentSize > (total - x) / (population - segmentSize)) better += probability;
      else worse += probability;
    }
  });
  return { better, worse };
}

console.log(`Population ${population}, rate ${rate} everywhere, level α/m = 0.05/${tests} = ${alpha.toPrecision(4)} (each direction's share α/(2m) = ${(alpha / 2).toPrecision(4)})`);
console.log('| segment contacts | expected conversions | size, false better | size, false worse | size / (α/m) |');
console.log('| ---: | ---: | ---: | ---: | ---: |');
for (const segmentSize of [100, 167, 250, 400, 667, 1000, 2000]) {
  if (segmentSize >= population) continue;
  const { better, worse } = exactSize(segmentSize);
  console.log(`| ${segmentSize} | ${(segmentSize * rate).toFixed(1)} | ${better.toPrecision(3)} | ${worse.toPrecision(3)} | ${((better + worse) / alpha).toFixed(2)} |`);
}
