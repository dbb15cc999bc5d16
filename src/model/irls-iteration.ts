/**
 * The IRLS loop of a binomial GLM (Fisher scoring) and its stopping rules,
 * with the warm start that saves it a pass on large logit fits.
 *
 * Method: McCullagh, P. and Nelder, J. A. (1989), *Generalized Linear
 * Models*, 2nd ed., §2.5 (IRLS) and §4.4 (binomial); every step is a
 * weighted least-squares solve (`irls-passes.ts`). Conventions follow R's
 * `glm.fit` (R Core Team, R 4.2.2, `stats` package): starting values
 * mu = (w y + 0.5) / (w + 1), rank tolerance 1e-7, step halving when the
 * deviance is not finite. In addition a step that raises the deviance is
 * halved (Marschner, I. C. (2011), glm2: fitting generalized linear models
 * with convergence problems, *The R Journal* 3(2), 12-15), which R's
 * `glm.fit` does only for non-finite deviance.
 *
 * Start: R's starting values; a logit fit of at least 65,536 rows starts
 * instead from the fit to a systematic sample of about 32,768 of them (every
 * k-th row), a few standard errors from the estimate, which saves one pass
 * over the rows; the estimate is the same (the fixed point does not depend on
 * the start).
 *
 * Convergence: iterations stop when the largest coefficient step, measured in
 * standard errors, is at most `tolerance` (default 1e-10); much tighter than
 * R's default deviance criterion (1e-8). A logit fit of 65,536 rows or more
 * also stops a pass earlier when the contraction of its last two steps bounds
 * the next iterate within `tolerance` of the fixed point (see
 * `remainingAfter` and `COVARIANCE_SHIFT`; 4 passes to 3 on the 1M-row bench
 * file when it was added). Fisher scoring converges only
 * linearly for probit and cloglog, so once a step is below 0.01 SE those
 * links take Newton-Raphson steps (observed information, solved by Cholesky
 * on the k-by-k matrix) whenever these are positive definite and do not raise
 * the deviance; the fixed point (score = 0) is the same, only reached faster.
 */
import { choleskySolve } from '../numeric/cholesky.js';
import type { DesignMatrix } from '../numeric/design-matrix.js';
import { inverseCrossProduct, solveLeastSquares } from '../numeric/householder-qr.js';
import { type ReducedLeastSquares, RowTriangle, finishReduction } from '../numeric/row-reduction.js';
import type { BinomialFitOptions } from './binomial-fit-types.js';
import { glmRows, predictorOf, residualOf, type GlmRows } from './glm-rows.js';
import { fusedPass, initialPass, type InitialPass } from './irls-passes.js';
import { linkFor, type Link } from './links.js';
import { separatedAt } from './separation.js';

const MAX_HALVINGS = 60;
/** Switch to Newton steps once a Fisher step is smaller than this many standard errors. */
const NEWTON_SWITCH = 1e-2;

interface IterationResult {
  readonly coefficients: Float64Array;
  readonly iterations: number;
  readonly converged: boolean;
  /** The weighted design lost rank: weights vanished (a sign of separation). */
  readonly weightsCollapsed: boolean;
  /** Original indices aliased in the weighted design when it lost rank. */
  readonly collapsedAliased: { readonly aliased: readonly number[] };
  readonly lastStep: Float64Array;
  /** Change of row i's linear predictor in the last accepted step (0 before any). */
  readonly lastLinearPredictorChange: (row: number) => number;
  /** X b at `coefficients` and the weighted reduction there (the expected information), when an iterate was accepted. */
  readonly atEstimate: { readonly linearPredictor: Float64Array; readonly reduction: ReducedLeastSquares } | null;
  /** Buffers of length n the iteration no longer needs (reused for mu and 1 - mu). */
  readonly spares: readonly Float64Array[];
  readonly warnings: string[];
}

