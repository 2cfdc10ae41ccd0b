/**
 * Empirical-Bayes shrinkage in the normal–normal model: each group's estimate y_i (with known
 * sampling variance s_i²) is drawn toward a prior centre m_i (itself estimated, with variance
 * v_i) by as much as the spread between groups, τ², says it should be. Used on the logit of a
 * conversion rate (the empirical logit) and on a mean.
 *
 * Model: y_i | θ_i ~ N(θ_i, s_i²), θ_i ~ N(m_i, τ² + v_i). Posterior: B_i = s_i²/(s_i² + τ² + v_i),
 * mean m_i + (1 − B_i)(y_i − m_i), variance s_i²(1 − B_i), plus the term of Morris (1983) for
 * the uncertainty of τ² itself, 2/(k − q − 2)·B_i²·(y_i − m_i)².
 * Sources: Efron, B. & Morris, C. (1975), Data analysis using Stein's estimator and its
 * generalizations, JASA 70, 311–319; Morris, C. N. (1983), Parametric empirical Bayes
 * inference: theory and applications, JASA 78, 47–55; Casella, G. (1985), An introduction to
 * empirical Bayes data analysis, The American Statistician 39, 83–87; the moment estimator of
 * τ² is that of DerSimonian, R. & Laird, N. (1986), Controlled Clinical Trials 7, 177–188.
 * The formulas are quoted from memory of those papers.
 */
import { standardNormalQuantile, studentTQuantile } from './distributions.js';
import { StatsInputError } from './errors.js';
import type { EstimateWithInterval } from './result.js';
import { requireCount, requireFiniteNumber, requireOpenUnitInterval } from './validate.js';

/** One group's estimate, its sampling variance and the prior centre it is drawn toward. */
export interface ShrinkageObservation {
  readonly estimate: number;
  /** sampling variance of the estimate, s_i² (> 0) */
  readonly variance: number;
  /** the prior centre m_i */
  readonly centre: number;
  /** variance of the prior centre's own estimate, v_i (≥ 0): the parents' uncertainty */
  readonly centreVariance: number;
}

/** The fitted spread between groups and what it was fitted from. */
export interface PriorSpread {
  /** τ², the variance of the true values about their centres (0 when the data show none) */
  readonly betweenVariance: number;
  /** k, the number of groups fitted */
  readonly groups: number;
  /** q, the number of centre parameters estimated from these same groups */
  readonly centresFitted: number;
}

function requireObservation(observation: ShrinkageObservation, index: number): void {
  requireFiniteNumber(`observations[${index}].estimate`, observation.estimate);
  requireFiniteNumber(`observations[${index}].centre`, observation.centre);
  if (!(observation.variance > 0) || !Number.isFinite(observation.variance)) {
    throw new StatsInputError(`observations[${index}].variance`, `the sampling variance must be positive and finite, got ${String(observation.variance)}`);
  }
  if (!(observation.centreVariance >= 0) || !Number.isFinite(observation.centreVariance)) {
    throw new StatsInputError(`observations[${index}].centreVariance`, `the centre's variance must be zero or positive, got ${String(observation.centreVariance)}`);
  }
}

/**
 * The moment estimate of τ² about given centres, weights w_i = 1/s_i²:
 * τ² = max(0, (Q − (k − q)) / (Σw·(k − q)/k)), Q = Σ w_i (y_i − m_i)², where q is the number of
 * centre parameters estimated from these same groups (1 for groups that partition the
 * population whose figure is their centre; the labels of both dimensions less one for the
 * main-effects prediction of a two-way table). With q = 0 or equal weights this is the
 * DerSimonian–Laird estimator; otherwise its denominator is the equal-weights form.
 * @throws StatsInputError for an invalid observation or q that is not a count
 * @example
 * fitPriorSpread([{ estimate: 1, variance: 0.5, centre: 0, centreVariance: 0 }, { estimate: -1, variance: 0.5, centre: 0, centreVariance: 0 }], 0);
 * // { betweenVariance: 0.5, groups: 2, centresFitted: 0 }  (Q = 4, (4 − 2)/4)
 */
