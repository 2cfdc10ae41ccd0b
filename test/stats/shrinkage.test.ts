import { describe, expect, test } from 'vitest';
import { empiricalLogit, fitPriorSpread, logistic, shrinkObservation, StatsInputError, summarize, twoPartTest } from '../../src/stats/index.js';

const estimates = [0.8, -0.3, 0.1, 1.2, -0.9];
const variances = [0.1, 0.2, 0.15, 0.3, 0.25];
const centreVariances = [0.01, 0.01, 0.02, 0, 0.05];
const observations = estimates.map((estimate, index) => ({ estimate, variance: variances[index] as number, centre: 0, centreVariance: centreVariances[index] as number }));

describe('empirical-Bayes shrinkage (normal–normal model)', () => {
  // Check values: the same formulas (moment estimate of τ², posterior with Morris's term)
  // computed once in numpy/scipy, independently of this code:
  //   w=1/s2; Q=sum(w*(y-m)**2); tau2=max(0,(Q-(k-q))/(w.sum()*(k-q)/k)); B=s2/(s2+tau2+v)
  //   post=m+(1-B)*(y-m); var=s2*(1-B)+2/(k-q-2)*B**2*(y-m)**2; low=post-norm.ppf(0.975)*sqrt(var)
  // With q = 0 and a known centre this τ² is the DerSimonian–Laird (1986) moment estimator.
  test('fits τ² by moments about known centres and shrinks each group (q = 0)', () => {
    const spread = fitPriorSpread(observations, 0);
    expect(spread.betweenVariance).toBeCloseTo(0.3433333333333334, 12);
    const first = shrinkObservation(observations[0]!, spread, 0.95);
    expect(first.estimate).toBeCloseTo(0.6235294117647059, 12);
    expect(first.variance).toBeCloseTo(0.09870242214532872, 12);
    expect(first.interval.low).toBeCloseTo(0.007768670750756379, 10);
    const fourth = shrinkObservation(observations[3]!, spread, 0.95);
    expect(fourth.estimate).toBeCloseTo(0.6404145077720207, 12);
    expect(fourth.variance).toBeCloseTo(0.36886090901769175, 12);
  });

  test('counts a fitted centre against the degrees of freedom (q = 1)', () => {
    const spread = fitPriorSpread(observations, 1);
    expect(spread.betweenVariance).toBeCloseTo(0.47227011494252885, 12);
    const first = shrinkObservation(observations[0]!, spread, 0.95);
    expect(first.estimate).toBeCloseTo(0.6626067216108178, 12);
    expect(first.variance).toBeCloseTo(0.10170275314787955, 12);
    expect(first.interval.low).toBeCloseTo(0.03755717303982731, 10);
  });

  test('no spread between groups pulls every group to its centre; too few groups leave each as it is', () => {
    const alike = [0.01, -0.01, 0.02, -0.02, 0].map((estimate) => ({ estimate, variance: 0.5, centre: 0, centreVariance: 0 }));
    const spread = fitPriorSpread(alike, 0);
    expect(spread.betweenVariance).toBe(0);
    expect(shrinkObservation(alike[2]!, spread, 0.95).shrinkage).toBe(1);
    expect(shrinkObservation(alike[2]!, spread, 0.95).estimate).toBe(0);
    const few = fitPriorSpread(observations.slice(0, 3), 1);
    const kept = shrinkObservation(observations[0]!, few, 0.95);
    expect(kept.shrinkage).toBe(0);
    expect(kept.estimate).toBe(0.8);
    expect(kept.variance).toBe(0.1);
  });

  test('rejects a sampling variance that is not positive', () => {
    expect(() => fitPriorSpread([{ estimate: 0, variance: 0, centre: 0, centreVariance: 0 }], 0)).toThrow(StatsInputError);
  });

  test('the empirical logit and the logistic function', () => {
    // log(3.5/7.5) and 1/3.5 + 1/7.5, by hand (Cox 1970's empirical logit)
    const { estimate, variance } = empiricalLogit(3, 10);
    expect(estimate).toBeCloseTo(Math.log(3.5 / 7.5), 14);
    expect(variance).toBeCloseTo(1 / 3.5 + 1 / 7.5, 14);
    expect(Number.isFinite(empiricalLogit(0, 40).estimate)).toBe(true);
    expect(logistic(estimate)).toBeCloseTo(3.5 / 11, 14);
    expect(logistic(-800)).toBe(0);
  });
});

describe("Lachenbruch's two-part test", () => {
  // Check values from scipy 1.17.1, computed once:
  //   a = [0]*20 + [12.0, 30.5, 7.25, 55.0, 18.0]; b = [0]*60 + [9.0, 14.5, 22.0, 6.75, 11.0, 40.0, 8.5]
  //   z: pooled two-proportion z of the positive shares; t = stats.ttest_ind(log a+, log b+, equal_var=True)
  //   → z = 1.2102382479972376, t = 0.9121875414482512, X² = 2.296762727688828, stats.chi2.sf(X², 2) = 0.31714970411752463
  const positiveA = [12.0, 30.5, 7.25, 55.0, 18.0];
  const positiveB = [9.0, 14.5, 22.0, 6.75, 11.0, 40.0, 8.5];
  test('matches scipy: z of the positive shares, t of the logs, chi-square with 2 degrees of freedom', () => {
    const result = twoPartTest({ n: 25, logPositive: summarize(positiveA.map(Math.log)) }, { n: 67, logPositive: summarize(positiveB.map(Math.log)) });
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    expect(result.value.z).toBeCloseTo(1.2102382479972376, 10);
    expect(result.value.t).toBeCloseTo(0.9121875414482512, 10);
    expect(result.value.chiSquare).toBeCloseTo(2.296762727688828, 10);
    expect(result.value.pValue).toBeCloseTo(0.31714970411752463, 10);
  });

  test('with every value positive only the log part remains; fewer than 2 positive values cannot be tested', () => {
    const allPositive = twoPartTest({ n: 5, logPositive: summarize(positiveA.map(Math.log)) }, { n: 7, logPositive: summarize(positiveB.map(Math.log)) });
    expect(allPositive.ok && allPositive.value.z).toBe(0);
    // scipy: stats.ttest_ind(np.log(a+), np.log(b+), equal_var=True).pvalue
    expect(allPositive.ok && allPositive.value.pValue).toBeCloseTo(0.383133939753036, 10);
    expect(twoPartTest({ n: 30, logPositive: summarize([Math.log(5)]) }, { n: 67, logPositive: summarize(positiveB.map(Math.log)) }).ok).toBe(false);
  });
});