/** Fisher scoring / IRLS (McCullagh & Nelder 1989, §2.5), R's starting values and step control; one fused pass per iteration. */
export function iterate(
  design: DesignMatrix,
  rows: GlmRows,
  link: Link,
  maxIterations: number,
  tolerance: number,
  exponents: Int32Array,
  start: ArrayLike<number> | undefined,
  initial: InitialPass | null,
): IterationResult {
  const n = design.rows;
  const columns = design.columns;
  const warnings: string[] = [];
  const factors = Float64Array.from(exponents, (exponent) => 2 ** exponent);
  // Three linear-predictor buffers for the whole fit: the accepted iterate, the one before it, a candidate.
  let current: Float64Array<ArrayBufferLike> = initial?.linearPredictor ?? new Float64Array(n);
  let previous: Float64Array<ArrayBufferLike> = new Float64Array(n);
  let candidatePredictor: Float64Array<ArrayBufferLike> = new Float64Array(n);
  let newtonPredictor: Float64Array<ArrayBufferLike> | null = null;
  let triangle = new RowTriangle(columns);
  let previousDeviance = initial?.deviance ?? fusedPass(design, rows, link, start ?? null, current, triangle, factors);
  let reduction = initial?.reduction ?? finishReduction(triangle, exponents);
  // A logit start is the first accepted iterate, so that the first step is measured (and halved
  // if it raises the deviance); R's starting values are not coefficients.
  let coefficients: Float64Array | null = start !== undefined && link.name === 'logit' ? Float64Array.from(start) : null;
  let lastStep: Float64Array = new Float64Array(columns);
  let accepted = 0;
  let converged = false;
  let weightsCollapsed = false;
  let collapsedAliased: { readonly aliased: readonly number[] } = { aliased: [] };
  let halvingWarned = false;
  let previousStepInStandardErrors = Infinity;
  let lastHalved = false;
  let iterations = 0;
  while (iterations < maxIterations) {
    iterations += 1;
    const qr = reduction.qr;
    if (qr.rank < columns) {
      weightsCollapsed = true;
      collapsedAliased = { aliased: qr.aliased };
      break;
    }
    let candidate = solveLeastSquares(qr, reduction.effects).coefficients;
    // Standard errors at the accepted iterate, the scale of its step.
    const unscaled = inverseCrossProduct(qr);
    if (coefficients !== null && link.name === 'logit') {
      // Logit Fisher steps are Newton steps: once the step from the accepted iterate is
      // below the tolerance, or (on 65,536 rows or more, where a pass is worth saving) leaves
      // its result within the tolerance of the fixed point by the contraction of the last two
      // steps (see remainingAfter and COVARIANCE_SHIFT), that result is the estimate and the
      // pass there is not run; the information stays that of the iterate it stepped from
      // (as R's summary.glm takes it), one small step from the estimate.
      const step = stepSize(candidate, coefficients, unscaled, lastStep);
      if (step <= tolerance || (n >= WARM_START_ROWS && step <= COVARIANCE_SHIFT * Math.sqrt(rows.totalWeight) && remainingAfter(step, previousStepInStandardErrors, lastHalved) <= tolerance)) {
        coefficients = candidate;
        predictorOf(design, candidate, rows.offset, previous);
        [previous, current] = [current, previous];
        accepted += 1;
        converged = true;
        break;
      }
    }
    triangle = new RowTriangle(columns);
    let deviance = fusedPass(design, rows, link, candidate, candidatePredictor, triangle, factors);
    // Near the optimum, a non-canonical link switches to Newton-Raphson steps
    // (observed information), which converge quadratically where Fisher
    // scoring converges only linearly. Kept only if it does not raise the deviance.
    if (coefficients !== null && link.name !== 'logit' && previousStepInStandardErrors < NEWTON_SWITCH) {
      const newton = newtonCandidate(design, rows, link, current, coefficients);
      if (newton !== null) {
        newtonPredictor ??= new Float64Array(n);
        const newtonTriangle = new RowTriangle(columns);
        const newtonDeviance = fusedPass(design, rows, link, newton, newtonPredictor, newtonTriangle, factors);
        if (Number.isFinite(newtonDeviance) && newtonDeviance <= previousDeviance * (1 + 1e-12) + 1e-12) {
          candidate = newton;
          [candidatePredictor, newtonPredictor] = [newtonPredictor, candidatePredictor];
          triangle = newtonTriangle;
          deviance = newtonDeviance;
        }
      }
    }
    const anchor = coefficients ?? new Float64Array(columns);
    let halvings = 0;
    while (
      (!Number.isFinite(deviance) || (coefficients !== null && deviance > previousDeviance * (1 + 1e-12) + 1e-12)) &&
      halvings < MAX_HALVINGS
    ) {
      candidate = candidate.map((value, j) => (value + (anchor[j] as number)) / 2);
      triangle = new RowTriangle(columns);
      deviance = fusedPass(design, rows, link, candidate, candidatePredictor, triangle, factors);
      halvings += 1;
    }
    lastHalved = halvings > 0;
    if (halvings > 0 && !halvingWarned) {
      warnings.push('step size halved: a Fisher-scoring step raised the deviance or made it non-finite');
      halvingWarned = true;
    }
    if (!Number.isFinite(deviance)) {
      warnings.push('step halving could not find coefficients with a finite deviance');
      break;
    }
    let stepInStandardErrors = Infinity;
    if (coefficients !== null) {
      stepInStandardErrors = stepSize(candidate, coefficients, unscaled, lastStep);
    } else {
      lastStep = Float64Array.from(candidate);
    }
    const firstStep = coefficients === null;
    coefficients = candidate;
    [previous, current, candidatePredictor] = [current, candidatePredictor, previous];
    reduction = finishReduction(triangle, exponents);
    accepted += 1;
    previousDeviance = deviance;
    if (firstStep) continue;
    // Converged: the step is negligible against the standard errors, or it
    // is tiny and stopped shrinking (the rounding floor of an ill-conditioned fit).
    const atRoundingFloor = stepInStandardErrors <= 1e-6 && stepInStandardErrors >= previousStepInStandardErrors;
    previousStepInStandardErrors = stepInStandardErrors;
    if (stepInStandardErrors <= tolerance || atRoundingFloor) {
      converged = true;
      break;
    }
    if (halvings >= MAX_HALVINGS) {
      warnings.push('step halving could not reduce the deviance further');
      break;
    }
  }
  // The change of the last accepted step, written over the older buffer (zeros before any step).
  // After two or more steps the last change is X (b_t - b_{t-1}), so the older buffer is free;
  // after one it is measured from the starting linear predictor, still in that buffer.
  const older = previous;
  const step = lastStep;
  const values = design.values;
  const lastLinearPredictorChange =
    accepted === 0
      ? () => 0
      : accepted === 1
        ? (row: number) => (current[row] as number) - (older[row] as number)
        : (row: number) => {
            let change = 0;
            for (let j = 0; j < columns; j += 1) change += (values[j * n + row] as number) * (step[j] as number);
            return change;
          };
  return {
    coefficients: coefficients ?? new Float64Array(columns),
    iterations,
    converged,
    weightsCollapsed,
    collapsedAliased,
    lastStep,
    lastLinearPredictorChange,
    atEstimate: accepted > 0 ? { linearPredictor: current, reduction } : null,
    spares: accepted === 1 ? [candidatePredictor] : [candidatePredictor, previous],
    warnings,
  };
}