export function fitPriorSpread(observations: readonly ShrinkageObservation[], centresFitted: number): PriorSpread {
  requireCount('centresFitted', centresFitted);
  observations.forEach(requireObservation);
  const k = observations.length;
  let q = 0;
  let sumWeights = 0;
  for (const observation of observations) {
    const weight = 1 / observation.variance;
    const residual = observation.estimate - observation.centre;
    q += weight * residual * residual;
    sumWeights += weight;
  }
  const residualDegrees = k - centresFitted;
  const betweenVariance = residualDegrees > 0 ? Math.max(0, (q - residualDegrees) / ((sumWeights * residualDegrees) / k)) : 0;
  return { betweenVariance, groups: k, centresFitted };
}

/** A shrunk estimate: posterior mean, variance, the shrinkage factor B and the interval. */
export interface ShrunkEstimate extends EstimateWithInterval {
  readonly variance: number;
  /** B_i: 0 keeps the group's own estimate, 1 replaces it by the centre */
  readonly shrinkage: number;
}

/**
 * The posterior of one group under the fitted spread, with a normal interval at `confidence`.
 * When fewer than three groups are left after the fitted centres (k − q ≤ 2) the spread
 * cannot be judged, and the group keeps its own estimate and sampling variance (B = 0).
 * @throws StatsInputError for an invalid observation or confidence
 * @example
 * shrinkObservation({ estimate: 2, variance: 1, centre: 0, centreVariance: 0 }, { betweenVariance: 1, groups: 10, centresFitted: 0 }, 0.95);
 * // B = 0.5: estimate 1, variance 0.5 + 2/8·0.25·4 = 0.75, interval 1 ± 1.96·√0.75
 */
export function shrinkObservation(observation: ShrinkageObservation, spread: PriorSpread, confidence: number): ShrunkEstimate {
  requireObservation(observation, 0);
  requireOpenUnitInterval('confidence', confidence);
  requireCount('spread.groups', spread.groups);
  const freeGroups = spread.groups - spread.centresFitted - 2;
  const z = standardNormalQuantile(1 - (1 - confidence) / 2);
  if (freeGroups <= 0) {
    const sd = Math.sqrt(observation.variance);
    return { estimate: observation.estimate, variance: observation.variance, shrinkage: 0, interval: { low: observation.estimate - z * sd, high: observation.estimate + z * sd } };
  }
  const priorVariance = spread.betweenVariance + observation.centreVariance;
  const shrinkage = observation.variance / (observation.variance + priorVariance);
  const residual = observation.estimate - observation.centre;
  const estimate = observation.centre + (1 - shrinkage) * residual;
  const variance = observation.variance * (1 - shrinkage) + (2 / freeGroups) * shrinkage * shrinkage * residual * residual;
  const sd = Math.sqrt(variance);
  return { estimate, variance, shrinkage, interval: { low: estimate - z * sd, high: estimate + z * sd } };
}

/**
 * The empirical logit of x successes in n trials and its variance:
 * log((x + ½)/(n − x + ½)), 1/(x + ½) + 1/(n − x + ½). Source: Cox, D. R. (1970), The
 * Analysis of Binary Data, §3.2; Gart, J. J. & Zweifel, J. R. (1967), Biometrika 54, 181–187
 * (from memory). Defined for every x from 0 to n.
 * @throws StatsInputError when x or n is not a count or x > n or n = 0
 * @example
 * empiricalLogit(3, 10); // { estimate: log(3.5/7.5) ≈ −0.76214, variance: 1/3.5 + 1/7.5 ≈ 0.41905 }
 */
