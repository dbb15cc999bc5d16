/**
 * One IRLS pass over the rows of a binomial GLM (Fisher scoring, McCullagh,
 * P. and Nelder, J. A. (1989), *Generalized Linear Models*, 2nd ed., §2.5):
 * at given coefficients (or at R's starting values mu = (w y + 0.5) /
 * (w + 1), as R 4.2.2's `glm.fit`), the linear predictor, mu, the working
 * weight and response of every row, folded at once into a triangular
 * factor by the square-root-free Givens row update of
 * `numeric/row-reduction.ts` (Gentleman 1973; Miller 1992, AS 274): a
 * weighted least-squares solve with the conditioning of a QR (Golub & Van
 * Loan 2013, §5.3.3), never the normal equations; the deviance there.
 *
 * Cost: one fused pass over the rows per iteration (linear predictor, link,
 * working weights and response, row reduction together; no per-iteration
 * arrays of length n), O(n k^2) time, O(k^2) memory beyond the linear
 * predictor's buffer. The logit link has a pass of its own, written out
 * (one exp and one log1p per row) and run in blocks of PASS_BLOCK_ROWS rows
 * (the measurement is at that constant), by a block written out for the
 * design's column count up to 8 (`logit-blocks.ts`, generated: the same
 * operations with the triangle in local variables, about 1.5 times faster)
 * or else by the general block here; other links go through their link
 * object.
 */
import { type ReducedLeastSquares, RowTriangle, finishReduction } from '../numeric/row-reduction.js';
import type { DesignMatrix } from '../numeric/design-matrix.js';
import { residualOf, type GlmRows } from './glm-rows.js';
import { LOGIT_BLOCKS, type LogitBlock, type LogitBlockInput } from './logit-blocks.js';
import type { Link } from './links.js';

/**
 * One fused IRLS pass over the rows at `coefficients` (null: at R's starting
 * values mu = (w y + 0.5) / (w + 1)): for each row the linear predictor
 * (written to `linearPredictor`, a buffer reused across passes), mu, 1 - mu,
 * dmu/deta, the working weight w n (dmu/deta)^2 / V and the working response
 * z = eta + (y - mu) / (dmu/deta), folded at once into `triangle` by the
 * Givens row update; returns the grouped deviance at those coefficients. No
 * per-row temporaries: the cost is one sweep of the design per pass. The
 * link is chosen once per pass, outside the row loop.
 */
export function fusedPass(
  design: DesignMatrix,
  rows: GlmRows,
  link: Link,
  coefficients: ArrayLike<number> | null,
  linearPredictor: Float64Array,
  triangle: RowTriangle,
  factors: Float64Array,
): number {
  return link.name === 'logit'
    ? logitPass(design, rows, coefficients, linearPredictor, triangle, factors)
    : genericPass(design, rows, link, coefficients, linearPredictor, triangle, factors);
}

/**
 * The pass for the logit link, written out: with e = exp(-|eta|),
 * mu = 1 / (1 + e) or e / (1 + e) (whichever does not overflow),
 * dmu/deta = V = mu (1 - mu), so the working weight is n V and
 * z = eta + (y - mu) / V; log mu and log(1 - mu) come from one log1p(e),
 * and the deviance is 2 (sum w [y log y + (1-y) log(1-y)] - sum w [y log mu +
 * (1-y) log(1-mu)]) with the first sum computed once per fit
 * (`rows.saturated`). The Givens update is that of `RowTriangle.include`
 * with one division per column.
 */
