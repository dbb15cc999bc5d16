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
 * `remainingAfter` and `COVARIANCE_SHIFT`). Fisher scoring converges only
 * linearly for probit and cloglog, so once a step is below 0.01 SE those
 * links take Newton-Raphson steps (observed information, solved by Cholesky
 * on the k-by-k matrix) whenever these are positive definite and do not raise
 * the deviance; the fixed point (score = 0) is the same, only reached faster.
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
import { LagparityInputError, error, show, type Issue } from '../issues.js';
import { checkClusters, checkFinite, checkLength } from '../numeric/array-checks.js';
import { choleskySolve } from '../numeric/cholesky.js';
import { clusterSandwichCovariance, compactClusters } from '../numeric/cluster-sandwich.js';
import { hasConstantColumn, multiply, selectRows, type DesignMatrix } from '../numeric/design-matrix.js';
import { inverseCrossProduct, solveLeastSquares } from '../numeric/householder-qr.js';
import { type ReducedLeastSquares, RowTriangle, columnExponents, finishReduction, reduceWeightedRows } from '../numeric/row-reduction.js';
import { normalQuantile, twoSidedNormalPValue } from '../stats/distributions.js';
import { linkFor, LINK_NAMES, type Link, type LinkName } from './links.js';

export interface BinomialData {
  readonly design: DesignMatrix;
  /** Successes per row, 0 <= successes <= trials. */
  readonly successes: ArrayLike<number>;
  /** Trials per row; rows with 0 trials are left out of the fit. */
  readonly trials: ArrayLike<number>;
  /** Prior weights per row (default 1); rows of weight 0 are left out. */
  readonly priorWeights?: ArrayLike<number>;
  /** Cluster index per row (0..G-1); when given, a CR1 block is reported. */
  readonly clusters?: ArrayLike<number>;
  /** A known term added to each row's linear predictor (R's `offset`); default none. */
  readonly offset?: ArrayLike<number>;
}

/**
 * How rows are read.
 * - `grouped` (default, R's convention): each row is a binomial count; the
 *   log-likelihood and AIC include the log binomial coefficients and the
 *   deviance is against the saturated model of the rows; n for BIC and CR1 is
 *   the number of rows.
 * - `bernoulli`: rows are collapsed 0/1 trials (identical covariates counted
 *   together); deviance = -2 log-likelihood of the Bernoulli data (no
 *   binomial coefficients), null deviance likewise, and n for BIC, CR1 and
 *   the residual degrees of freedom is the number of trials.
 */
export type BinomialLikelihood = 'grouped' | 'bernoulli';

export interface BinomialFitOptions {
  /** Default `logit`. */
  readonly link?: LinkName;
  /** Default 50. */
  readonly maxIterations?: number;
  /** Largest coefficient step, in standard errors, accepted as converged. Default 1e-10. */
  readonly tolerance?: number;
  /** Default `grouped`. */
  readonly likelihood?: BinomialLikelihood;
  /** Number of observations for BIC and the CR1 factor, overriding the default of `likelihood`. */
  readonly observationCount?: number;
  /** Report the CR1 block when `clusters` are given (default true). */
  readonly robust?: boolean;
  /** Starting coefficients (default: R's starting values mu = (w y + 0.5) / (w + 1)); e.g. a related fit's estimate. */
  readonly start?: ArrayLike<number>;
}

export type BinomialFitStatus = 'converged' | 'iteration_limit' | 'separation' | 'rank_deficient';

interface BinomialFitBase {
  readonly status: BinomialFitStatus;
  /** Weighted least-squares solves performed. */
  readonly iterations: number;
  readonly link: LinkName;
  readonly names: readonly string[];
  /** Names of columns that are linear combinations of earlier columns. */
  readonly aliased: readonly string[];
  /** Human-readable notes (iteration limit, step halving, separation, non-integer counts). */
  readonly warnings: readonly string[];
}

export interface BinomialRobust {
  readonly kind: 'CR1';
  readonly clusters: number;
  /** k-by-k row-major. */
  readonly covariance: Float64Array;
  readonly standardErrors: Float64Array;
  readonly zValues: Float64Array;
  readonly pValues: Float64Array;
}

export interface ConfidenceIntervals {
  readonly level: number;
  readonly lower: Float64Array;
  readonly upper: Float64Array;
}

