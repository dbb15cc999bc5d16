/**
 * Ordinary / weighted least squares by Householder QR, with model-based and
 * optional cluster-robust (CR1) standard errors.
 *
 * Method: QR least squares, Golub & Van Loan (2013) §5.3.3 (never the normal
 * equations, whose squared condition number costs ~8 digits on NIST Longley),
 * with the rows folded into a k-by-k triangle by Givens rotations
 * (`numeric/row-reduction.ts`) so memory is O(k^2) beyond the inputs;
 * rank detection as R's `lm` (LINPACK `dqrdc2`, relative tolerance 1e-7);
 * CR1: Liang & Zeger (1986), Cameron & Miller (2015), see
 * `numeric/cluster-sandwich.ts`. Weighted rows are scaled by sqrt(weight);
 * rows of weight 0 are left out of the fit and of the degrees of freedom, as
 * R's `lm` does.
 *
 * Cost: O(n k^2) time; O(n) memory for residuals and fitted values.
 */
import { LagparityInputError, type Issue } from '../issues.js';
import { checkClusters, checkFinite, checkLength } from '../numeric/array-checks.js';
import { clusterSandwichCovariance, compactClusters } from '../numeric/cluster-sandwich.js';
import { hasConstantColumn, multiply, selectRows, type DesignMatrix } from '../numeric/design-matrix.js';
import { inverseCrossProduct, solveLeastSquares } from '../numeric/householder-qr.js';
import { reduceWeightedRows } from '../numeric/row-reduction.js';

export interface LeastSquaresData {
  readonly design: DesignMatrix;
  readonly response: ArrayLike<number>;
  /** Prior weights (default 1); rows with weight 0 are dropped. */
  readonly weights?: ArrayLike<number>;
  /** Cluster index per row; when given, a CR1 block is reported. */
  readonly clusters?: ArrayLike<number>;
  /**
   * Rows that each stand for `counts[i]` observations at one design row
   * (collapsed 0/1 attempts): `response[i]` is their weighted mean, the
   * row's weight the sum of theirs, and `withinSumOfSquares[i]` their
   * weighted sum of squares about that mean. The fit is then that of the
   * observations themselves: the same coefficients, and a residual sum of
   * squares, R^2, residual degrees of freedom, residual SD, standard errors
   * and CR1 N that count observations, not rows (the within sums of squares
   * added to the residual and total sums).
   */
  readonly groups?: { readonly counts: ArrayLike<number>; readonly withinSumOfSquares: ArrayLike<number> };
}

/** Cluster-robust covariance block (CR1). */
export interface LeastSquaresRobust {
  readonly kind: 'CR1';
  readonly clusters: number;
  readonly covariance: Float64Array;
  readonly standardErrors: Float64Array;
}

export interface LeastSquaresFitted {
  readonly status: 'fitted';
  readonly names: readonly string[];
  readonly rank: number;
  readonly aliased: readonly string[];
  readonly coefficients: Float64Array;
  /** Null when there are no residual degrees of freedom. */
  readonly standardErrors: Float64Array | null;
  /** k-by-k row-major, sigma^2 (X'WX)^{-1}; null when dfResidual is 0. */
  readonly covariance: Float64Array | null;
  readonly residualStandardDeviation: number | null;
  readonly residualSumOfSquares: number;
  /** Centred R^2 when the design has a constant column, uncentred otherwise (as R). Null when undefined. */
  readonly rSquared: number | null;
  readonly dfResidual: number;
  readonly observations: number;
  readonly fitted: Float64Array;
  readonly residuals: Float64Array;
  readonly robust: LeastSquaresRobust | null;
  readonly warnings: readonly string[];
}

export interface LeastSquaresRankDeficient {
  readonly status: 'rank_deficient';
  readonly names: readonly string[];
  readonly rank: number;
  /** Names of the columns that are linear combinations of earlier ones. */
  readonly aliased: readonly string[];
  readonly warnings: readonly string[];
}