export function logitPass(
  design: DesignMatrix,
  rows: GlmRows,
  coefficients: ArrayLike<number> | null,
  linearPredictor: Float64Array,
  triangle: RowTriangle,
  factors: Float64Array,
  written: LogitBlock | null = LOGIT_BLOCKS[design.columns] ?? null,
): number {
  const beta = coefficients === null ? null : Float64Array.from(coefficients);
  let logLikelihood = 0;
  // The block written out for this many columns (logit-blocks.ts: the same operations, the same bits), else the
  // general one (`written` null; tests compare the two).
  if (written !== null) {
    const input: LogitBlockInput = {
      values: design.values,
      n: design.rows,
      proportions: rows.proportions,
      glmWeights: rows.weights,
      offset: rows.offset,
      beta,
      linearPredictor,
      diagonal: triangle.diagonal,
      upper: triangle.upper,
      theta: triangle.theta,
      factors,
      sums: new Float64Array(2),
    };
    for (let start = 0; start < design.rows; start += PASS_BLOCK_ROWS) {
      written(input, start, Math.min(design.rows, start + PASS_BLOCK_ROWS));
      logLikelihood += input.sums[0] as number;
      triangle.residualSumOfSquares += input.sums[1] as number;
    }
    return Math.max(0, 2 * (rows.saturated - logLikelihood));
  }
  for (let start = 0; start < design.rows; start += PASS_BLOCK_ROWS) {
    logLikelihood += logitBlock(design, rows, beta, linearPredictor, triangle, factors, start, Math.min(design.rows, start + PASS_BLOCK_ROWS));
  }
  return Math.max(0, 2 * (rows.saturated - logLikelihood));
}

/**
 * Rows of {@link logitPass} per call of {@link logitBlock}. A loop that runs
 * once per pass is optimised by V8 on the stack, in code entered mid-loop,
 * which ran the pass about a third slower than code compiled for the whole
 * function; a function called for each block of rows gets the latter within
 * the sample fit's passes.
 */
export const PASS_BLOCK_ROWS = 4096;

/** Rows `start` to `end` of {@link logitPass} (`beta` null: R's start); folds them into `triangle` and returns their log-likelihood. */
function logitBlock(
  design: DesignMatrix,
  rows: GlmRows,
  beta: Float64Array | null,
  linearPredictor: Float64Array,
  triangle: RowTriangle,
  factors: Float64Array,
  start: number,
  end: number,
): number {
  const n = design.rows;
  const columns = design.columns;
  const values = design.values;
  const proportions = rows.proportions;
  const glmWeights = rows.weights;
  const offset = rows.offset;
  const row = triangle.scratch;
  const diagonal = triangle.diagonal;
  const upper = triangle.upper;
  const theta = triangle.theta;
  let logLikelihood = 0;
  let residualSumOfSquares = 0;
  for (let i = start; i < end; i += 1) {
    const weight = glmWeights[i] as number;
    const proportion = proportions[i] as number;
    // The offset is in eta and out of the working response (R's glm.fit: z = eta - offset + (y - mu) / mu.eta).
    const shift = offset === null ? 0 : (offset[i] as number);
    let eta = shift;
    if (beta === null) {
      // R's start mu = (w y + 0.5) / (w + 1): eta = log(mu / (1 - mu)), the offset ignored.
      eta = Math.log((weight * proportion + 0.5) / (weight * (1 - proportion) + 0.5));
    } else {
      for (let j = 0; j < columns; j += 1) {
        const coefficient = beta[j] as number;
        if (coefficient !== 0) eta += (values[j * n + i] as number) * coefficient;
      }
    }
    linearPredictor[i] = eta;
    const exponential = Math.exp(-Math.abs(eta));
    const inverse = 1 / (1 + exponential);
    const small = exponential * inverse;
    const softplus = Math.log1p(exponential);
    let mu: number;
    let complement: number;
    let logMu: number;
    let logComplement: number;
    if (eta >= 0) {
      mu = inverse;
      complement = small;
      logMu = -softplus;
      logComplement = -eta - softplus;
    } else {
      mu = small;
      complement = inverse;
      logMu = eta - softplus;
      logComplement = -softplus;
    }
    if (proportion > 0) logLikelihood += weight * proportion * logMu;
    if (proportion < 1) logLikelihood += weight * (1 - proportion) * logComplement;
    const variance = mu * complement;
    let w = weight * variance;
    if (!(w > 0) || !Number.isFinite(w)) continue;
    let y = eta - shift + residualOf(proportion, mu, complement) / variance;
    for (let j = 0; j < columns; j += 1) row[j] = (values[j * n + i] as number) * (factors[j] as number);
    for (let j = 0; j < columns; j += 1) {
      const xj = row[j] as number;
      if (xj === 0) continue;
      const dj = diagonal[j] as number;
      const updated = dj + w * xj * xj;
      const reciprocal = 1 / updated;
      const c = dj * reciprocal;
      const sine = w * xj * reciprocal;
      w *= c;
      diagonal[j] = updated;
      const base = j * columns;
      for (let m = j + 1; m < columns; m += 1) {
        const xm = row[m] as number;
        const r = upper[base + m] as number;
        row[m] = xm - xj * r;
        upper[base + m] = c * r + sine * xm;
      }
      const t = theta[j] as number;
      const previous = y;
      y = previous - xj * t;
      theta[j] = c * t + sine * previous;
      if (w === 0) break;
    }
    residualSumOfSquares += w * y * y;
  }
  triangle.residualSumOfSquares += residualSumOfSquares;
  return logLikelihood;
}