/** A fit with estimates: converged, or stopped at the iteration limit (then the last iterate). */
export interface BinomialFitEstimated extends BinomialFitBase {
  readonly status: 'converged' | 'iteration_limit';
  readonly coefficients: Float64Array;
  readonly standardErrors: Float64Array;
  /** Inverse expected information at the estimate, k-by-k row-major. */
  readonly covariance: Float64Array;
  readonly zValues: Float64Array;
  /** Two-sided normal p-values. */
  readonly pValues: Float64Array;
  /** Wald 95% intervals, estimate +- qnorm(0.975) SE. */
  readonly confidenceIntervals: ConfidenceIntervals;
  readonly deviance: number;
  readonly nullDeviance: number;
  readonly dfResidual: number;
  readonly dfNull: number;
  readonly logLikelihood: number;
  readonly aic: number;
  readonly bic: number;
  /** sum of squared Pearson residuals. */
  readonly pearsonChiSquare: number;
  /** 1 - logL / logL(null), Bernoulli-level log-likelihoods (same for grouped and expanded rows); null if undefined. */
  readonly mcfaddenR2: number | null;
  /** Mean fitted probability among successes minus among failures, trial-weighted; null without both. */
  readonly tjurR2: number | null;
  /** Mean squared error of the fitted probability per trial. */
  readonly brierScore: number;
  /** Fitted probability for every input row (also rows of weight 0). */
  readonly fitted: Float64Array;
  /** Number of observations used for BIC and CR1. */
  readonly observationCount: number;
  readonly robust: BinomialRobust | null;
}

/** Complete or quasi-complete separation: the MLE does not exist. */
export interface BinomialFitSeparated extends BinomialFitBase {
  readonly status: 'separation';
  /** Coefficients that kept growing. */
  readonly divergingCoefficients: readonly string[];
  /** Rows whose fitted probability is within 1e-10 of 0 or 1. */
  readonly boundaryRows: number;
}

/** The design's columns are linearly dependent (over the rows with weight). */
export interface BinomialFitRankDeficient extends BinomialFitBase {
  readonly status: 'rank_deficient';
  readonly rank: number;
}

export type BinomialFit = BinomialFitEstimated | BinomialFitSeparated | BinomialFitRankDeficient;

/** Fitted probabilities closer than this to 0 or 1 mark a row as on the boundary. */
const BOUNDARY = 1e-10;
/** A step that changes a boundary row's linear predictor by more than this means it is still diverging. */
const DIVERGING_STEP = 1e-6;
const MAX_HALVINGS = 60;
/** The default `tolerance`: the largest coefficient step, in standard errors, accepted as converged. */
const DEFAULT_TOLERANCE = 1e-10;
/** Switch to Newton steps once a Fisher step is smaller than this many standard errors. */
const NEWTON_SWITCH = 1e-2;

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
  checkInput(data, { linkName, maxIterations, tolerance, likelihood, observationCount: options.observationCount });
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
    const { indices, count } = compactClusters(data.clusters, Array.from(keep, (value) => value === 1));
    const scores = new Float64Array(n * columns);
    for (let i = 0; i < n; i += 1) {
      const variance = (state.mu[i] as number) * (state.complement[i] as number);
      if (!(variance > 0)) continue;
      const factor =
        ((rows.weights[i] as number) *
          residualOf(rows.proportions[i] as number, state.mu[i] as number, state.complement[i] as number) *
          link.derivative(linearPredictor[i] as number)) /
        variance;
      for (let j = 0; j < columns; j += 1) scores[i * columns + j] = (kept.values[j * n + i] as number) * factor;
    }
    const robustCovariance = clusterSandwichCovariance({
      bread: covariance,
      scores,
      clusters: indices,
      clusterCount: count,
      observationCount,
      parameterCount,
    });
    if (robustCovariance === null) {
      warnings.push(
        `cluster-robust covariance requires at least 2 clusters and more observations than coefficients, got ${count} cluster(s)`,
      );
    } else {
      const robustErrors = diagonalRoots(robustCovariance, columns);
      const robustZ = coefficients.map((value, j) => value / (robustErrors[j] as number));
      robust = {
        kind: 'CR1',
        clusters: count,
        covariance: robustCovariance,
        standardErrors: robustErrors,
        zValues: robustZ,
        pValues: robustZ.map(twoSidedNormalPValue),
      };
    }
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

