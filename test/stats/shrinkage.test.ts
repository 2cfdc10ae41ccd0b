import { describe, expect, test } from 'vitest';
import { empiricalLogit, fitInteractionSpread, fitPriorSpread, logistic, shrinkObservation, shrinkTwoWayTable, StatsInputError, summarize, twoPartTest } from '../../src/stats/index.js';

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

describe('two-way table: interaction spread and mixed-model shrinkage', () => {
  // A 3 × 4 table with one empty cell (b, y). Check values computed once with numpy 2.4.6 and
  // scipy 1.17.1 by the dense formulas, independently of the mixed-model equations used here:
  //   X = [1, row dummies (first dropped), column dummies (first dropped)]; p = matrix_rank(X); W = diag(1/s2)
  //   P = W - W@X@inv(X.T@W@X)@X.T@W; tau2 = max(0, (y@P@y - (k - p))/trace(P))
  //   F = [1, dummies of free dimensions (first dropped)]; Z = dummies of random dimensions (all labels)
  //   Gt = Z@diag(spreads)@Z.T + tau2*I; V = Gt + diag(s2); Vi = inv(V); A = F.T@Vi@F
  //   beta = solve(A, F.T@Vi@y); theta = F@beta + Gt@Vi@(y - F@beta); L = F - Gt@Vi@F
  //   var = diag(Gt - Gt@Vi@Gt + L@inv(A)@L.T) + 2/(k-p-2)*(y-theta)**2
  //   low = theta - t.ppf(0.975, k-p)*sqrt(var)
  const rows = ['a', 'a', 'a', 'a', 'b', 'b', 'b', 'c', 'c', 'c', 'c'];
  const columns = ['w', 'x', 'y', 'z', 'w', 'x', 'z', 'w', 'x', 'y', 'z'];
  const logits = [-2.1, -1.6, -1.5, -1.2, -1.8, -2.3, -0.7, -3.2, -2.2, -2.9, -0.9];
  const sampling = [0.08, 0.12, 0.2, 0.1, 0.15, 0.09, 0.3, 0.11, 0.07, 0.25, 0.14];
  const cells = logits.map((estimate, index) => ({ rowLabel: rows[index] as string, columnLabel: columns[index] as string, estimate, variance: sampling[index] as number }));

  test('fits τ² by the DerSimonian–Laird moment estimator about the weighted main-effects fit', () => {
    const spread = fitInteractionSpread(cells);
    // numpy: p = 6, Q_E = 10.797732710215254, tr P = 38.919335737111, τ² = 0.14896792559300814
    expect(spread.parameters).toBe(6);
    expect(spread.cells).toBe(11);
    expect(spread.betweenVariance).toBeCloseTo(0.14896792559300814, 12);
  });

  test.each([
    // spreads (row, column); cells 0, 6 and 9: [estimate, variance, low, high] from numpy/scipy as above
    {
      spreads: { row: 0.2, column: null },
      expected: [
        [0, -2.133667741510685, 0.06719844028676569, -2.8000309810564024, -1.4673045019649673],
        [6, -0.817792714398168, 0.18080312701878437, -1.9108285560084823, 0.2752431272121463],
        [9, -2.590946070679375, 0.24150555140200092, -3.8542126115204347, -1.3276795298383155],
      ],
    },
    {
      spreads: { row: 0.2, column: 0.1 },
      expected: [
        [0, -2.0500322292119173, 0.06443893833848484, -2.702569951494623, -1.3974945069292115],
        [6, -1.1268741313405104, 0.2747675526787395, -2.474328780377874, 0.2205805176968536],
        [9, -2.4946005127690913, 0.24867124078306196, -3.77647119555656, -1.2127298299816227],
      ],
    },
    {
      spreads: { row: null, column: null },
      expected: [
        [0, -2.113836467895377, 0.06803027833901353, -2.7843114205780966, -1.4433615152126578],
        [6, -0.7835196221740812, 0.1888074534682462, -1.9004883180383574, 0.33344907369019494],
        [9, -2.6452951365443895, 0.22497701329232972, -3.8645668763239707, -1.4260233967648082],
      ],
    },
  ])('predicts each cell from the whole table (label spreads $spreads.row, $spreads.column)', ({ spreads, expected }) => {
    const { estimates } = shrinkTwoWayTable(cells, spreads, 0.95);
    for (const [index, estimate, variance, low, high] of expected as Array<[number, number, number, number, number]>) {
      const shrunk = estimates[index]!;
      expect(shrunk.estimate).toBeCloseTo(estimate, 10);
      expect(shrunk.variance).toBeCloseTo(variance, 10);
      expect(shrunk.interval.low).toBeCloseTo(low, 9);
      expect(shrunk.interval.high).toBeCloseTo(high, 9);
    }
  });

  test('a table in two disconnected blocks: the design is rank-deficient and a generalised inverse is used', () => {
    // rows a–c meet only columns w–y, rows d–f only u, v, z: rank 10 of 11 columns. numpy 2.4.6 /
    // scipy 1.17.1, the dense formulas above with pinv in place of inv:
    //   p = 10, τ² = 0.22983520520962772; free/free cell 0: -2.0253358044968373, var 0.08805282624731658,
    //   low -2.709612472271563; cell 10: -1.70823875162754, 0.13212071630312988, -2.5464346697218425;
    //   rows random (0.2), columns free, cell 10: -1.7687077030685088, 0.12391016034146397, -2.580441337064241
    const blockRows = ['a', 'a', 'a', 'b', 'b', 'b', 'c', 'c', 'c', 'd', 'd', 'd', 'e', 'e', 'e', 'f', 'f', 'f'];
    const blockColumns = ['w', 'x', 'y', 'w', 'x', 'y', 'w', 'x', 'y', 'u', 'v', 'z', 'u', 'v', 'z', 'u', 'v', 'z'];
    const blockLogits = [-2.0, -1.4, -2.5, -1.7, -2.2, -1.1, -2.9, -2.0, -2.6, -1.0, -1.8, -1.3, -2.2, -1.5, -2.4, -1.1, -2.6, -1.9];
    const blockVariances = [0.1, 0.2, 0.15, 0.12, 0.09, 0.3, 0.2, 0.1, 0.14, 0.11, 0.16, 0.13, 0.18, 0.1, 0.22, 0.09, 0.12, 0.2];
    const blocks = blockLogits.map((estimate, index) => ({ rowLabel: blockRows[index] as string, columnLabel: blockColumns[index] as string, estimate, variance: blockVariances[index] as number }));
    const spread = fitInteractionSpread(blocks);
    expect(spread.parameters).toBe(10);
    expect(spread.betweenVariance).toBeCloseTo(0.22983520520962772, 12);
    const free = shrinkTwoWayTable(blocks, { row: null, column: null }, 0.95).estimates;
    expect(free[0]!.estimate).toBeCloseTo(-2.0253358044968373, 10);
    expect(free[0]!.variance).toBeCloseTo(0.08805282624731658, 10);
    expect(free[0]!.interval.low).toBeCloseTo(-2.709612472271563, 9);
    expect(free[10]!.estimate).toBeCloseTo(-1.70823875162754, 10);
    expect(free[10]!.variance).toBeCloseTo(0.13212071630312988, 10);
    const randomRows = shrinkTwoWayTable(blocks, { row: 0.2, column: null }, 0.95).estimates;
    expect(randomRows[10]!.estimate).toBeCloseTo(-1.7687077030685088, 10);
    expect(randomRows[10]!.variance).toBeCloseTo(0.12391016034146397, 10);
    expect(randomRows[10]!.interval.low).toBeCloseTo(-2.580441337064241, 9);
  });

  test('a table with no residual degrees of freedom to spare leaves every cell as it is', () => {
    // 2 × 2: k − p = 4 − 3 = 1, so τ² cannot be judged (by hand)
    const square = cells.filter((cell) => ['a', 'b'].includes(cell.rowLabel) && ['w', 'x'].includes(cell.columnLabel));
    const { spread, estimates } = shrinkTwoWayTable(square, { row: 0.2, column: 0.1 }, 0.95);
    expect(spread.parameters).toBe(3);
    expect(estimates.map((shrunk) => shrunk.estimate)).toEqual(square.map((cell) => cell.estimate));
    expect(estimates.map((shrunk) => shrunk.shrinkage)).toEqual([0, 0, 0, 0]);
  });

  test('rejects a non-positive sampling variance and a negative spread', () => {
    expect(() => fitInteractionSpread([{ rowLabel: 'a', columnLabel: 'w', estimate: 0, variance: 0 }])).toThrow(StatsInputError);
    expect(() => shrinkTwoWayTable(cells, { row: -0.1, column: null }, 0.95)).toThrow(StatsInputError);
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