/** The pass for any link, through its link object (and for R's starting values). */
function genericPass(
  design: DesignMatrix,
  rows: GlmRows,
  link: Link,
  coefficients: ArrayLike<number> | null,
  linearPredictor: Float64Array,
  triangle: RowTriangle,
  factors: Float64Array,
): number {
  const n = design.rows;
  const columns = design.columns;
  const values = design.values;
  const proportions = rows.proportions;
  const glmWeights = rows.weights;
  const offset = rows.offset;
  const row = triangle.scratch;
  let deviance = 0;
  for (let i = 0; i < n; i += 1) {
    const weight = glmWeights[i] as number;
    const proportion = proportions[i] as number;
    const shift = offset === null ? 0 : (offset[i] as number);
    let eta = shift;
    if (coefficients === null) eta = link.link((weight * proportion + 0.5) / (weight + 1));
    else {
      for (let j = 0; j < columns; j += 1) {
        const coefficient = coefficients[j] as number;
        if (coefficient !== 0) eta += (values[j * n + i] as number) * coefficient;
      }
    }
    linearPredictor[i] = eta;
    const mu = link.inverse(eta);
    const complement = link.inverseComplement(eta);
    const derivative = link.derivative(eta);
    let term = 0;
    if (proportion > 0) term += proportion * Math.log(proportion / mu);
    if (proportion < 1) term += (1 - proportion) * Math.log((1 - proportion) / complement);
    deviance += 2 * weight * term;
    const variance = mu * complement;
    const workingWeight = (weight * derivative * derivative) / variance;
    // Like R's glm.fit `good` rows: a row whose dmu/deta or variance underflows carries no information.
    if (!(variance > 0) || !Number.isFinite(workingWeight) || !(workingWeight > 0)) continue;
    const workingResponse = eta - shift + residualOf(proportion, mu, complement) / derivative;
    for (let j = 0; j < columns; j += 1) row[j] = (values[j * n + i] as number) * (factors[j] as number);
    triangle.include(workingWeight, workingResponse);
  }
  return deviance;
}

export interface InitialPass {
  readonly linearPredictor: Float64Array;
  readonly deviance: number;
  readonly reduction: ReducedLeastSquares;
  /** The coefficients of the pass, or undefined at R's starting values. */
  readonly start: Float64Array | undefined;
}

/** The first pass: at `start`, or (null) at R's starting values mu = (w y + 0.5) / (w + 1). */
export function initialPass(design: DesignMatrix, rows: GlmRows, link: Link, exponents: Int32Array, start: Float64Array | null): InitialPass {
  const linearPredictor = new Float64Array(design.rows);
  const triangle = new RowTriangle(design.columns);
  const factors = Float64Array.from(exponents, (exponent) => 2 ** exponent);
  const deviance = fusedPass(design, rows, link, start, linearPredictor, triangle, factors);
  return { linearPredictor, deviance, reduction: finishReduction(triangle, exponents), start: start ?? undefined };
}
