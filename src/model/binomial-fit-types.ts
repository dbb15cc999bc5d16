/**
 * The binomial GLM's inputs, options and results: what {@link fitBinomial}
 * (`fit-binomial.ts`) takes and returns. A fit is a result tagged by
 * `status` (converged, iteration limit, separation, rank deficiency), not an
 * exception. Types only.
 */
import type { DesignMatrix } from '../numeric/design-matrix.js';
import type { LinkName } from './links.js';

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
