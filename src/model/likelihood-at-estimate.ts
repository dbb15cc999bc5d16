/**
 * What a binomial fit reports from a pass over the rows at its estimate: mu
 * and 1 - mu, the Bernoulli-level log-likelihood, the rows on the boundary
 * and whether they still move (`separation.ts`), the sums behind Pearson's
 * chi-square, the Brier score and Tjur's R^2; the grouped deviance, the log
 * binomial coefficients of the grouped log-likelihood, and the IRLS weights
 * there (for the expected information when the iteration did not leave it).
 *
 * Method: McCullagh, P. and Nelder, J. A. (1989), *Generalized Linear
 * Models*, 2nd ed., §4.4 (binomial deviance and log-likelihood), with R's
 * conventions (R 4.2.2: the deviance of `binomial()$dev.resids`, the AIC of
 * `binomial()$aic` on rounded counts); Tjur, T. (2009), Coefficients of
 * determination in logistic regression models, *The American Statistician*
 * 63(4), 366-372; Brier, G. W. (1950), Verification of forecasts expressed
 * in terms of probability, *Monthly Weather Review* 78(1), 1-3; sums in row
 * order, blocks of PASS_BLOCK_ROWS rows (as `irls-passes.ts`, for the same
 * reason), the binomial coefficients with Neumaier's compensated summation.
 */
import { residualOf, type GlmRows } from './glm-rows.js';
import { PASS_BLOCK_ROWS } from './irls-passes.js';
import type { Link } from './links.js';
import { BOUNDARY, stillDiverging } from './separation.js';

export interface LinkState {
  readonly mu: Float64Array;
  readonly complement: Float64Array;
  /** sum w [y log mu + (1 - y) log(1 - mu)] over `rows`. */
  readonly logLikelihood: number;
}

/**
 * Everything the fit reports that needs a pass over the rows at the estimate,
 * in one pass: mu and 1 - mu at `linearPredictor` and the Bernoulli-level
 * log-likelihood of `rows` there (for the logit link one exp and one log1p
 * per row, as in {@link logitPass}; otherwise through the link object); the
 * rows whose fitted probability is within BOUNDARY of 0 or 1, and whether any
 * of them still moved by more than DIVERGING_STEP in the last step
 * (`lastChange`); and the sums the fit statistics need, each in row order
 * (a sum per block of rows, then the blocks' sums).
 */
export function atEstimate(
  link: Link,
  linearPredictor: Float64Array,
  rows: GlmRows,
  successes: Float64Array,
  trials: Float64Array,
  priorWeights: Float64Array,
  lastChange: (row: number) => number,
  spares: readonly Float64Array[],
) {
  const n = linearPredictor.length;
  const buffer = (k: number) => {
    const spare = spares[k];
    return spare !== undefined && spare.length === n ? spare : new Float64Array(n);
  };
  const complement = buffer(0);
  const mu = buffer(1);
  const logit = link.name === 'logit';
  let logLikelihood = 0;
  if (!logit) {
    for (let i = 0; i < n; i += 1) {
      const value = linearPredictor[i] as number;
      mu[i] = link.inverse(value);
      complement[i] = link.inverseComplement(value);
    }
    logLikelihood = bernoulliLogLikelihoodOf(rows, mu, complement);
  }
  const totals = new Float64Array(ESTIMATE_TOTALS);
  const inputs = { linearPredictor, rows, successes, trials, priorWeights, lastChange };
  for (let first = 0; first < n; first += PASS_BLOCK_ROWS) {
    logLikelihood += estimateBlock(logit, inputs, mu, complement, first, Math.min(n, first + PASS_BLOCK_ROWS), totals);
  }
  const state: LinkState = { mu, complement, logLikelihood };
  const sums = {
    totalSuccessWeight: totals[1] as number,
    totalTrials: totals[2] as number,
    pearsonChiSquare: totals[3] as number,
    brierSum: totals[4] as number,
    fittedAmongSuccesses: totals[5] as number,
    successWeight: totals[6] as number,
    fittedAmongFailures: totals[7] as number,
    failureWeight: totals[8] as number,
    priorTrials: totals[9] as number,
  };
  return { state, boundaryRows: totals[0] as number, stillMoving: totals[10] !== 0, sums };
}

