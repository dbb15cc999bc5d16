/**
 * Binomial generalised linear model (logit, probit or complementary log-log
 * link) fitted by iteratively reweighted least squares (Fisher scoring).
 *
 * Method: McCullagh, P. and Nelder, J. A. (1989), *Generalized Linear
 * Models*, 2nd ed., Chapman & Hall, §2.5 (IRLS) and §4.4 (binomial); every
 * step is a weighted least-squares solve by Householder QR (Golub & Van Loan
 * 2013, §5.3.3), never the normal equations. Conventions follow R's
 * `glm.fit` (R Core Team, R 4.2.2, `stats` package): starting values
 * mu = (w y + 0.5) / (w + 1), rows with weight 0 left out, rank tolerance
 * 1e-7, step halving when the deviance is not finite. In addition a step that
 * raises the deviance is halved (Marschner, I. C. (2011), glm2: fitting
 * generalized linear models with convergence problems, *The R Journal* 3(2),
 * 12-15), which R's `glm.fit` does only for non-finite deviance.
 *
 * The parts, one file each: the per-row quantities (`glm-rows.ts`), one
 * fused pass over the rows (`irls-passes.ts`), the loop, its stopping rules
 * and the warm start (`irls-iteration.ts`, with the Start and Convergence
 * rules), the pass at the estimate (`likelihood-at-estimate.ts`), separation
 * (`separation.ts`), the input checks (`check-binomial-input.ts`) and the
 * types (`binomial-fit-types.ts`); this file assembles the fit: status,
 * covariance, the likelihood summaries, the cluster-robust block.
 *
 * Covariance: the inverse of the expected (Fisher) information X'WX with
 * W = n (dmu/deta)^2 / (mu (1 - mu)). For probit and cloglog it is evaluated
 * AT the final estimate (R's `summary.glm` uses the weights of the last
 * iteration, i.e. of the previous iterate). For the logit link, whose Fisher
 * steps are Newton steps, the last step is taken without a pass at its
 * result, so the information is that of the iterate it stepped from, as in
 * R: one step of at most `tolerance` standard errors away, or, when the fit
 * stops on the contraction bound, of at most COVARIANCE_SHIFT x
 * sqrt(sum of weights), which moves the information by about 1e-9
 * relatively; the estimate, fitted values and likelihood are at the
 * estimate. For the logit link expected and observed information coincide;
 * for probit and cloglog this is R's / `sandwich`'s convention, not Stata's
 * or statsmodels' observed information.
 *
 * Cluster-robust CR1 covariance (when `clusters` are given): bread = that
 * inverse expected information, as R `sandwich` does for a glm; Liang & Zeger
 * (1986), Cameron & Miller (2015); see `numeric/cluster-sandwich.ts`.
 *
 * Offset (when `offset` is given): a known term added to every row's linear
 * predictor, eta = offset + X b, as R's `glm(..., offset = )`: each IRLS
 * step regresses the working response less the offset on X, and R's starting
 * values ignore it. The null deviance is then that of the model with the
 * offset and, when the design has a constant column, an intercept (a fit of
 * its own, `nullWithOffset`), as R's `glm` reports it.
 *
 * Cost: O(iterations * n * k^2) time, one fused pass over the rows per
 * iteration (linear predictor, link, working weights and response, row
 * reduction together; no per-iteration arrays of length n), O(n) memory for a
 * few per-row vectors and O(k^2) for the reduction.
 */