export function empiricalLogit(successes: number, trials: number): { estimate: number; variance: number } {
  requireCount('successes', successes);
  requireCount('trials', trials);
  if (trials === 0 || successes > trials) throw new StatsInputError('successes', `needs 0 ≤ successes ≤ trials and trials > 0, got ${successes} of ${trials}`);
  const yes = successes + 0.5;
  const no = trials - successes + 0.5;
  return { estimate: Math.log(yes / no), variance: 1 / yes + 1 / no };
}

/**
 * The logistic function, the inverse of the logit.
 * @example
 * logistic(0); // 0.5
 */
export function logistic(x: number): number {
  requireFiniteNumber('x', x);
  return x >= 0 ? 1 / (1 + Math.exp(-x)) : Math.exp(x) / (1 + Math.exp(x));
}

/** One cell of a two-way table: its labels, estimate and sampling variance. */
export interface TwoWayCellObservation {
  readonly rowLabel: string;
  readonly columnLabel: string;
  readonly estimate: number;
  /** sampling variance of the estimate, s_i² (> 0) */
  readonly variance: number;
}

/**
 * The spread of each dimension's label effects in a two-way table: a variance (0 leaves the
 * dimension out of the model), or null when it cannot be judged and the labels' effects are
 * fitted freely (a flat prior).
 */
export interface MainEffectSpreads {
  readonly row: number | null;
  readonly column: number | null;
}

/** The fitted spread of the cells about the main-effects model of their table. */
export interface InteractionSpread {
  /** τ², the variance of the interactions (0 when the data show none) */
  readonly betweenVariance: number;
  /** k, the cells fitted */
  readonly cells: number;
  /** p, the rank of the main-effects design (intercept and the labels of both dimensions, less one each) */
  readonly parameters: number;
}

/**
 * A symmetric positive semi-definite matrix factored by Cholesky, a pivot at or below a
 * relative tolerance counted as zero (that variable is dropped, which gives a generalised
 * inverse: quadratic forms and fitted values of estimable quantities are unaffected).
 */
interface SemiDefiniteFactor {
  readonly lower: Float64Array[];
  /** Lᵀ by rows (upper[i][k] = lower[k][i]), so the back substitution reads memory in order. */
  readonly upper: Float64Array[];
  readonly dropped: boolean[];
  readonly rank: number;
}

function factorSemiDefinite(matrix: readonly Float64Array[]): SemiDefiniteFactor {
  const size = matrix.length;
  const largestDiagonal = matrix.reduce((largest, row, index) => Math.max(largest, Math.abs(row[index] as number)), 0);
  const tolerance = 1e-10 * largestDiagonal;
  const lower = matrix.map(() => new Float64Array(size));
  const dropped: boolean[] = new Array<boolean>(size).fill(false);
  let rank = 0;
  for (let column = 0; column < size; column++) {
    const pivotRow = lower[column] as Float64Array;
    let pivot = (matrix[column] as Float64Array)[column] as number;
    for (let k = 0; k < column; k++) pivot -= (pivotRow[k] as number) ** 2;
    if (pivot <= tolerance) {
      dropped[column] = true;
      continue;
    }
    rank += 1;
    const root = Math.sqrt(pivot);
    pivotRow[column] = root;
    for (let row = column + 1; row < size; row++) {
      const target = lower[row] as Float64Array;
      let sum = (matrix[row] as Float64Array)[column] as number;
      for (let k = 0; k < column; k++) sum -= (target[k] as number) * (pivotRow[k] as number);
      target[column] = sum / root;
    }
  }
  const upper = lower.map((_row, row) => {
    const line = new Float64Array(size);
    for (let k = row; k < size; k++) line[k] = (lower[k] as Float64Array)[row] as number;
    return line;
  });
  return { lower, upper, dropped, rank };
}

