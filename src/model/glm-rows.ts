/**
 * The per-row quantities of a binomial GLM that every IRLS pass reads: the
 * proportions y = successes / trials, the GLM weights (prior weight x
 * trials), the saturated log-likelihood kernel sum w [y log y + (1 - y)
 * log(1 - y)] for the deviance, and the offset (R's `glm(..., offset = )`:
 * in the linear predictor eta = offset + X b, out of the working response);
 * the residual y - mu without cancellation; X b + offset.
 *
 * Method: McCullagh, P. and Nelder, J. A. (1989), *Generalized Linear
 * Models*, 2nd ed., §4.4 (binomial deviance against the saturated model);
 * conventions of R's `glm.fit` (R 4.2.2, `stats`).
 */
import { multiply, type DesignMatrix } from '../numeric/design-matrix.js';

export interface GlmRows {
  /** y = successes / trials. */
  readonly proportions: Float64Array;
  /** GLM weight = prior weight * trials. */
  readonly weights: Float64Array;
  /** sum w [y log y + (1 - y) log(1 - y)] (0 log 0 = 0): the saturated log-likelihood kernel, for the deviance. */
  readonly saturated: number;
  /** sum w: the attempts, weighted. */
  readonly totalWeight: number;
  /** The offset per row, or null for none. */
  readonly offset: ArrayLike<number> | null;
}

/**
 * Mark the rows that carry weight (trials x prior weight > 0) in `keep`;
 * returns their number. (The one-pass loops of a fit live in small functions
 * of their own, so that each is optimised on its own while it runs.)
 */
export function markCarrying(trials: ArrayLike<number>, priorWeights: ArrayLike<number> | undefined, keep: Uint8Array): number {
  let count = 0;
  for (let i = 0; i < keep.length; i += 1) {
    const carries = (trials[i] as number) * (priorWeights?.[i] ?? 1) > 0;
    keep[i] = carries ? 1 : 0;
    if (carries) count += 1;
  }
  return count;
}

/** Proportions, GLM weights (prior weight x trials), the saturated log-likelihood kernel, the weight total and the offset. */
export function glmRows(successes: Float64Array, trials: Float64Array, priorWeights: Float64Array, offset: ArrayLike<number> | null): GlmRows {
  const n = successes.length;
  const proportions = new Float64Array(n);
  // With prior weights of 1 the GLM weights are the trials themselves: no copy.
  let unitPriors = true;
  for (let i = 0; i < n && unitPriors; i += 1) unitPriors = priorWeights[i] === 1;
  const weights = unitPriors ? trials : new Float64Array(n);
  // sum w [y log y + (1 - y) log(1 - y)], no log at y = 0 or 1 where the terms vanish. Collapsed
  // attempts are mostly a few trials each, so the bracket of s successes of k <= 64 trials is
  // computed once per (s, k) and kept in a table (the same value, so the same sum).
  const table = new Float64Array((SATURATED_TABLE_TRIALS + 1) * (SATURATED_TABLE_TRIALS + 1)).fill(Number.NaN);
  let saturated = 0;
  let totalWeight = 0;
  for (let i = 0; i < n; i += 1) {
    const successCount = successes[i] as number;
    const trialCount = trials[i] as number;
    const proportion = successCount / trialCount;
    const weight = trialCount * (priorWeights[i] as number);
    totalWeight += weight;
    proportions[i] = proportion;
    if (!unitPriors) weights[i] = weight;
    if (proportion > 0 && proportion < 1) {
      let term: number;
      if (trialCount <= SATURATED_TABLE_TRIALS && (trialCount | 0) === trialCount && (successCount | 0) === successCount) {
        const at = trialCount * (SATURATED_TABLE_TRIALS + 1) + successCount;
        term = table[at] as number;
        if (Number.isNaN(term)) {
          term = saturatedBracket(proportion);
          table[at] = term;
        }
      } else term = saturatedBracket(proportion);
      saturated += weight * term;
    }
  }
  return { proportions, weights, saturated, totalWeight, offset };
}

/** Trials up to this many (whole, with whole successes) take their saturated bracket from {@link glmRows}'s table. */
const SATURATED_TABLE_TRIALS = 64;

/** y log y + (1 - y) log(1 - y), for 0 < y < 1. */
function saturatedBracket(proportion: number): number {
  return proportion * Math.log(proportion) + (1 - proportion) * Math.log1p(-proportion);
}

/**
 * y - mu without cancellation: for y >= 1/2 it is (1 - mu) - (1 - y), with
 * 1 - mu from the link's accurate complement, so a fitted probability that
 * rounds to 1 still leaves its true residual.
 */
export function residualOf(proportion: number, mu: number, complement: number): number {
  return proportion >= 0.5 ? complement - (1 - proportion) : proportion - mu;
}

/** X b (+ the offset, when there is one), into `target` when given. */
export function predictorOf(design: DesignMatrix, coefficients: ArrayLike<number>, offset: ArrayLike<number> | null, target?: Float64Array): Float64Array {
  const predictor = multiply(design, coefficients, target);
  if (offset !== null) for (let i = 0; i < design.rows; i += 1) predictor[i] = (predictor[i] as number) + (offset[i] as number);
  return predictor;
}
