/**
 * The fit report (`lagparity/fit-report@1`, what `fitModel` returns and
 * `fit --json` prints): its options, its rows and sections, and the fields of
 * a report whose fit gave no estimates.
 */
import type { Trials } from '../formats/trials-types.js';
import type { Issue } from '../issues.js';
import type { BinomialLikelihood } from './binomial-fit-types.js';
import type { LinkName } from './links.js';
import type { DifficultyCoding, TermName } from './terms.js';

export const FIT_REPORT_FORMAT = 'lagparity/fit-report@1' as const;

export type FitFamily = 'binomial' | 'least_squares';


export interface FitModelOptions {
  /** Default `binomial`. */
  readonly family?: FitFamily;
  /** Default `logit` (binomial only). */
  readonly link?: LinkName;
  /** Default {@link DEFAULT_TERMS}. */
  readonly terms?: readonly TermName[];
  /** Default `player` when the trials have a player column, else `none`. */
  readonly cluster?: 'player' | 'none';
  /** Cross-validation folds; default 5; 0 skips cross-validation. */
  readonly folds?: number;
  /** Seed of the fold assignment; default 1. */
  readonly seed?: number;
  /** Reference difficulty level; default the first level in the file. */
  readonly reference?: string;
  /** Likelihood-ratio tests per factor; default true. */
  readonly likelihoodRatioTests?: boolean;
  /** Fit the least-squares baseline on accuracy (`baseline` in the report); default true. */
  readonly baseline?: boolean;
  /** IRLS iteration limit; default 50. */
  readonly maxIterations?: number;
  /** Called before each stage (`fit`, `likelihood ratio: latency`, `fold 2 of 5`, ...). */
  readonly onProgress?: (stage: string) => void;
}

export interface IntervalEstimate {
  readonly std_error: number;
  readonly z: number;
  readonly p_value: number;
  readonly ci_lower: number;
  readonly ci_upper: number;
}

export interface CoefficientRow extends IntervalEstimate {
  readonly name: string;
  readonly term: TermName;
  readonly estimate: number;
  /** CR1 by player, or null when not clustered. */
  readonly robust: IntervalEstimate | null;
}

export interface FitStatistics {
  readonly iterations: number;
  readonly observations: number;
  readonly deviance: number | null;
  readonly null_deviance: number | null;
  readonly df_residual: number;
  readonly df_null: number | null;
  readonly log_likelihood: number | null;
  readonly aic: number | null;
  readonly bic: number | null;
  readonly mcfadden_r2: number | null;
  readonly tjur_r2: number | null;
  readonly brier: number;
  /** Least squares only. */
  readonly r_squared: number | null;
  readonly residual_sd: number | null;
}

export type LikelihoodRatioTest =
  | {
      readonly factor: 'latency' | 'scale' | 'difficulty';
      readonly status: 'tested';
      readonly dropped_terms: readonly TermName[];
      readonly df: number;
      readonly statistic: number;
      readonly p_value: number;
    }
  | {
      readonly factor: 'latency' | 'scale' | 'difficulty';
      readonly status: 'not_tested';
      readonly dropped_terms: readonly TermName[];
      readonly reason: string;
    };

export interface FoldResult {
  readonly fold: number;
  readonly status: string;
  readonly players: number | null;
  readonly held_out_attempts: number;
  readonly log_loss: number | null;
  readonly brier: number | null;
}

export interface CrossValidation {
  readonly folds: number;
  readonly seed: number;
  readonly held_out: 'players' | 'rows';
  readonly attempts: number;
  readonly log_loss: number;
  readonly brier: number;
  readonly calibration_error: number;
  readonly fold_results: readonly FoldResult[];
}

export interface CalibrationBin {
  readonly lower: number;
  readonly upper: number;
  readonly attempts: number;
  readonly mean_predicted: number | null;
  readonly observed: number | null;
}

export interface ScaleEffect {
  /** Whether hit probability increases with the scale at every corner of the training range. */
  readonly increasing: boolean;
  /** Smallest derivative of the linear predictor in the scale term over the training range. */
  readonly smallest_slope: number | null;
  readonly at_latency_ms: number | null;
  readonly at_difficulty: number | string | null;
}

export interface LeastSquaresBaseline {
  readonly family: 'least_squares';
  readonly response: 'accuracy';
  readonly rows: number;
  readonly r_squared: number | null;
  readonly residual_sd: number | null;
  readonly coefficients: readonly { readonly name: string; readonly estimate: number; readonly std_error: number | null }[];
}

export interface TrainingRanges {
  readonly latency_ms: { readonly min: number; readonly max: number };
  readonly scale: { readonly min: number; readonly max: number };
  readonly difficulty: { readonly min: number; readonly max: number } | readonly string[];
  readonly rows: number;
  readonly attempts: number;
  readonly players?: number;
}

export type FitReportStatus = 'converged' | 'iteration_limit' | 'separation' | 'rank_deficient' | 'fitted';

export interface FitReport {
  readonly format: typeof FIT_REPORT_FORMAT;
  readonly status: FitReportStatus;
  /** Estimates exist, the fit converged and the scale effect is increasing. */
  readonly usable_for_compensation: boolean;
  readonly family: FitFamily;
  readonly link: LinkName | null;
  readonly likelihood: BinomialLikelihood | null;
  readonly terms: readonly TermName[];
  readonly difficulty: DifficultyCoding;
  readonly data: {
    readonly file: string;
    readonly shape: Trials['shape'];
    readonly rows: number;
    readonly fitted_rows: number;
    readonly attempts: number;
    readonly players: number | null;
  };
  readonly training: TrainingRanges;
  readonly cluster: { readonly by: 'player' | 'none'; readonly clusters: number | null };
  readonly covariance_kind: 'model' | 'cluster_robust_cr1';
  readonly coefficients: readonly CoefficientRow[];
  /** Model-based covariance, row-major rows; null without estimates. */
  readonly covariance: readonly (readonly number[])[] | null;
  readonly robust_covariance: readonly (readonly number[])[] | null;
  readonly statistics: FitStatistics | null;
  readonly likelihood_ratio_tests: readonly LikelihoodRatioTest[];
  readonly cross_validation: CrossValidation | null;
  readonly calibration: readonly CalibrationBin[];
  readonly scale_effect: ScaleEffect | null;
  readonly baseline: LeastSquaresBaseline | null;
  readonly aliased_terms: readonly TermName[];
  readonly warnings: readonly Issue[];
}

/** The fields of a report whose fit gave no estimates (a fresh object each time: its arrays are the caller's). */
export function noEstimates() {
  return {
    usable_for_compensation: false,
    covariance_kind: 'model' as const,
    coefficients: [],
    covariance: null,
    robust_covariance: null,
    statistics: null,
    likelihood_ratio_tests: [],
    cross_validation: null,
    calibration: [],
    scale_effect: null,
  };
}