interface GlmRows {
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

interface LinkState {
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
function atEstimate(
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
function rootWeightsOf(link: Link, linearPredictor: Float64Array, rows: GlmRows): Float64Array {
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

function squares(rootWeights: Float64Array): Float64Array {
  const weights = new Float64Array(rootWeights.length);
  for (let i = 0; i < rootWeights.length; i += 1) weights[i] = (rootWeights[i] as number) * (rootWeights[i] as number);
  return weights;
}

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
function fusedPass(
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
function logitPass(
  design: DesignMatrix,
  rows: GlmRows,
  coefficients: ArrayLike<number> | null,
  linearPredictor: Float64Array,
  triangle: RowTriangle,
  factors: Float64Array,
): number {
  const beta = coefficients === null ? null : Float64Array.from(coefficients);
  let logLikelihood = 0;
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
const PASS_BLOCK_ROWS = 4096;

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

interface InitialPass {
  readonly linearPredictor: Float64Array;
  readonly deviance: number;
  readonly reduction: ReducedLeastSquares;
  /** The coefficients of the pass, or undefined at R's starting values. */
  readonly start: Float64Array | undefined;
}

/** The first pass: at `start`, or (null) at R's starting values mu = (w y + 0.5) / (w + 1). */
function initialPass(design: DesignMatrix, rows: GlmRows, link: Link, exponents: Int32Array, start: Float64Array | null): InitialPass {
  const linearPredictor = new Float64Array(design.rows);
  const triangle = new RowTriangle(design.columns);
  const factors = Float64Array.from(exponents, (exponent) => 2 ** exponent);
  const deviance = fusedPass(design, rows, link, start, linearPredictor, triangle, factors);
  return { linearPredictor, deviance, reduction: finishReduction(triangle, exponents), start: start ?? undefined };
}

/** Logit fits of at least this many rows start from a fit to a sample of them. */
const WARM_START_ROWS = 1 << 16;
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
 * Mark the rows that carry weight (trials x prior weight > 0) in `keep`;
 * returns their number. (The one-pass loops of a fit live in small functions
 * of their own, so that each is optimised on its own while it runs.)
 */
function markCarrying(trials: ArrayLike<number>, priorWeights: ArrayLike<number> | undefined, keep: Uint8Array): number {
  let count = 0;
  for (let i = 0; i < keep.length; i += 1) {
    const carries = (trials[i] as number) * (priorWeights?.[i] ?? 1) > 0;
    keep[i] = carries ? 1 : 0;
    if (carries) count += 1;
  }
  return count;
}

/** Proportions, GLM weights (prior weight x trials), the saturated log-likelihood kernel, the weight total and the offset. */
function glmRows(successes: Float64Array, trials: Float64Array, priorWeights: Float64Array, offset: ArrayLike<number> | null): GlmRows {
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
function sampleEstimate(
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

/**
 * Whether a logit fit at `linearPredictor` is separated as {@link fitBinomial}
 * judges it: some row's fitted probability within BOUNDARY of 0 or 1 (from
 * the same arithmetic as {@link atEstimate}) that still moved by more than
 * DIVERGING_STEP in the last step.
 */
function separatedAt(linearPredictor: Float64Array, lastChange: (row: number) => number): boolean {
  for (let i = 0; i < linearPredictor.length; i += 1) {
    const eta = linearPredictor[i] as number;
    const exponential = Math.exp(-Math.abs(eta));
    const small = exponential * (1 / (1 + exponential));
    if (small < BOUNDARY && stillDiverging(eta, lastChange(i))) return true;
  }
  return false;
}

/** Whether a row at linear predictor `eta` that moved by `change` in the last step still diverges: by more than DIVERGING_STEP, relative to |eta| above 1. */
function stillDiverging(eta: number, change: number): boolean {
  return Math.abs(change) > DIVERGING_STEP * Math.max(1, Math.abs(eta));
}

/** Fisher scoring / IRLS (McCullagh & Nelder 1989, §2.5), R's starting values and step control; one fused pass per iteration. */
function iterate(
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

/** R's binomial deviance: 2 sum w [y log(y/mu) + (1-y) log((1-y)/(1-mu))], 0 log 0 = 0. */
function groupedDeviance(rows: GlmRows, mu: Float64Array, complement: Float64Array): number {
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
function bernoulliLogLikelihoodOf(rows: GlmRows, mu: Float64Array, complement: Float64Array): number {
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
function logBinomialCoefficients(
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

/**
 * y - mu without cancellation: for y >= 1/2 it is (1 - mu) - (1 - y), with
 * 1 - mu from the link's accurate complement, so a fitted probability that
 * rounds to 1 still leaves its true residual.
 */
function residualOf(proportion: number, mu: number, complement: number): number {
  return proportion >= 0.5 ? complement - (1 - proportion) : proportion - mu;
}

function divergingNames(lastStep: Float64Array, names: readonly string[]): string[] {
  let largest = 0;
  for (const step of lastStep) largest = Math.max(largest, Math.abs(step));
  if (!(largest > 0)) return [...names];
  return names.filter((_, j) => Math.abs(lastStep[j] as number) >= 1e-3 * largest);
}

function diagonalRoots(matrix: Float64Array, size: number): Float64Array {
  return Float64Array.from({ length: size }, (_, j) => Math.sqrt(Math.max(0, matrix[j * size + j] as number)));
}

function checkInput(
  data: BinomialData,
  settings: {
    linkName: LinkName;
    maxIterations: number;
    tolerance: number;
    likelihood: BinomialLikelihood;
    observationCount: number | undefined;
  },
): void {
  const rows = data.design.rows;
  const issues: Issue[] = [
    ...checkFinite('design', data.design.values),
    ...checkLength('successes', data.successes, rows),
    ...checkLength('trials', data.trials, rows),
  ];
  if (data.priorWeights !== undefined) {
    issues.push(...checkLength('priorWeights', data.priorWeights, rows), ...checkFinite('priorWeights', data.priorWeights, true));
  }
  if (data.clusters !== undefined) issues.push(...checkClusters(data.clusters, rows));
  if (data.offset !== undefined) issues.push(...checkLength('offset', data.offset, rows), ...checkFinite('offset', data.offset));
  if (issues.length === 0) {
    issues.push(...checkFinite('successes', data.successes, true), ...checkFinite('trials', data.trials, true));
  }
  if (issues.length === 0) {
    for (let i = 0; i < rows; i += 1) {
      if ((data.successes[i] as number) > (data.trials[i] as number)) {
        issues.push(
          error('successes_exceed_trials', `successes[${i}]`, `\`successes\` requires at most \`trials\` (${show(data.trials[i])}), got ${show(data.successes[i])}`),
        );
        break;
      }
    }
    let weighted = 0;
    for (let i = 0; i < rows; i += 1) if ((data.trials[i] as number) * (data.priorWeights?.[i] ?? 1) > 0) weighted += 1;
    if (weighted === 0) issues.push(error('no_data', 'trials', '`fitBinomial` requires at least one row with trials and weight > 0, got none'));
  }
  if (!LINK_NAMES.includes(settings.linkName)) {
    issues.push(error('invalid_option', 'link', `\`link\` requires one of ${LINK_NAMES.join(', ')}, got ${show(settings.linkName)}`));
  }
  if (!Number.isInteger(settings.maxIterations) || settings.maxIterations < 1) {
    issues.push(error('invalid_option', 'maxIterations', `\`maxIterations\` requires an integer >= 1, got ${show(settings.maxIterations)}`));
  }
  if (!(settings.tolerance > 0) || !Number.isFinite(settings.tolerance)) {
    issues.push(error('invalid_option', 'tolerance', `\`tolerance\` requires a finite number > 0, got ${show(settings.tolerance)}`));
  }
  if (settings.likelihood !== 'grouped' && settings.likelihood !== 'bernoulli') {
    issues.push(error('invalid_option', 'likelihood', `\`likelihood\` requires 'grouped' or 'bernoulli', got ${show(settings.likelihood)}`));
  }
  const count = settings.observationCount;
  if (count !== undefined && (!Number.isFinite(count) || count <= 0)) {
    issues.push(error('invalid_option', 'observationCount', `\`observationCount\` requires a number > 0, got ${show(count)}`));
  }
  if (issues.length > 0) throw new LagparityInputError(issues);
}

/** X b (+ the offset, when there is one), into `target` when given. */
function predictorOf(design: DesignMatrix, coefficients: ArrayLike<number>, offset: ArrayLike<number> | null, target?: Float64Array): Float64Array {
  const predictor = multiply(design, coefficients, target);
  if (offset !== null) for (let i = 0; i < design.rows; i += 1) predictor[i] = (predictor[i] as number) + (offset[i] as number);
  return predictor;
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