/** z with L z = b (the dropped variables held at 0). */
function forwardSolve(factor: SemiDefiniteFactor, right: ArrayLike<number>): Float64Array {
  const size = factor.lower.length;
  const z = new Float64Array(size);
  for (let row = 0; row < size; row++) {
    if (factor.dropped[row]) continue;
    const lowerRow = factor.lower[row] as Float64Array;
    let sum = right[row] as number;
    for (let k = 0; k < row; k++) sum -= (lowerRow[k] as number) * (z[k] as number);
    z[row] = sum / (lowerRow[row] as number);
  }
  return z;
}

/** x with A x = b, A = L Lᵀ (the dropped variables held at 0). */
function solveFactored(factor: SemiDefiniteFactor, right: ArrayLike<number>): Float64Array {
  const z = forwardSolve(factor, right);
  const size = z.length;
  const x = new Float64Array(size);
  for (let row = size - 1; row >= 0; row--) {
    if (factor.dropped[row]) continue;
    const upperRow = factor.upper[row] as Float64Array;
    let sum = z[row] as number;
    for (let k = row + 1; k < size; k++) sum -= (upperRow[k] as number) * (x[k] as number);
    x[row] = sum / (upperRow[row] as number);
  }
  return x;
}

/**
 * The generalised inverse A⁻ that the factor stands for (the dropped variables' rows and columns
 * 0), one solve per column: p³ work, so that each cell's x'A⁻x is then a few look-ups for its
 * 0/1 design row instead of a solve.
 */
function generalisedInverse(factor: SemiDefiniteFactor): Float64Array[] {
  const size = factor.lower.length;
  return Array.from({ length: size }, (_, column) => {
    const unit = new Float64Array(size);
    unit[column] = 1;
    return solveFactored(factor, unit);
  });
}

/** x'A⁻x for a 0/1 design row x given by its columns. */
function designQuadraticForm(inverse: readonly Float64Array[], row: DesignRow): number {
  let sum = 0;
  for (const a of row) {
    const line = inverse[a] as Float64Array;
    for (const b of row) sum += line[b] as number;
  }
  return sum;
}

/** A cell's row in a design matrix: the columns where it has a 1. */
type DesignRow = readonly number[];

/** Column numbers of a dimension's labels in a design, in order of first appearance, from `offset`; the first label gets none when `dropFirst`. */
function labelColumns(labels: readonly string[], offset: number, dropFirst: boolean): { columnOf: Map<string, number>; count: number } {
  const columnOf = new Map<string, number>();
  let count = 0;
  const distinct = [...new Set(labels)];
  distinct.forEach((label, index) => {
    if (dropFirst && index === 0) return;
    columnOf.set(label, offset + count);
    count += 1;
  });
  return { columnOf, count };
}

/** Σ_i weight_i x_i x_iᵀ and Σ_i weight_i y_i x_i for 0/1 design rows. */
function weightedNormalEquations(rows: readonly DesignRow[], weights: readonly number[], values: readonly number[], size: number): { matrix: Float64Array[]; right: Float64Array } {
  const matrix = Array.from({ length: size }, () => new Float64Array(size));
  const right = new Float64Array(size);
  rows.forEach((row, index) => {
    const weight = weights[index] as number;
    for (const a of row) {
      right[a] = (right[a] as number) + weight * (values[index] as number);
      const line = matrix[a] as Float64Array;
      for (const b of row) line[b] = (line[b] as number) + weight;
    }
  });
  return { matrix, right };
}

function requireCell(cell: TwoWayCellObservation, index: number): void {
  requireFiniteNumber(`cells[${index}].estimate`, cell.estimate);
  if (!(cell.variance > 0) || !Number.isFinite(cell.variance)) {
    throw new StatsInputError(`cells[${index}].variance`, `the sampling variance must be positive and finite, got ${String(cell.variance)}`);
  }
}