export type LeastSquaresFit = LeastSquaresFitted | LeastSquaresRankDeficient;

/**
 * Fit y = X b by (weighted) least squares.
 *
 * Throws `LagparityInputError` on malformed input (wrong lengths, non-finite
 * numbers, negative weights); a rank-deficient design is a result
 * (`status: 'rank_deficient'`), not an exception.
 *
 * @example
 * const fit = fitLeastSquares({ design, response: y });
 * if (fit.status === 'fitted') fit.coefficients;
 */
export function fitLeastSquares(data: LeastSquaresData): LeastSquaresFit {
  const { design } = data;
  const rows = design.rows;
  const issues: Issue[] = [
    ...checkLength('response', data.response, rows),
    ...checkFinite('response', data.response),
    ...checkFinite('design', design.values),
  ];
  if (data.weights !== undefined) {
    issues.push(...checkLength('weights', data.weights, rows), ...checkFinite('weights', data.weights, true));
  }
  if (data.clusters !== undefined) issues.push(...checkClusters(data.clusters, rows));
  if (data.groups !== undefined) {
    issues.push(
      ...checkLength('groups.counts', data.groups.counts, rows),
      ...checkFinite('groups.counts', data.groups.counts, true),
      ...checkLength('groups.withinSumOfSquares', data.groups.withinSumOfSquares, rows),
      ...checkFinite('groups.withinSumOfSquares', data.groups.withinSumOfSquares, true),
    );
  }
  if (issues.length > 0) throw new LagparityInputError(issues);

  const keep = Array.from({ length: rows }, (_, i) => (data.weights?.[i] ?? 1) > 0);
  const everyRow = keep.every(Boolean);
  // Usually every row has weight: then the design is used as it is, not copied.
  const kept = everyRow ? design : selectRows(design, keep);
  const n = kept.rows;
  const columns = design.columns;
  const weights = new Float64Array(n);
  const response = new Float64Array(n);
  for (let i = 0, r = 0; i < rows; i += 1) {
    if (!keep[i]) continue;
    weights[r] = data.weights?.[i] ?? 1;
    response[r] = data.response[i] as number;
    r += 1;
  }
  // The rows folded into a k-by-k triangle (numeric/row-reduction.ts), never an n-by-k weighted copy.
  const reduced = reduceWeightedRows(kept, weights, response);
  const qr = reduced.qr;
  const aliased = qr.aliased.map((j) => design.names[j] as string);
  if (qr.rank < columns) {
    return {
      status: 'rank_deficient',
      names: design.names,
      rank: qr.rank,
      aliased,
      warnings: [`design is rank deficient: ${aliased.map((name) => `\`${name}\``).join(', ')} aliased with earlier columns`],
    };
  }
  const coefficients = solveLeastSquares(qr, reduced.effects).coefficients;
  // One step of iterative refinement (Golub & Van Loan 2013, §5.3.8; Björck 1967, BIT 7): the
  // residuals are reduced with the same rows and weights, so the same triangle, and their
  // least-squares solution corrects the coefficients for the rounding of the first solve.
  let residuals = residualsOf(kept, coefficients, response);
  const refinement = reduceWeightedRows(kept, weights, residuals);
  const correction = solveLeastSquares(refinement.qr, refinement.effects).coefficients;
  for (let j = 0; j < columns; j += 1) coefficients[j] = (coefficients[j] as number) + (correction[j] as number);
  residuals = residualsOf(kept, coefficients, response);
  const fitted = new Float64Array(n);
  let residualSumOfSquares = 0;
  for (let i = 0; i < n; i += 1) {
    const residual = residuals[i] as number;
    fitted[i] = (response[i] as number) - residual;
    residualSumOfSquares += (weights[i] as number) * residual * residual;
  }
  // Summarised rows: the observations they stand for, and their spread about each row's mean.
  let observations = n;
  let within = 0;
  if (data.groups !== undefined) {
    observations = 0;
    for (let i = 0; i < rows; i += 1) {
      if (!keep[i]) continue;
      observations += data.groups.counts[i] as number;
      within += data.groups.withinSumOfSquares[i] as number;
    }
    residualSumOfSquares += within;
  }
  const dfResidual = observations - qr.rank;
  const unscaled = inverseCrossProduct(qr);
  const warnings: string[] = [];
  let covariance: Float64Array | null = null;
  let standardErrors: Float64Array | null = null;
  let residualStandardDeviation: number | null = null;
  if (dfResidual > 0) {
    const variance = residualSumOfSquares / dfResidual;
    residualStandardDeviation = Math.sqrt(variance);
    covariance = unscaled.map((value) => value * variance);
    standardErrors = diagonalRoots(covariance, columns);
  } else {
    warnings.push('no residual degrees of freedom: standard errors are not defined');
  }

  const rSquared = coefficientOfDetermination(response, weights, residualSumOfSquares, within, hasConstantColumn(kept));

  let robust: LeastSquaresRobust | null = null;
  if (data.clusters !== undefined) {
    const { indices, count } = compactClusters(data.clusters, keep);
    const scores = new Float64Array(n * columns);
    for (let i = 0; i < n; i += 1) {
      const factor = (weights[i] as number) * (residuals[i] as number);
      for (let j = 0; j < columns; j += 1) scores[i * columns + j] = (kept.values[j * n + i] as number) * factor;
    }
    const robustCovariance = clusterSandwichCovariance({
      bread: unscaled,
      scores,
      clusters: indices,
      clusterCount: count,
      observationCount: observations,
      parameterCount: qr.rank,
    });
    if (robustCovariance === null) {
      warnings.push(`cluster-robust covariance requires at least 2 clusters and more rows than coefficients, got ${count} clusters`);
    } else {
      robust = {
        kind: 'CR1',
        clusters: count,
        covariance: robustCovariance,
        standardErrors: diagonalRoots(robustCovariance, columns),
      };
    }
  }

  return {
    status: 'fitted',
    names: design.names,
    rank: qr.rank,
    aliased,
    coefficients,
    standardErrors,
    covariance,
    residualStandardDeviation,
    residualSumOfSquares,
    rSquared,
    dfResidual,
    observations,
    fitted,
    residuals,
    robust,
    warnings,
  };
}

/** y - X b, row by row. */
function residualsOf(design: DesignMatrix, coefficients: Float64Array, response: Float64Array): Float64Array {
  const fitted = multiply(design, coefficients);
  return response.map((value, i) => value - (fitted[i] as number));
}

function diagonalRoots(matrix: Float64Array, size: number): Float64Array {
  return Float64Array.from({ length: size }, (_, j) => Math.sqrt(Math.max(0, matrix[j * size + j] as number)));
}

/**
 * R^2 = 1 - RSS / TSS, with TSS about the weighted mean when the model has an
 * intercept and about 0 otherwise (R `summary.lm`), plus the spread `within`
 * summarised rows (see `groups`) have about their own means. Two-pass mean
 * for accuracy.
 */
function coefficientOfDetermination(
  response: Float64Array,
  weights: Float64Array,
  residualSumOfSquares: number,
  within: number,
  centred: boolean,
): number | null {
  let mean = 0;
  if (centred) {
    let weightSum = 0;
    for (let i = 0; i < response.length; i += 1) {
      weightSum += weights[i] as number;
      mean += (weights[i] as number) * (response[i] as number);
    }
    mean /= weightSum;
  }
  let total = within;
  for (let i = 0; i < response.length; i += 1) {
    const deviation = (response[i] as number) - mean;
    total += (weights[i] as number) * deviation * deviation;
  }
  if (!(total > 0)) return null;
  return 1 - residualSumOfSquares / total;
}