/** Entries of {@link estimateBlock}'s running totals: boundary rows, the nine sums of `atEstimate` in its order, and 1 once a boundary row still moves. */
const ESTIMATE_TOTALS = 11;

/**
 * Rows `start` to `end` of {@link atEstimate} (in blocks, as {@link logitPass}
 * and for the same reason): for the logit link mu and 1 - mu into their
 * buffers and the block's log-likelihood returned, otherwise mu and 1 - mu
 * read from them (and 0 returned); the totals added to `totals`.
 */
function estimateBlock(
  logit: boolean,
  inputs: {
    readonly linearPredictor: Float64Array;
    readonly rows: GlmRows;
    readonly successes: Float64Array;
    readonly trials: Float64Array;
    readonly priorWeights: Float64Array;
    readonly lastChange: (row: number) => number;
  },
  mu: Float64Array,
  complement: Float64Array,
  start: number,
  end: number,
  totals: Float64Array,
): number {
  const { linearPredictor, rows, successes, trials, priorWeights, lastChange } = inputs;
  const { proportions, weights } = rows;
  let logLikelihood = 0;
  let boundaryRows = 0;
  let stillMoving = false;
  let totalSuccessWeight = 0;
  let totalTrials = 0;
  let pearsonChiSquare = 0;
  let brierSum = 0;
  let fittedAmongSuccesses = 0;
  let successWeight = 0;
  let fittedAmongFailures = 0;
  let failureWeight = 0;
  let priorTrials = 0;
  for (let i = start; i < end; i += 1) {
    const proportion = proportions[i] as number;
    const weight = weights[i] as number;
    if (logit) {
      const eta = linearPredictor[i] as number;
      const exponential = Math.exp(-Math.abs(eta));
      const inverse = 1 / (1 + exponential);
      const small = exponential * inverse;
      const softplus = Math.log1p(exponential);
      const positive = eta >= 0;
      mu[i] = positive ? inverse : small;
      complement[i] = positive ? small : inverse;
      if (proportion > 0) logLikelihood += weight * proportion * (positive ? -softplus : eta - softplus);
      if (proportion < 1) logLikelihood += weight * (1 - proportion) * (positive ? -eta - softplus : -softplus);
    }
    const fitted = mu[i] as number;
    const other = complement[i] as number;
    if (fitted < BOUNDARY || other < BOUNDARY) {
      boundaryRows += 1;
      if (stillDiverging(linearPredictor[i] as number, lastChange(i))) stillMoving = true;
    }
    const prior = priorWeights[i] as number;
    const successCount = successes[i] as number;
    const trialCount = trials[i] as number;
    const failureCount = trialCount - successCount;
    totalSuccessWeight += weight * proportion;
    totalTrials += trialCount;
    const variance = fitted * other;
    const residual = residualOf(proportion, fitted, other);
    if (variance > 0) pearsonChiSquare += (weight * residual * residual) / variance;
    brierSum += prior * (successCount * other * other + failureCount * fitted * fitted);
    fittedAmongSuccesses += prior * successCount * fitted;
    successWeight += prior * successCount;
    fittedAmongFailures += prior * failureCount * fitted;
    failureWeight += prior * failureCount;
    priorTrials += prior * trialCount;
  }
  totals[0] = (totals[0] as number) + boundaryRows;
  totals[1] = (totals[1] as number) + totalSuccessWeight;
  totals[2] = (totals[2] as number) + totalTrials;
  totals[3] = (totals[3] as number) + pearsonChiSquare;
  totals[4] = (totals[4] as number) + brierSum;
  totals[5] = (totals[5] as number) + fittedAmongSuccesses;
  totals[6] = (totals[6] as number) + successWeight;
  totals[7] = (totals[7] as number) + fittedAmongFailures;
  totals[8] = (totals[8] as number) + failureWeight;
  totals[9] = (totals[9] as number) + priorTrials;
  if (stillMoving) totals[10] = 1;
  return logLikelihood;
}