/**
 * τ² of the interactions of a two-way table: the moment estimator of DerSimonian & Laird
 * generalised to meta-regression, about the weighted least-squares fit of the main-effects
 * model y = μ + α_row + β_column (weights w_i = 1/s_i²):
 * τ² = max(0, (Q_E − (k − p)) / tr P), Q_E = Σ w_i (y_i − ŷ_i)², tr P = Σ w_i − Σ w_i² x_iᵀ(XᵀWX)⁻x_i,
 * p the rank of X. Source: Raudenbush, S. W. (2009), Analyzing effect sizes: random-effects
 * models, in Cooper, Hedges & Valentine (eds.), The Handbook of Research Synthesis and
 * Meta-Analysis, 2nd ed.; it is the "DL" estimator of R metafor's rma() with moderators
 * (Viechtbauer 2010, Journal of Statistical Software 36(3)) — quoted from memory.
 * @throws StatsInputError for an invalid cell
 */
export function fitInteractionSpread(cells: readonly TwoWayCellObservation[]): InteractionSpread {
  cells.forEach(requireCell);
  const k = cells.length;
  const rowsOf = labelColumns(cells.map((cell) => cell.rowLabel), 1, true);
  const columnsOf = labelColumns(cells.map((cell) => cell.columnLabel), 1 + rowsOf.count, true);
  const size = 1 + rowsOf.count + columnsOf.count;
  const design = cells.map((cell): DesignRow => [0, rowsOf.columnOf.get(cell.rowLabel), columnsOf.columnOf.get(cell.columnLabel)].filter((column): column is number => column !== undefined));
  const weights = cells.map((cell) => 1 / cell.variance);
  const estimates = cells.map((cell) => cell.estimate);
  const { matrix, right } = weightedNormalEquations(design, weights, estimates, size);
  const factor = factorSemiDefinite(matrix);
  const coefficients = solveFactored(factor, right);
  const inverse = generalisedInverse(factor);
  let residualSquares = 0;
  let trace = 0;
  design.forEach((row, index) => {
    const weight = weights[index] as number;
    const fitted = row.reduce((sum, column) => sum + (coefficients[column] as number), 0);
    residualSquares += weight * ((estimates[index] as number) - fitted) ** 2;
    trace += weight - weight * weight * designQuadraticForm(inverse, row);
  });
  const residualDegrees = k - factor.rank;
  const betweenVariance = residualDegrees > 0 && trace > 0 ? Math.max(0, (residualSquares - residualDegrees) / trace) : 0;
  return { betweenVariance, cells: k, parameters: factor.rank };
}

/**
 * Every cell of a two-way table shrunk in the mixed model y_i = μ + α_row + β_column + γ_i + e_i,
 * e_i ~ N(0, s_i²), γ_i ~ N(0, τ²) (τ² from `fitInteractionSpread`), the label effects α and β
 * N(0, σ²) with the dimension's spread from `mainSpreads` (or free), μ free: the best linear
 * unbiased predictor of θ_i = μ + α + β + γ_i from Henderson's mixed-model equations, with the
 * interactions absorbed into the residual variance D_i = s_i² + τ²:
 * [M'D⁻¹M + G⁻¹] (b, u) = M'D⁻¹y, η̂_i = m_i'(b, u), B_i = s_i²/D_i,
 * θ̂_i = η̂_i + (1 − B_i)(y_i − η̂_i), prediction error variance B_i² c_i + s_i²(1 − B_i) with
 * c_i = m_i'[M'D⁻¹M + G⁻¹]⁻m_i, plus Morris's allowance for τ² being estimated,
 * 2/(k − p − 2)·(y_i − θ̂_i)². The interval uses Student's t with k − p degrees of freedom, as
 * Knapp & Hartung do for meta-regression, since the spreads come from few labels. Sources:
 * Henderson, C. R. (1975), Best linear unbiased estimation and prediction under a selection
 * model, Biometrics 31, 423–447; Robinson, G. K. (1991), That BLUP is a good thing, Statistical
 * Science 6, 15–51; Morris (1983); Knapp, G. & Hartung, J. (2003), Statistics in Medicine 22,
 * 2693–2710 — formulas from memory. When k − p ≤ 2 the spread cannot be judged and every cell
 * keeps its own estimate and sampling variance (B = 0), with a normal interval.
 * @throws StatsInputError for an invalid cell, spread or confidence
 */