import { compactClusters, sandwichOfClusterScores } from '../numeric/cluster-sandwich.js';
import { hasConstantColumn, selectRows, type DesignMatrix } from '../numeric/design-matrix.js';
import { inverseCrossProduct } from '../numeric/householder-qr.js';
import { columnExponents, reduceWeightedRows } from '../numeric/row-reduction.js';
import { normalQuantile, twoSidedNormalPValue } from '../stats/distributions.js';
import type { BinomialData, BinomialFit, BinomialFitOptions, BinomialRobust, ConfidenceIntervals } from './binomial-fit-types.js';
import { checkBinomialInput } from './check-binomial-input.js';
import { glmRows, markCarrying, predictorOf, residualOf, type GlmRows } from './glm-rows.js';
import { initialPass, type InitialPass } from './irls-passes.js';
import { WARM_START_ROWS, iterate, sampleEstimate } from './irls-iteration.js';
import { atEstimate, bernoulliLogLikelihoodOf, groupedDeviance, logBinomialCoefficients, rootWeightsOf, squares } from './likelihood-at-estimate.js';
import { linkFor, type Link, type LinkName } from './links.js';
import { divergingNames } from './separation.js';

/** The default `tolerance`: the largest coefficient step, in standard errors, accepted as converged. */
const DEFAULT_TOLERANCE = 1e-10;

/**
 * Fit a binomial GLM by IRLS.
 *
 * Throws `LagparityInputError` for malformed input; separation, rank
 * deficiency and the iteration limit are results (`status`), not exceptions.
 * Every returned number is finite.
 *
 * @example
 * const fit = fitBinomial({ design, successes: killed, trials: exposed }, { link: 'probit' });
 * if (fit.status === 'converged') fit.coefficients;
 */