/**
 * One Newton-Raphson step from `coefficients` (linear predictor
 * `linearPredictor`): solve H d = U with the observed information
 * H = X' diag(o) X, o = w [mu' a - (y - mu) a'], a = mu' / V,
 * V = mu (1 - mu), and the score U = X' [w (y - mu) a] (McCullagh & Nelder
 * 1989, §2.5 and §4.4). Null when H is not positive definite.
 */
function newtonCandidate(
  design: DesignMatrix,
  rows: GlmRows,
  link: Link,
  linearPredictor: Float64Array,
  coefficients: Float64Array,
): Float64Array | null {
  const n = design.rows;
  const columns = design.columns;
  const hessian = new Float64Array(columns * columns);
  const score = new Float64Array(columns);
  for (let i = 0; i < n; i += 1) {
    const eta = linearPredictor[i] as number;
    const mu = link.inverse(eta);
    const complement = link.inverseComplement(eta);
    const first = link.derivative(eta);
    const variance = mu * complement;
    const weight = rows.weights[i] as number;
    const workingWeight = (weight * first * first) / variance;
    if (!(variance > 0) || !Number.isFinite(workingWeight) || workingWeight === 0) continue;
    const second = link.secondDerivative(eta);
    const ratio = first / variance;
    const ratioDerivative = (second * variance - first * first * (complement - mu)) / (variance * variance);
    const residual = residualOf(rows.proportions[i] as number, mu, complement);
    const observedWeight = weight * (first * ratio - residual * ratioDerivative);
    const scoreFactor = weight * residual * ratio;
    if (!Number.isFinite(observedWeight) || !Number.isFinite(scoreFactor)) return null;
    for (let a = 0; a < columns; a += 1) {
      const left = design.values[a * n + i] as number;
      score[a] = (score[a] as number) + left * scoreFactor;
      for (let b = 0; b <= a; b += 1) {
        hessian[a * columns + b] = (hessian[a * columns + b] as number) + left * observedWeight * (design.values[b * n + i] as number);
      }
    }
  }
  const step = choleskySolve(hessian, score);
  if (step === null || !step.every(Number.isFinite)) return null;
  return coefficients.map((value, j) => value + (step[j] as number));
}

/**
 * The largest shift, relative to the standard errors, of the information the
 * covariance is taken from when a logit fit stops on {@link remainingAfter}:
 * the information at a point d standard errors from the estimate differs from
 * the one there by about d / sqrt(sum of weights) relatively (the
 * log-likelihood's third derivative is of the order of its second, in units
 * where a standard error is 1 / sqrt(sum of weights)), so a last step of d
 * standard errors is taken without a pass at its result only while d is at
 * most this times sqrt(sum of weights), i.e. the standard errors keep about
 * nine digits (R 4.2.2 `glm` standard errors are matched to 1e-8 in the
 * tests).
 */