export function shrinkTwoWayTable(
  cells: readonly TwoWayCellObservation[],
  mainSpreads: MainEffectSpreads,
  confidence: number,
): { spread: InteractionSpread; estimates: ShrunkEstimate[] } {
  requireOpenUnitInterval('confidence', confidence);
  for (const [name, value] of Object.entries(mainSpreads) as Array<[string, number | null]>) {
    if (value !== null && !(value >= 0 && Number.isFinite(value))) throw new StatsInputError(`mainSpreads.${name}`, `a spread must be zero or positive and finite, or null, got ${String(value)}`);
  }
  const spread = fitInteractionSpread(cells);
  const residualDegrees = spread.cells - spread.parameters;
  if (residualDegrees <= 2) {
    const z = standardNormalQuantile(1 - (1 - confidence) / 2);
    const estimates = cells.map((cell) => {
      const sd = Math.sqrt(cell.variance);
      return { estimate: cell.estimate, variance: cell.variance, shrinkage: 0, interval: { low: cell.estimate - z * sd, high: cell.estimate + z * sd } };
    });
    return { spread, estimates };
  }
  // design M: the intercept, then each dimension's labels (the first dropped when they are free;
  // a dimension whose spread is 0 has no effects)
  const dimensions = [
    { spread: mainSpreads.row, labelOf: (cell: TwoWayCellObservation) => cell.rowLabel },
    { spread: mainSpreads.column, labelOf: (cell: TwoWayCellObservation) => cell.columnLabel },
  ].filter(({ spread: variance }) => variance !== 0);
  let size = 1;
  const precision: number[] = [0];
  const columnMaps = dimensions.map(({ spread: variance, labelOf }) => {
    const { columnOf, count } = labelColumns(cells.map(labelOf), size, variance === null);
    for (let index = 0; index < count; index++) precision.push(variance === null ? 0 : 1 / variance);
    size += count;
    return columnOf;
  });
  const design = cells.map((cell): DesignRow => [0, ...dimensions.map(({ labelOf }, index) => (columnMaps[index] as Map<string, number>).get(labelOf(cell)))].filter((column): column is number => column !== undefined));
  const tau2 = spread.betweenVariance;
  const weights = cells.map((cell) => 1 / (cell.variance + tau2));
  const { matrix, right } = weightedNormalEquations(
    design,
    weights,
    cells.map((cell) => cell.estimate),
    size,
  );
  precision.forEach((value, index) => {
    const line = matrix[index] as Float64Array;
    line[index] = (line[index] as number) + value;
  });
  const factor = factorSemiDefinite(matrix);
  const coefficients = solveFactored(factor, right);
  const inverse = generalisedInverse(factor);
  const quantile = studentTQuantile(1 - (1 - confidence) / 2, residualDegrees);
  const estimates = cells.map((cell, index) => {
    const row = design[index] as DesignRow;
    const centre = row.reduce((sum, column) => sum + (coefficients[column] as number), 0);
    const centreVariance = designQuadraticForm(inverse, row);
    const shrinkage = cell.variance / (cell.variance + tau2);
    const estimate = centre + (1 - shrinkage) * (cell.estimate - centre);
    const pull = cell.estimate - estimate;
    const variance = shrinkage * shrinkage * centreVariance + cell.variance * (1 - shrinkage) + (2 / (residualDegrees - 2)) * pull * pull;
    const sd = Math.sqrt(variance);
    return { estimate, variance, shrinkage, interval: { low: estimate - quantile * sd, high: estimate + quantile * sd } };
  });
  return { spread, estimates };
}