/** sqrt of the IRLS weight w n (dmu/deta)^2 / (mu (1 - mu)); 0 where it underflows. */
export function rootWeightsOf(link: Link, linearPredictor: Float64Array, rows: GlmRows): Float64Array {
  const rootWeights = new Float64Array(linearPredictor.length);
  for (let i = 0; i < linearPredictor.length; i += 1) {
    const value = linearPredictor[i] as number;
    const derivative = link.derivative(value);
    const variance = link.inverse(value) * link.inverseComplement(value);
    const weight = ((rows.weights[i] as number) * derivative * derivative) / variance;
    // Like R's glm.fit `good` rows: a row whose dmu/deta or variance underflows carries no information.
    rootWeights[i] = variance > 0 && Number.isFinite(weight) ? Math.sqrt(weight) : 0;
  }
  return rootWeights;
}

export function squares(rootWeights: Float64Array): Float64Array {
  const weights = new Float64Array(rootWeights.length);
  for (let i = 0; i < rootWeights.length; i += 1) weights[i] = (rootWeights[i] as number) * (rootWeights[i] as number);
  return weights;
}

/** R's binomial deviance: 2 sum w [y log(y/mu) + (1-y) log((1-y)/(1-mu))], 0 log 0 = 0. */
export function groupedDeviance(rows: GlmRows, mu: Float64Array, complement: Float64Array): number {
  let sum = 0;
  for (let i = 0; i < mu.length; i += 1) {
    const proportion = rows.proportions[i] as number;
    let term = 0;
    if (proportion > 0) term += proportion * Math.log(proportion / (mu[i] as number));
    if (proportion < 1) term += (1 - proportion) * Math.log((1 - proportion) / (complement[i] as number));
    sum += 2 * (rows.weights[i] as number) * term;
  }
  return sum;
}

/** sum w [y log mu + (1 - y) log(1 - mu)]: the log-likelihood without binomial coefficients. */
export function bernoulliLogLikelihoodOf(rows: GlmRows, mu: Float64Array, complement: Float64Array): number {
  let sum = 0;
  for (let i = 0; i < mu.length; i += 1) {
    const proportion = rows.proportions[i] as number;
    const weight = rows.weights[i] as number;
    if (proportion > 0) sum += weight * proportion * Math.log(mu[i] as number);
    if (proportion < 1) sum += weight * (1 - proportion) * Math.log(complement[i] as number);
  }
  return sum;
}

/**
 * sum prior * log C(trials, successes), on counts rounded as R's `binomial()$aic`
 * does, as an exact product sum_{j=1}^{r} log((t - r + j) / j), r = min(s, t - s),
 * accumulated with Neumaier's compensated summation.
 */
export function logBinomialCoefficients(
  successes: Float64Array,
  trials: Float64Array,
  priorWeights: Float64Array,
): { total: number; nonInteger: boolean } {
  let total = 0;
  let nonInteger = false;
  for (let i = 0; i < successes.length; i += 1) {
    const successCount = Math.round(successes[i] as number);
    const trialCount = Math.round(trials[i] as number);
    if (successCount !== successes[i] || trialCount !== trials[i]) nonInteger = true;
    const smaller = Math.min(successCount, trialCount - successCount);
    let sum = 0;
    let compensation = 0;
    for (let j = 1; j <= smaller; j += 1) {
      const term = Math.log((trialCount - smaller + j) / j);
      const next = sum + term;
      compensation += Math.abs(sum) >= Math.abs(term) ? sum - next + term : term - next + sum;
      sum = next;
    }
    total += (priorWeights[i] as number) * (sum + compensation);
  }
  return { total, nonInteger };
}