const COVARIANCE_SHIFT = 1e-9;

/**
 * A bound on how far the iterate after a step of `step` standard errors still
 * is from the fixed point, from the step before it (`previous`): while steps
 * contract by rho = step / previous <= 1/2, the remaining distance is at most
 * step * rho / (1 - rho) (the a-posteriori bound of a contraction, e.g.
 * Ortega & Rheinboldt 1970, §12.1); Newton steps contract faster than any
 * such rho, so the bound is conservative. Infinity when it does not apply
 * (no previous step, a halved step, or steps not contracting by half).
 */
function remainingAfter(step: number, previous: number, halved: boolean): number {
  if (halved || !(previous > 0) || !Number.isFinite(previous)) return Infinity;
  const rho = step / previous;
  return rho <= 0.5 ? (step * rho) / (1 - rho) : Infinity;
}

/** The largest |candidate - coefficients| in standard errors (sqrt of the diagonal of `unscaled`); the step is written to `step`. */
function stepSize(candidate: Float64Array, coefficients: Float64Array, unscaled: Float64Array, step: Float64Array): number {
  const columns = candidate.length;
  let largest = 0;
  for (let j = 0; j < columns; j += 1) {
    const change = (candidate[j] as number) - (coefficients[j] as number);
    step[j] = change;
    largest = Math.max(largest, Math.abs(change) / Math.sqrt(unscaled[j * columns + j] as number));
  }
  return largest;
}

/** Logit fits of at least this many rows start from a fit to a sample of them. */
export const WARM_START_ROWS = 1 << 16;
/** About this many rows in that sample. */
const WARM_START_SAMPLE = 1 << 15;
/**
 * The sample fit stops once its step is at most a quarter of its own
 * standard errors. Its estimate is a start, some standard errors of the full
 * fit from the full estimate by sampling alone (about 5 on the 1M bench file),
 * and a Newton step that small leaves the next iterate far closer still (6e-5
 * standard errors there): iterating the sample to the full fit's tolerance
 * took two more passes over it and changed nothing the full fit does.
 */
const WARM_START_TOLERANCE = 0.25;

/**
 * Coefficients fitted to every k-th row (about {@link WARM_START_SAMPLE}
 * rows, to {@link WARM_START_TOLERANCE}), or null when that fit would not be
 * `converged`. They are within a
 * few standard errors of the full estimate, so Newton steps from there need
 * one pass fewer than from R's starting values; the estimate is the same.
 * `exponents`: the full design's column scales (see `columnExponents`).
 * Only the iteration of a fit runs on the sample, with the checks that decide
 * a fit's status (rank, separation, a finite covariance), not its summaries:
 * the rows carry weight already (they are the full fit's kept rows).
 */
export function sampleEstimate(
  design: DesignMatrix,
  successes: Float64Array,
  trials: Float64Array,
  priorWeights: Float64Array,
  offset: ArrayLike<number> | null,
  options: BinomialFitOptions,
  exponents: Int32Array,
): Float64Array | null {
  const every = Math.max(2, Math.floor(design.rows / WARM_START_SAMPLE));
  const count = Math.ceil(design.rows / every);
  const pick = (values: ArrayLike<number>, first = 0) => {
    const sample = new Float64Array(count);
    for (let r = 0; r < count; r += 1) sample[r] = values[first + r * every] as number;
    return sample;
  };
  const values = new Float64Array(count * design.columns);
  for (let j = 0; j < design.columns; j += 1) values.set(pick(design.values, j * design.rows), j * count);
  const sample: DesignMatrix = { rows: count, columns: design.columns, names: design.names, values };
  const rows = glmRows(pick(successes), pick(trials), pick(priorWeights), offset === null ? null : pick(offset));
  const link = linkFor('logit');
  // The full design's column scales serve the sample too (they only condition the passes).
  const initial = initialPass(sample, rows, link, exponents, null);
  if (initial.reduction.qr.rank < design.columns) return null;
  const iteration = iterate(sample, rows, link, options.maxIterations ?? 50, WARM_START_TOLERANCE, exponents, undefined, initial);
  const reached = iteration.atEstimate;
  if (!iteration.converged || iteration.weightsCollapsed || reached === null || reached.reduction.qr.rank < design.columns) return null;
  if (!iteration.coefficients.every(Number.isFinite) || !inverseCrossProduct(reached.reduction.qr).every(Number.isFinite)) return null;
  return separatedAt(reached.linearPredictor, iteration.lastLinearPredictorChange) ? null : iteration.coefficients;
}
