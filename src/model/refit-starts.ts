/**
 * Starting values for the folds of a fit report, from the full fit: a start
 * changes how many IRLS passes a refit takes, never its estimate (the fixed
 * point of the iteration does not depend on where it starts, and every
 * refit still iterates to its own tolerance from there).
 *
 * A cross-validation fold (its training rows are all rows but the fold's)
 * starts one Newton step from the full estimate on the training rows,
 * b_f = bhat + (I - I_f)^{-1} (U - U_f), with the expected information I and
 * score U of all rows at bhat and I_f, U_f those of the fold's rows
 * (McCullagh, P. and Nelder, J. A. (1989), *Generalized Linear Models*, 2nd
 * ed., §2.5), all folds' sums from one sweep of the rows. The full estimate
 * is about a standard error from a fold's, and the step leaves the fold's
 * fit about the square of that away, so the fold's fit ends a pass sooner
 * (on the 1M-row bench file, 2 passes instead of 3).
 *
 * (The reduced models of the likelihood-ratio tests once started from the
 * full fit's constrained one-step estimate; they now run on rows merged over
 * the players and the dropped covariate, few enough that R's starting values
 * cost little, and so they need nothing of the full fit and run while it
 * does.)
 *
 * The k-by-k systems are solved by Cholesky after scaling to a unit diagonal
 * (`numeric/cholesky.ts`): a start needs no more accuracy than that, and a
 * system that is not positive definite gives no start (null), so the fold
 * starts from the full estimate.
 */
import { choleskySolve } from '../numeric/cholesky.js';
import type { DesignByRow } from './design.js';
import type { Link } from './links.js';

/** The rows of a fit, as the fold starts need them. */
export interface FoldStartRows {
  readonly design: DesignByRow;
  readonly successes: ArrayLike<number>;
  readonly trials: ArrayLike<number>;
  readonly priorWeights: ArrayLike<number>;
}

/**
 * One Newton step from `coefficients` (the full estimate) on the training
 * rows of each fold (all rows whose `fold` differs), one start per fold;
 * null for a fold whose training information is not positive definite.
 */
export function foldStarts(rows: FoldStartRows, link: Link, coefficients: ArrayLike<number>, fold: Int32Array, folds: number): (Float64Array | null)[] {
  const { design } = rows;
  const n = design.rows;
  const k = design.columns;
  // Per fold: the lower triangle of I_f (k-by-k row-major) and U_f.
  const information = new Float64Array(folds * k * k);
  const score = new Float64Array(folds * k);
  const row = new Float64Array(k);
  const logit = link.name === 'logit';
  for (let i = 0; i < n; i += 1) {
    const weight = (rows.trials[i] as number) * (rows.priorWeights[i] as number);
    if (!(weight > 0)) continue;
    design.rowAt(i, row);
    let eta = 0;
    for (let j = 0; j < k; j += 1) eta += (row[j] as number) * (coefficients[j] as number);
    let mu: number;
    let workingWeight: number;
    let scoreWeight: number;
    if (logit) {
      // dmu/deta = mu (1 - mu) = the variance: the working weight is w mu (1 - mu), the score weight w (y - mu) (one exp).
      const exponential = Math.exp(-Math.abs(eta));
      const inverse = 1 / (1 + exponential);
      mu = eta >= 0 ? inverse : exponential * inverse;
      const variance = exponential * inverse * inverse;
      if (!(variance > 0)) continue;
      workingWeight = weight * variance;
      scoreWeight = weight * ((rows.successes[i] as number) / (rows.trials[i] as number) - mu);
    } else {
      mu = link.inverse(eta);
      const variance = mu * link.inverseComplement(eta);
      const derivative = link.derivative(eta);
      if (!(variance > 0) || !Number.isFinite(derivative)) continue;
      workingWeight = (weight * derivative * derivative) / variance;
      scoreWeight = (weight * ((rows.successes[i] as number) / (rows.trials[i] as number) - mu) * derivative) / variance;
    }
    if (!Number.isFinite(workingWeight) || !Number.isFinite(scoreWeight)) continue;
    const f = fold[i] as number;
    const matrix = f * k * k;
    for (let a = 0; a < k; a += 1) {
      const weighted = workingWeight * (row[a] as number);
      score[f * k + a] = (score[f * k + a] as number) + scoreWeight * (row[a] as number);
      for (let b = 0; b <= a; b += 1) information[matrix + a * k + b] = (information[matrix + a * k + b] as number) + weighted * (row[b] as number);
    }
  }
  const totalInformation = new Float64Array(k * k);
  const totalScore = new Float64Array(k);
  for (let f = 0; f < folds; f += 1) {
    for (let e = 0; e < k * k; e += 1) totalInformation[e] = (totalInformation[e] as number) + (information[f * k * k + e] as number);
    for (let a = 0; a < k; a += 1) totalScore[a] = (totalScore[a] as number) + (score[f * k + a] as number);
  }
  return Array.from({ length: folds }, (_, f) => {
    const training = Float64Array.from(totalInformation, (value, e) => value - (information[f * k * k + e] as number));
    const gradient = Float64Array.from(totalScore, (value, a) => value - (score[f * k + a] as number));
    const step = scaledCholeskySolve(training, gradient);
    if (step === null) return null;
    const start = Float64Array.from({ length: k }, (_, j) => (coefficients[j] as number) + (step[j] as number));
    return start.every(Number.isFinite) ? start : null;
  });
}

/** Solve A x = b (A symmetric, lower triangle read) by Cholesky on D^{-1/2} A D^{-1/2}, D = diag(A); null when A is not positive definite. */
function scaledCholeskySolve(matrix: Float64Array, rightHandSide: Float64Array): Float64Array | null {
  const size = rightHandSide.length;
  const roots = new Float64Array(size);
  for (let j = 0; j < size; j += 1) {
    const diagonal = matrix[j * size + j] as number;
    if (!(diagonal > 0) || !Number.isFinite(diagonal)) return null;
    roots[j] = Math.sqrt(diagonal);
  }
  const scaled = Float64Array.from(matrix, (value, e) => value / ((roots[Math.floor(e / size)] as number) * (roots[e % size] as number)));
  const solution = choleskySolve(
    scaled,
    Float64Array.from(rightHandSide, (value, j) => value / (roots[j] as number)),
  );
  return solution === null ? null : solution.map((value, j) => value / (roots[j] as number));
}