export function fitBinomial(data: BinomialData, options: BinomialFitOptions = {}): BinomialFit {
  const linkName = options.link ?? 'logit';
  const maxIterations = options.maxIterations ?? 50;
  const tolerance = options.tolerance ?? DEFAULT_TOLERANCE;
  const likelihood = options.likelihood ?? 'grouped';
  checkBinomialInput(data, { linkName, maxIterations, tolerance, likelihood, observationCount: options.observationCount });
  const link = linkFor(linkName);
  const { design } = data;
  const columns = design.columns;
  const warnings: string[] = [];

  // Rows that carry weight, and the GLM quantities on them.
  const keep = new Uint8Array(design.rows);
  const everyRow = markCarrying(data.trials, data.priorWeights, keep) === design.rows;
  // Large data sets usually keep every row: then the design and the counts are used as they are, not copied.
  const kept = everyRow ? design : selectRows(design, Array.from(keep, (value) => value === 1));
  const n = kept.rows;
  const select = (values: ArrayLike<number> | undefined): Float64Array => {
    if (everyRow && values instanceof Float64Array) return values;
    const selected = new Float64Array(n);
    for (let i = 0, r = 0; i < design.rows; i += 1) if (keep[i] === 1) selected[r++] = values === undefined ? 1 : (values[i] as number);
    return selected;
  };
  const successes = select(data.successes);
  const trials = select(data.trials);
  const priorWeights = select(data.priorWeights);
  const rows = glmRows(successes, trials, priorWeights, data.offset === undefined ? null : select(data.offset));
  const base = { link: linkName, names: design.names };
  const exponents = columnExponents(kept);

  // The first IRLS pass (at R's starting values, weights n mu (1 - mu) > 0 on every row) already
  // reduces the design; its rank is the design's rank, so no separate pass is needed then.
  // Many logit rows start instead from a fit to a systematic sample of them (one full pass fewer);
  // should the weights there lose rank, R's starting values decide. A given start's first pass
  // serves too while it keeps full rank (else the rank is checked unweighted, and the iteration
  // meets the lost rank itself, as before).
  const warmStart = options.start === undefined && linkName === 'logit' && n >= WARM_START_ROWS ? sampleEstimate(kept, successes, trials, priorWeights, rows.offset, options, exponents) : null;
  let initial: InitialPass | null = initialPass(kept, rows, link, exponents, options.start === undefined ? warmStart : Float64Array.from(options.start));
  if (options.start !== undefined && initial.reduction.qr.rank < columns) initial = null;
  else if (warmStart !== null && initial.reduction.qr.rank < columns) initial = initialPass(kept, rows, link, exponents, null);
  const start = options.start ?? initial?.start;
  const structural = initial?.reduction.qr ?? reduceWeightedRows(kept, null, null, exponents).qr;
  if (structural.rank < columns) {
    const aliased = structural.aliased.map((j) => design.names[j] as string);
    return {
      ...base,
      status: 'rank_deficient',
      iterations: 0,
      rank: structural.rank,
      aliased,
      warnings: [
        `design is rank deficient over the rows with weight: ${aliased.map((name) => `\`${name}\``).join(', ')} ` +
          'aliased with earlier columns (for example a column that is constant, like the intercept)',
      ],
    };
  }

  const iteration = iterate(kept, rows, link, maxIterations, tolerance, exponents, start, initial);
  warnings.push(...iteration.warnings);
  const { coefficients } = iteration;
  const linearPredictor = iteration.atEstimate?.linearPredictor ?? predictorOf(kept, coefficients, rows.offset);
  const { state, boundaryRows, stillMoving, sums } = atEstimate(link, linearPredictor, rows, successes, trials, priorWeights, iteration.lastLinearPredictorChange, iteration.spares);
  // The last pass of the iteration already reduced the rows at the estimate.
  const information = (iteration.atEstimate?.reduction ?? reduceWeightedRows(kept, squares(rootWeightsOf(link, linearPredictor, rows)), null, exponents)).qr;
  const weightedRankLost = iteration.weightsCollapsed || information.rank < columns;
  if (weightedRankLost && boundaryRows === 0) {
    // Numerically dependent columns that only show once weighted (e.g. tiny or subnormal entries).
    const aliased = (information.rank < columns ? information : iteration.collapsedAliased).aliased.map(
      (j) => design.names[j] as string,
    );
    return {
      ...base,
      status: 'rank_deficient',
      iterations: iteration.iterations,
      rank: Math.min(information.rank, columns - aliased.length),
      aliased,
      warnings: [
        ...warnings,
        `weighted design is numerically rank deficient: ${aliased.map((name) => `\`${name}\``).join(', ')} ` +
          'aliased with earlier columns under the IRLS weights',
      ],
    };
  }
  if (weightedRankLost || (boundaryRows > 0 && stillMoving)) {
    const diverging = divergingNames(iteration.lastStep, design.names);
    return {
      ...base,
      status: 'separation',
      iterations: iteration.iterations,
      aliased: [],
      divergingCoefficients: diverging,
      boundaryRows,
      warnings: [
        ...warnings,
        `complete or quasi-complete separation: ${diverging.map((name) => `\`${name}\``).join(', ')} kept growing ` +
          `and ${boundaryRows} row(s) have fitted probabilities numerically 0 or 1; the maximum-likelihood estimate does not exist`,
      ],
    };
  }
  if (boundaryRows > 0) warnings.push(`fitted probabilities numerically 0 or 1 occurred in ${boundaryRows} row(s)`);
  const status = iteration.converged ? 'converged' : 'iteration_limit';
  if (!iteration.converged) {
    warnings.push(`\`maxIterations\` ${maxIterations} reached before convergence; estimates are the last iterate`);
  }

  // Inverse expected information at the estimate.
  const covariance = inverseCrossProduct(information);
  const standardErrors = diagonalRoots(covariance, columns);
  const unbounded = design.names.filter(
    (_, j) => !Number.isFinite(standardErrors[j] as number) || !Number.isFinite(coefficients[j] as number),
  );
  if (unbounded.length > 0 || !covariance.every(Number.isFinite)) {
    // The information matrix is singular in floating point (its inverse overflows).
    return {
      ...base,
      status: 'rank_deficient',
      iterations: iteration.iterations,
      rank: columns - unbounded.length,
      aliased: unbounded,
      warnings: [
        ...warnings,
        `information matrix is numerically singular: the variance of ${unbounded.map((name) => `\`${name}\``).join(', ')} ` +
          'overflows (a column with entries too small to carry information)',
      ],
    };
  }
  const zValues = coefficients.map((value, j) => value / (standardErrors[j] as number));
  const pValues = zValues.map(twoSidedNormalPValue);
  const critical = normalQuantile(0.975);
  const confidenceIntervals: ConfidenceIntervals = {
    level: 0.95,
    lower: coefficients.map((value, j) => value - critical * (standardErrors[j] as number)),
    upper: coefficients.map((value, j) => value + critical * (standardErrors[j] as number)),
  };

  // Likelihood summaries.
  const hasIntercept = hasConstantColumn(kept);
  const totalWeight = rows.totalWeight;
  const { totalSuccessWeight, totalTrials } = sums;
  const nullMu = hasIntercept ? totalSuccessWeight / totalWeight : link.inverse(0);
  const nullComplement = hasIntercept ? (totalWeight - totalSuccessWeight) / totalWeight : link.inverseComplement(0);
  const bernoulliLogLikelihood = state.logLikelihood;
  // At a constant fitted probability the log-likelihood needs only the weighted totals; with an offset
  // the null model is fitted (or, without an intercept, taken at the offset alone), and only when
  // `nullDeviance` or `mcfaddenR2` is first read: callers that need the estimates alone skip that fit.
  let nullBernoulliLogLikelihood: number | null =
    rows.offset === null
      ? (totalSuccessWeight > 0 ? totalSuccessWeight * Math.log(nullMu) : 0) +
        (totalWeight - totalSuccessWeight > 0 ? (totalWeight - totalSuccessWeight) * Math.log(nullComplement) : 0)
      : null;
  const nullLogLikelihood = (): number =>
    (nullBernoulliLogLikelihood ??= nullWithOffset(rows, { successes, trials, priorWeights }, link, hasIntercept ? (columns === 1 ? bernoulliLogLikelihood : 'fit') : 'none', warnings));
  const parameterCount = columns;
  let deviance: number;
  let nullDevianceOf: (nullLogLikelihood: number) => number;
  let logLikelihood: number;
  let defaultObservations: number;
  let residualBase: number;
  if (likelihood === 'grouped') {
    deviance = groupedDeviance(rows, state.mu, state.complement);
    nullDevianceOf = (value) => Math.max(0, 2 * (rows.saturated - value));
    const { total, nonInteger } = logBinomialCoefficients(successes, trials, priorWeights);
    if (nonInteger) warnings.push('non-integer successes or trials: log binomial coefficients use rounded counts, as R does');
    logLikelihood = bernoulliLogLikelihood + total;
    defaultObservations = n;
    residualBase = n;
  } else {
    deviance = -2 * bernoulliLogLikelihood;
    nullDevianceOf = (value) => -2 * value;
    logLikelihood = bernoulliLogLikelihood;
    defaultObservations = totalTrials;
    residualBase = options.observationCount ?? totalTrials;
  }
  const observationCount = options.observationCount ?? defaultObservations;
  const aic = -2 * logLikelihood + 2 * parameterCount;
  const bic = -2 * logLikelihood + Math.log(observationCount) * parameterCount;

  const { pearsonChiSquare, successWeight, failureWeight } = sums;
  const tjurR2 =
    successWeight > 0 && failureWeight > 0 ? sums.fittedAmongSuccesses / successWeight - sums.fittedAmongFailures / failureWeight : null;
  const brierScore = sums.brierSum / sums.priorTrials;

  const fitted = kept === design ? state.mu : predictorOf(design, coefficients, data.offset ?? null).map((value) => link.inverse(value));

  let robust: BinomialRobust | null = null;
  if (data.clusters !== undefined && options.robust !== false) {
    const block = clusterRobust({ design: kept, rows, state, link, linearPredictor, clusters: data.clusters, keep, covariance, coefficients, observationCount });
    robust = block.robust;
    if (block.warning !== null) warnings.push(block.warning);
  }

  return {
    ...base,
    status,
    iterations: iteration.iterations,
    aliased: [],
    warnings,
    coefficients,
    standardErrors,
    covariance,
    zValues,
    pValues,
    confidenceIntervals,
    deviance,
    get nullDeviance() {
      return nullDevianceOf(nullLogLikelihood());
    },
    dfResidual: residualBase - parameterCount,
    dfNull: residualBase - (hasIntercept ? 1 : 0),
    logLikelihood,
    aic,
    bic,
    pearsonChiSquare,
    get mcfaddenR2() {
      const nullValue = nullLogLikelihood();
      return nullValue < 0 ? 1 - bernoulliLogLikelihood / nullValue : null;
    },
    tjurR2,
    brierScore,
    fitted,
    observationCount,
    robust,
  };
}

/**
 * The CR1 block of a fit at its estimate (`covariance` the bread, the inverse expected
 * information), from each cluster's score sum over the rows `keep` marks (`design` and `rows` are
 * those rows), or a warning when there are too few clusters or observations.
 */
function clusterRobust(input: {
  readonly design: DesignMatrix;
  readonly rows: GlmRows;
  readonly state: { readonly mu: Float64Array; readonly complement: Float64Array };
  readonly link: Link;
  readonly linearPredictor: Float64Array;
  readonly clusters: ArrayLike<number>;
  readonly keep: Uint8Array;
  readonly covariance: Float64Array;
  readonly coefficients: Float64Array;
  readonly observationCount: number;
}): { readonly robust: BinomialRobust | null; readonly warning: string | null } {
  const { indices, count } = compactClusters(input.clusters, input.keep);
  const clusterScores = clusterScoreSums(input.design, input.rows, input.state, input.link, input.linearPredictor, indices, count);
  return robustBlock({ clusterScores, clusterCount: count, covariance: input.covariance, coefficients: input.coefficients, observationCount: input.observationCount });
}

/** The CR1 block from each cluster's score sum (`clusterScores`, count x k), or a warning when there are too few clusters or observations. */
export function robustBlock(input: {
  readonly clusterScores: Float64Array;
  readonly clusterCount: number;
  readonly covariance: Float64Array;
  readonly coefficients: Float64Array;
  readonly observationCount: number;
}): { readonly robust: BinomialRobust | null; readonly warning: string | null } {
  const columns = input.coefficients.length;
  const count = input.clusterCount;
  const robustCovariance = sandwichOfClusterScores({
    bread: input.covariance,
    clusterScores: input.clusterScores,
    clusterCount: count,
    observationCount: input.observationCount,
    parameterCount: columns,
  });
  if (robustCovariance === null) {
    return { robust: null, warning: `cluster-robust covariance requires at least 2 clusters and more observations than coefficients, got ${count} cluster(s)` };
  }
  const robustErrors = diagonalRoots(robustCovariance, columns);
  const robustZ = input.coefficients.map((value, j) => value / (robustErrors[j] as number));
  return {
    robust: { kind: 'CR1', clusters: count, covariance: robustCovariance, standardErrors: robustErrors, zValues: robustZ, pValues: robustZ.map(twoSidedNormalPValue) },
    warning: null,
  };
}

/**
 * A row's score factor w (y - mu) (dmu/deta) / (mu (1 - mu)) at linear predictor `eta` (its score
 * is x times it), or null when the variance underflows (the row carries no score). For the logit
 * link dmu/deta is mu (1 - mu) itself, so the factor is w (y - mu): no exp.
 */
export function scoreFactor(link: Link, logit: boolean, weight: number, proportion: number, mu: number, complement: number, eta: number): number | null {
  const variance = mu * complement;
  if (!(variance > 0)) return null;
  const residual = weight * residualOf(proportion, mu, complement);
  return logit ? residual : (residual * link.derivative(eta)) / variance;
}

/**
 * Each cluster's score sum u_g = sum over its rows of x_i w_i (y_i - mu_i) (dmu/deta)_i / (mu_i (1 - mu_i)),
 * summed row by row as the scores are computed (no n-by-k array), each row's factor from
 * {@link scoreFactor}.
 */
function clusterScoreSums(
  design: DesignMatrix,
  rows: GlmRows,
  state: { readonly mu: Float64Array; readonly complement: Float64Array },
  link: Link,
  linearPredictor: Float64Array,
  indices: Int32Array,
  count: number,
): Float64Array {
  const { rows: n, columns, values } = design;
  const { mu, complement } = state;
  const { weights, proportions } = rows;
  const logit = link.name === 'logit';
  const sums = new Float64Array(count * columns);
  for (let i = 0; i < n; i += 1) {
    const factor = scoreFactor(link, logit, weights[i] as number, proportions[i] as number, mu[i] as number, complement[i] as number, linearPredictor[i] as number);
    if (factor === null) continue;
    const at = (indices[i] as number) * columns;
    for (let j = 0; j < columns; j += 1) sums[at + j] = (sums[at + j] as number) + (values[j * n + i] as number) * factor;
  }
  return sums;
}

/**
 * The score (gradient of the log-likelihood) at `coefficients`:
 * X' [w (y - mu) (dmu/deta) / (mu (1 - mu))], one entry per column.
 * Zero at the MLE; a diagnostic for callers and tests.
 */
export function binomialScore(data: BinomialData, coefficients: ArrayLike<number>, linkName: LinkName = 'logit'): Float64Array {
  const link = linkFor(linkName);
  const { design } = data;
  const linearPredictor = predictorOf(design, coefficients, data.offset ?? null);
  const score = new Float64Array(design.columns);
  for (let i = 0; i < design.rows; i += 1) {
    const trials = data.trials[i] as number;
    const weight = trials * (data.priorWeights?.[i] ?? 1);
    if (!(weight > 0)) continue;
    const value = linearPredictor[i] as number;
    const mu = link.inverse(value);
    const complement = link.inverseComplement(value);
    const variance = mu * complement;
    if (!(variance > 0)) continue;
    const residual = residualOf((data.successes[i] as number) / trials, mu, complement);
    const factor = (weight * residual * link.derivative(value)) / variance;
    for (let j = 0; j < design.columns; j += 1) {
      score[j] = (score[j] as number) + (design.values[j * design.rows + i] as number) * factor;
    }
  }
  return score;
}

function diagonalRoots(matrix: Float64Array, size: number): Float64Array {
  return Float64Array.from({ length: size }, (_, j) => Math.sqrt(Math.max(0, matrix[j * size + j] as number)));
}

/**
 * The Bernoulli-level log-likelihood of the null model of a fit with an
 * offset, as R's `glm` takes it for the null deviance: without an intercept,
 * the offset alone (`'none'`); with one, the intercept-only fit with the same
 * offset (`'fit'`), or the fit's own log-likelihood when the fit is that model
 * (a number). Should that fit give no estimate, the offset alone is used and
 * a warning says so.
 */
function nullWithOffset(
  rows: GlmRows,
  counts: { readonly successes: Float64Array; readonly trials: Float64Array; readonly priorWeights: Float64Array },
  link: Link,
  intercept: 'none' | 'fit' | number,
  warnings: string[],
): number {
  if (typeof intercept === 'number') return intercept;
  const offset = rows.offset as ArrayLike<number>;
  const n = rows.proportions.length;
  if (intercept === 'fit') {
    const ones: DesignMatrix = { rows: n, columns: 1, names: ['intercept'], values: new Float64Array(n).fill(1) };
    const fit = fitBinomial({ design: ones, ...counts, offset }, { link: link.name, likelihood: 'bernoulli' });
    if (fit.status === 'converged' || fit.status === 'iteration_limit') return fit.logLikelihood;
    warnings.push(`the null model (intercept and offset) gave no estimate (${fit.status}): the null deviance is taken at the offset alone`);
  }
  const mu = new Float64Array(n);
  const complement = new Float64Array(n);
  for (let i = 0; i < n; i += 1) {
    mu[i] = link.inverse(offset[i] as number);
    complement[i] = link.inverseComplement(offset[i] as number);
  }
  return bernoulliLogLikelihoodOf(rows, mu, complement);
}
