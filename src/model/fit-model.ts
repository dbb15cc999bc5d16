/**
 * `fitModel(trials, options)`: the whole fit a reviewer needs, from columnar
 * trials to one JSON-ready report.
 *
 * - The binomial GLM (`fitBinomial`) on collapsed rows (`collapse.ts`):
 *   per-attempt files with the Bernoulli likelihood, per-round files with the
 *   grouped one, prior weights from the `weight` column.
 * - Model-based standard errors, z, two-sided p and Wald 95% intervals; CR1
 *   cluster-robust errors by player (Liang & Zeger 1986; Cameron & Miller
 *   2015) on by default when there is a player column, with a warning below
 *   40 players (Cameron & Miller 2015, §VI: with few clusters CR1 errors are
 *   biased low).
 * - Likelihood-ratio test per factor (latency, scale, difficulty): every term
 *   that contains the factor is dropped, the model refitted on the same rows,
 *   and the deviance difference referred to chi-square with the difference in
 *   the number of columns as degrees of freedom (Wilks 1938; McCullagh &
 *   Nelder 1989, §4.4.3).
 * - Cross-validation that leaves whole players out (k folds, seeded): held-out
 *   log loss, Brier score and the mean absolute calibration error in ten
 *   equal-width bins of predicted probability (the "expected calibration
 *   error" of Naeini, Cooper & Hauskrecht 2015, AAAI). Without a player
 *   column (or with fewer than two players) collapsed rows are assigned to
 *   folds at random instead, and a warning says so.
 * - A calibration table of the fit itself, ten bins of predicted probability.
 * - Statuses and warnings as results: iteration limit, separation, rank
 *   deficiency naming the term, a scale effect that is not increasing over
 *   the training latency range.
 * - Ordinary least squares on per-row accuracy (hits / attempts) as the
 *   baseline family, with R²; attempt-weighted for per-attempt files, so it
 *   equals OLS on the 0/1 attempts (the linear probability model).
 *
 * Held-out probabilities are clipped to [1e-15, 1 - 1e-15] before the log
 * loss, so a held-out prediction of exactly 0 or 1 costs 34.5 nats, not
 * infinity (the clipping scikit-learn's `log_loss` applies).
 *
 * Cost: (1 + factors + folds) fits, each O(iterations * rows * k^2) on the
 * collapsed rows; the likelihood-ratio and fold refits start from the full
 * fit's estimates, so they take fewer iterations.
 */
import { type Issue, LagparityInputError, error, show, warning } from '../issues.js';
import type { Trials } from '../formats/trials-csv.js';
import { multiply } from '../numeric/design-matrix.js';
import { createRandomSource, shuffledIndices } from '../random.js';
import { chiSquareUpperTail, normalQuantile, twoSidedNormalPValue } from '../stats/distributions.js';
import { extent } from '../stats/extent.js';
import { predictorLine } from './predictor-line.js';
import { groupTrials } from './collapse.js';
import { type CollapsedTrials, type GroupedTrials, selectCollapsed } from './collapsed-trials.js';
import { type TermDesign, buildDesign, difficultyCodingOf } from './design.js';
import type { BinomialFit, BinomialFitEstimated, BinomialLikelihood } from './binomial-fit-types.js';
import { fitBinomial } from './fit-binomial.js';
import { fitLeastSquares } from './fit-least-squares.js';
import { LINK_NAMES, type LinkName, linkFor } from './links.js';
import { DEFAULT_TERMS, type DifficultyCoding, type TermName, TERM_NAMES, checkTerms, scaleForm, termFactors } from './terms.js';

export const FIT_REPORT_FORMAT = 'lagparity/fit-report@1' as const;

export type FitFamily = 'binomial' | 'least_squares';

/** Players below which CR1 errors are flagged as biased low (Cameron & Miller 2015, §VI.C). */
export const FEW_CLUSTERS = 40;

/** Held-out probabilities are clipped to [CLIP, 1 - CLIP] for the log loss. */
const CLIP = 1e-15;

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

interface Prepared {
  readonly source: GroupedTrials;
  readonly family: FitFamily;
  readonly link: LinkName;
  readonly terms: readonly TermName[];
  readonly coding: DifficultyCoding;
  readonly likelihood: BinomialLikelihood;
  readonly clustered: boolean;
  readonly data: CollapsedTrials;
  readonly maxIterations: number;
}

/**
 * Fit the hit-probability model and every diagnostic above.
 *
 * Throws `LagparityInputError` for invalid options (unknown link or term,
 * a reference level not in the data, folds that are not a whole number);
 * every property of the data (one player, one difficulty level, separation)
 * is a status or a warning in the report. Every number in the report is
 * finite or null.
 *
 * @example
 * const trials = unwrap(parseTrialsCsv(text));
 * const report = fitModel(trials, { link: 'logit', folds: 5, seed: 1 });
 * report.coefficients.map((row) => [row.name, row.estimate, row.robust?.std_error]);
 */
export function fitModel(trials: Trials | GroupedTrials, options: FitModelOptions = {}): FitReport {
  const prepared = prepare('groups' in trials ? trials : groupTrials(trials), options);
  const { data, terms, coding, source } = prepared;
  const progress = options.onProgress ?? (() => undefined);
  const warnings: Issue[] = [];
  const file = source.file;
  // Players are kept apart in the groups, so the groups hold every player who has a row.
  const players = data.player === null ? null : countDistinct(data.player);
  const clusterCount = prepared.clustered ? players : null;
  if (prepared.clustered && players !== null && players < FEW_CLUSTERS) {
    warnings.push(
      warning(
        'few_clusters',
        `${file}:player`,
        players < 2
          ? `\`cluster\` by player requires at least 2 players for robust errors, got ${players}; model-based errors are reported instead`
          : `\`cluster\` by player requires at least ${FEW_CLUSTERS} players for trustworthy robust errors, got ${players}; with few clusters CR1 errors are biased low (Cameron and Miller 2015)`,
      ),
    );
  }
  const training = trainingRanges(data, coding, players);
  const base = {
    format: FIT_REPORT_FORMAT,
    family: prepared.family,
    link: prepared.family === 'binomial' ? prepared.link : null,
    likelihood: prepared.family === 'binomial' ? prepared.likelihood : null,
    terms,
    difficulty: coding,
    data: { file, shape: source.shape, rows: data.sourceRows, fitted_rows: data.rows, attempts: training.attempts, players },
    training,
    cluster: { by: prepared.clustered ? ('player' as const) : ('none' as const), clusters: clusterCount },
  };
  const empty = { ...noEstimates(), baseline: null };

  const structural = structuralIssues(prepared);
  if (structural.issues.length > 0) {
    return { ...base, ...empty, status: 'rank_deficient', aliased_terms: structural.aliased, warnings: [...warnings, ...structural.issues] };
  }

  const design = buildDesign(data, terms, coding);
  const baseline = options.baseline === false ? null : leastSquaresBaseline(prepared, design);
  progress('fit');
  if (prepared.family === 'least_squares') {
    return { ...base, ...leastSquaresReport(prepared, design, warnings, progress, options), baseline };
  }
  const fit = runBinomial(prepared, data, design);
  if (fit.status === 'rank_deficient' || fit.status === 'separation') {
    const aliasedTerms = fit.status === 'rank_deficient' ? termsOfColumns(design, fit.aliased) : [];
    const issue =
      fit.status === 'rank_deficient'
        ? error(
            'rank_deficient',
            file,
            `the terms require linearly independent design columns, got ${fit.aliased.map((name) => `\`${name}\``).join(', ')} aliased with earlier columns (terms ${aliasedTerms.map((term) => `\`${term}\``).join(', ')})`,
          )
        : error(
            'separation',
            file,
            `a maximum-likelihood fit requires data without complete separation, got ${fit.divergingCoefficients.map((name) => `\`${name}\``).join(', ')} diverging with ${fit.boundaryRows} row(s) at fitted probability 0 or 1`,
          );
    return { ...base, ...empty, status: fit.status, aliased_terms: aliasedTerms, baseline, warnings: [...warnings, issue] };
  }
  if (fit.status === 'iteration_limit') {
    warnings.push(
      warning('iteration_limit', file, `the fit requires convergence within ${prepared.maxIterations} iterations, got none; estimates are the last iterate and are not written as a model`),
    );
  }
  for (const note of fit.warnings) {
    if (!note.startsWith('`maxIterations`')) warnings.push(warning('fit_note', file, note));
  }
  const robust = fit.robust;
  const coefficients = coefficientRows(design, fit);
  const scaleEffect = scaleEffectOf(prepared, design, fit.coefficients, training);
  if (!scaleEffect.increasing) {
    warnings.push(
      warning(
        'scale_not_increasing',
        file,
        scaleEffect.smallest_slope === null
          ? 'compensation requires a scale term, got terms without one; this model cannot be used for compensation'
          : `compensation requires hit probability to increase with the scale over the training range, but the fitted scale effect is ${scaleEffect.smallest_slope.toPrecision(3)} at ${show(scaleEffect.at_latency_ms)} ms (difficulty ${show(scaleEffect.at_difficulty)}); this model cannot be used for compensation`,
      ),
    );
  }

  const likelihoodRatioTests = options.likelihoodRatioTests === false ? [] : likelihoodRatios(prepared, fit, progress);
  const folds = options.folds ?? 5;
  // Each fold's fit starts from the full fit's estimates.
  const crossValidation = folds >= 2 ? crossValidate(prepared, folds, options.seed ?? 1, warnings, progress, fit.coefficients) : null;
  const calibration = calibrationTable(data, fit.fitted);

  return {
    ...base,
    status: fit.status,
    usable_for_compensation: fit.status === 'converged' && scaleEffect.increasing,
    covariance_kind: robust === null ? 'model' : 'cluster_robust_cr1',
    coefficients,
    covariance: square(fit.covariance, design.matrix.columns),
    robust_covariance: robust === null ? null : square(robust.covariance, design.matrix.columns),
    statistics: {
      iterations: fit.iterations,
      observations: fit.observationCount,
      deviance: fit.deviance,
      null_deviance: fit.nullDeviance,
      df_residual: fit.dfResidual,
      df_null: fit.dfNull,
      log_likelihood: fit.logLikelihood,
      aic: fit.aic,
      bic: fit.bic,
      mcfadden_r2: fit.mcfaddenR2,
      tjur_r2: fit.tjurR2,
      brier: fit.brierScore,
      r_squared: null,
      residual_sd: null,
    },
    likelihood_ratio_tests: likelihoodRatioTests,
    cross_validation: crossValidation,
    calibration,
    scale_effect: scaleEffect,
    baseline,
    aliased_terms: [],
    warnings,
  };
}

function prepare(trials: GroupedTrials, options: FitModelOptions): Prepared {
  const issues: Issue[] = [];
  const family = options.family ?? 'binomial';
  if (family !== 'binomial' && family !== 'least_squares') {
    issues.push(error('invalid_option', 'family', `\`family\` requires binomial or least_squares, got ${show(family)}`));
  }
  const link = options.link ?? 'logit';
  if (!LINK_NAMES.includes(link)) issues.push(error('invalid_option', 'link', `\`link\` requires one of ${LINK_NAMES.join(', ')}, got ${show(link)}`));
  const terms = options.terms ?? DEFAULT_TERMS;
  const unknown = terms.filter((term) => !(TERM_NAMES as readonly string[]).includes(term));
  if (unknown.length > 0) issues.push(error('unknown_term', 'terms', `\`terms\` requires names from ${TERM_NAMES.join(', ')}, got ${show(unknown.join(','))}`));
  const checked = checkTerms(terms, 'terms');
  if (!checked.ok) issues.push(...checked.issues);
  const cluster = options.cluster ?? (trials.players === null ? 'none' : 'player');
  if (cluster !== 'player' && cluster !== 'none') issues.push(error('invalid_option', 'cluster', `\`cluster\` requires player or none, got ${show(cluster)}`));
  if (cluster === 'player' && trials.players === null) {
    issues.push(error('invalid_option', 'cluster', `\`cluster\` player requires a \`player\` column in ${show(trials.file)}, got none`));
  }
  const folds = options.folds ?? 5;
  if (!Number.isInteger(folds) || folds < 0 || folds === 1) issues.push(error('invalid_option', 'folds', `\`folds\` requires 0 (none) or a whole number >= 2, got ${show(folds)}`));
  const seed = options.seed ?? 1;
  if (!Number.isSafeInteger(seed)) issues.push(error('invalid_option', 'seed', `\`seed\` requires a safe integer, got ${show(seed)}`));
  const maxIterations = options.maxIterations ?? 50;
  if (!Number.isInteger(maxIterations) || maxIterations < 1) {
    issues.push(error('invalid_option', 'maxIterations', `\`maxIterations\` requires an integer >= 1, got ${show(maxIterations)}`));
  }
  if (options.reference !== undefined) {
    if (trials.difficulty.kind !== 'levels') {
      issues.push(error('invalid_option', 'reference', `\`reference\` requires named difficulty levels, got numeric difficulty in ${show(trials.file)}`));
    } else if (!trials.difficulty.levels.includes(options.reference)) {
      issues.push(error('invalid_option', 'reference', `\`reference\` requires one of the levels ${trials.difficulty.levels.map((level) => show(level)).join(', ')}, got ${show(options.reference)}`));
    }
  }
  if (issues.length > 0) throw new LagparityInputError(issues);
  const clustered = cluster === 'player';
  // The groups keep players apart whenever there are players: clusters and player-wise folds both need it.
  const data = trials.groups;
  return {
    source: trials,
    family,
    link,
    terms,
    coding: difficultyCodingOf(trials, options.reference),
    likelihood: trials.shape === 'per_attempt' ? 'bernoulli' : 'grouped',
    clustered,
    data,
    maxIterations,
  };
}

/** Factors the terms need but the data cannot identify: fewer than two distinct values. */
function structuralIssues(prepared: Prepared): { issues: Issue[]; aliased: TermName[] } {
  const { source, data, terms } = prepared;
  const issues: Issue[] = [];
  const aliased: TermName[] = [];
  const needs = (factor: 'latency' | 'scale' | 'difficulty') => terms.filter((term) => term !== 'intercept' && termFactors(term)[factor]);
  const check = (factor: 'latency' | 'scale' | 'difficulty', column: string, distinct: number, example: string, what: string) => {
    const using = needs(factor);
    if (using.length === 0 || distinct >= 2) return;
    aliased.push(...using.filter((term) => !aliased.includes(term)));
    issues.push(
      error(
        'rank_deficient',
        `${source.file}:${column}`,
        `the term list requires at least two ${what} in the data for ${using.map((term) => `\`${term}\``).join(', ')}, got one (${example}); drop ${using.length > 1 ? 'those terms' : 'that term'} or add data`,
      ),
    );
  };
  // The groups hold the distinct values of the rows, in order of first appearance.
  check('latency', 'latency_ms', countDistinct(data.latency, 2), `${show(data.latency[0])} ms`, 'distinct latencies');
  check('scale', 'scale', countDistinct(data.scale, 2), show(data.scale[0]), 'distinct scales');
  const difficulty = source.difficulty;
  const difficultyCount = difficulty.kind === 'numeric' ? countDistinct(data.difficulty, 2) : difficulty.levels.length;
  const difficultyExample = difficulty.kind === 'numeric' ? show(data.difficulty[0]) : show(difficulty.levels[0]);
  check('difficulty', 'difficulty', difficultyCount, difficultyExample, difficulty.kind === 'numeric' ? 'distinct difficulties' : 'difficulty levels');
  return { issues, aliased };
}

function runBinomial(
  prepared: Prepared,
  data: CollapsedTrials,
  design: TermDesign,
  clustered = prepared.clustered,
  start: Float64Array | null = null,
): BinomialFit {
  const clusters = clustered && data.player !== null ? data.player : undefined;
  return fitBinomial(
    {
      design: design.matrix,
      successes: data.successes,
      trials: data.attempts,
      priorWeights: data.weight,
      ...(clusters === undefined ? {} : { clusters }),
    },
    { link: prepared.link, likelihood: prepared.likelihood, maxIterations: prepared.maxIterations, ...(start === null ? {} : { start }) },
  );
}

function termsOfColumns(design: TermDesign, names: readonly string[]): TermName[] {
  const terms: TermName[] = [];
  for (const name of names) {
    const column = design.columns.find((entry) => entry.name === name);
    if (column !== undefined && !terms.includes(column.term)) terms.push(column.term);
  }
  return terms;
}

function interval(estimate: number, standardError: number, critical: number): IntervalEstimate {
  const z = estimate / standardError;
  return {
    std_error: standardError,
    z,
    p_value: twoSidedNormalPValue(z),
    ci_lower: estimate - critical * standardError,
    ci_upper: estimate + critical * standardError,
  };
}

function coefficientRows(design: TermDesign, fit: BinomialFitEstimated): CoefficientRow[] {
  const critical = normalQuantile(0.975);
  return design.columns.map((column, j) => {
    const estimate = fit.coefficients[j] as number;
    return {
      name: column.name,
      term: column.term,
      estimate,
      ...interval(estimate, fit.standardErrors[j] as number, critical),
      robust: fit.robust === null ? null : interval(estimate, fit.robust.standardErrors[j] as number, critical),
    };
  });
}

function square(matrix: Float64Array, size: number): number[][] {
  return Array.from({ length: size }, (_, a) => Array.from({ length: size }, (_, b) => matrix[a * size + b] as number));
}

/** Distinct values, counting no further than `stopAt`. */
function countDistinct(values: ArrayLike<number>, stopAt = Infinity): number {
  const seen = new Set<number>();
  for (let i = 0; i < values.length; i += 1) {
    seen.add(values[i] as number);
    if (seen.size >= stopAt) return seen.size;
  }
  return seen.size;
}

function trainingRanges(data: CollapsedTrials, coding: DifficultyCoding, players: number | null): TrainingRanges {
  let attempts = 0;
  for (let i = 0; i < data.rows; i += 1) attempts += data.attempts[i] as number;
  return {
    latency_ms: extent(data.latency),
    scale: extent(data.scale),
    difficulty: coding.kind === 'levels' ? [...coding.levels] : extent(data.difficulty),
    rows: data.sourceRows,
    attempts,
    ...(players === null ? {} : { players }),
  };
}

/** The slope of the linear predictor in the scale term at the corners of the training range. */
function scaleEffectOf(prepared: Prepared, design: TermDesign, coefficients: ArrayLike<number>, training: TrainingRanges): ScaleEffect {
  if (scaleForm(prepared.terms) === 'none') return { increasing: false, smallest_slope: null, at_latency_ms: null, at_difficulty: null };
  const difficulties: (number | string)[] = Array.isArray(training.difficulty)
    ? [...(training.difficulty as readonly string[])]
    : [(training.difficulty as { min: number }).min, (training.difficulty as { max: number }).max];
  let smallest = Infinity;
  let atLatency = training.latency_ms.min;
  let atDifficulty: number | string = difficulties[0] ?? 0;
  for (const difficulty of difficulties) {
    const line = predictorLine(design.columns, coefficients, prepared.coding, difficulty);
    if (!line.ok) continue;
    for (const latency of [training.latency_ms.min, training.latency_ms.max]) {
      const slope = line.value.scaleSlope + line.value.scaleSlopePerMs * latency;
      if (slope < smallest) {
        smallest = slope;
        atLatency = latency;
        atDifficulty = difficulty;
      }
    }
  }
  return { increasing: smallest > 0, smallest_slope: smallest, at_latency_ms: atLatency, at_difficulty: atDifficulty };
}

const FACTORS = ['latency', 'scale', 'difficulty'] as const;

function likelihoodRatios(prepared: Prepared, full: BinomialFitEstimated, progress: (stage: string) => void): LikelihoodRatioTest[] {
  const tests: LikelihoodRatioTest[] = [];
  for (const factor of FACTORS) {
    const dropped = prepared.terms.filter((term) => term !== 'intercept' && termFactors(term)[factor]);
    if (dropped.length === 0) continue;
    const kept = prepared.terms.filter((term) => !dropped.includes(term));
    if (kept.length === 0) {
      tests.push({ factor, status: 'not_tested', dropped_terms: dropped, reason: 'no term is left once the factor is dropped' });
      continue;
    }
    progress(`likelihood ratio: ${factor}`);
    const reducedDesign = buildDesign(prepared.data, kept, prepared.coding);
    // Started from the full fit's estimates of the columns it keeps (a closer start than R's, the same optimum).
    const start = Float64Array.from(reducedDesign.matrix.names, (name) => full.coefficients[full.names.indexOf(name)] ?? 0);
    const reduced = runBinomial(prepared, prepared.data, reducedDesign, false, start);
    if (reduced.status !== 'converged') {
      tests.push({ factor, status: 'not_tested', dropped_terms: dropped, reason: `the reduced model did not converge (${reduced.status})` });
      continue;
    }
    const df = full.coefficients.length - reduced.coefficients.length;
    const statistic = Math.max(0, reduced.deviance - full.deviance);
    tests.push({ factor, status: 'tested', dropped_terms: dropped, df, statistic, p_value: chiSquareUpperTail(statistic, df) });
  }
  return tests;
}

/**
 * Fold of each collapsed row: whole players in folds when there are at least
 * two players, else rows at random. Players (or rows) are shuffled by
 * Fisher-Yates with the seeded source and dealt round-robin into the folds.
 */
export function assignFolds(
  data: CollapsedTrials,
  folds: number,
  seed: number,
): { readonly fold: Int32Array; readonly folds: number; readonly heldOut: 'players' | 'rows' } {
  const random = createRandomSource(seed);
  const fold = new Int32Array(data.rows);
  const players = data.player === null ? 0 : countAll(data.player);
  if (data.player !== null && players >= 2) {
    const count = Math.min(folds, players);
    const order = shuffledIndices(players, random);
    const foldOfPlayer = new Int32Array(players);
    order.forEach((player, position) => (foldOfPlayer[player] = position % count));
    for (let i = 0; i < data.rows; i += 1) fold[i] = foldOfPlayer[data.player[i] as number] as number;
    return { fold, folds: count, heldOut: 'players' };
  }
  const count = Math.min(folds, data.rows);
  const order = shuffledIndices(data.rows, random);
  order.forEach((row, position) => (fold[row] = position % count));
  return { fold, folds: count, heldOut: 'rows' };
}

function countAll(codes: Int32Array): number {
  let largest = -1;
  for (let i = 0; i < codes.length; i += 1) largest = Math.max(largest, codes[i] as number);
  return largest + 1;
}


/** Ten equal-width bins of predicted probability: attempts, predicted and observed hits (prior-weighted). */
class CalibrationBins {
  readonly binWeight = new Float64Array(10);
  readonly binPredicted = new Float64Array(10);
  readonly binObserved = new Float64Array(10);

  addToBin(probability: number, weight: number, observed: number): void {
    const bin = Math.min(9, Math.max(0, Math.floor(probability * 10)));
    this.binWeight[bin] = (this.binWeight[bin] as number) + weight;
    this.binPredicted[bin] = (this.binPredicted[bin] as number) + weight * probability;
    this.binObserved[bin] = (this.binObserved[bin] as number) + observed;
  }
}

/** Held-out predictions accumulated over folds. */
class HeldOut extends CalibrationBins {
  logLoss = 0;
  brier = 0;
  weight = 0;

  add(probability: number, successes: number, attempts: number, prior: number): { logLoss: number; brier: number; weight: number } {
    const clipped = Math.min(1 - CLIP, Math.max(CLIP, probability));
    const failures = attempts - successes;
    const weight = prior * attempts;
    const logLoss = -prior * (successes * Math.log(clipped) + failures * Math.log1p(-clipped));
    const brier = prior * (successes * (1 - probability) ** 2 + failures * probability ** 2);
    this.logLoss += logLoss;
    this.brier += brier;
    this.weight += weight;
    this.addToBin(probability, weight, prior * successes);
    return { logLoss, brier, weight };
  }

  /** Attempt-weighted mean over bins of |observed - mean predicted| (Naeini et al. 2015). */
  calibrationError(): number {
    let sum = 0;
    for (let b = 0; b < 10; b += 1) {
      const weight = this.binWeight[b] as number;
      if (weight > 0) sum += Math.abs((this.binObserved[b] as number) - (this.binPredicted[b] as number));
    }
    return this.weight > 0 ? sum / this.weight : 0;
  }
}

function predictProbabilities(prepared: Prepared, data: CollapsedTrials, coefficients: ArrayLike<number>): Float64Array {
  const design = buildDesign(data, prepared.terms, prepared.coding);
  const linear = multiply(design.matrix, coefficients);
  if (prepared.family === 'least_squares') return linear;
  const link = linkFor(prepared.link);
  return linear.map((value) => link.inverse(value));
}

function fitCoefficients(prepared: Prepared, data: CollapsedTrials, start: Float64Array | null): { status: string; coefficients: Float64Array | null } {
  const design = buildDesign(data, prepared.terms, prepared.coding);
  if (prepared.family === 'least_squares') {
    const fit = fitLeastSquares({ design: design.matrix, response: accuracy(data), weights: leastSquaresWeights(prepared, data) });
    return { status: fit.status, coefficients: fit.status === 'fitted' ? fit.coefficients : null };
  }
  const fit = runBinomial(prepared, data, design, false, start);
  return { status: fit.status, coefficients: fit.status === 'converged' ? fit.coefficients : null };
}

function crossValidate(
  prepared: Prepared,
  requestedFolds: number,
  seed: number,
  warnings: Issue[],
  progress: (stage: string) => void,
  start: Float64Array | null = null,
): CrossValidation | null {
  const { data } = prepared;
  const assignment = assignFolds(data, requestedFolds, seed);
  const file = prepared.source.file;
  if (assignment.heldOut === 'rows') {
    warnings.push(
      warning('folds_by_row', `${file}:player`, 'cross-validation by player requires a `player` column with at least 2 players; folds hold out collapsed rows at random instead, so held-out scores are optimistic'),
    );
  }
  const total = new HeldOut();
  const foldResults: FoldResult[] = [];
  const keep = new Uint8Array(data.rows);
  for (let fold = 0; fold < assignment.folds; fold += 1) {
    progress(`fold ${fold + 1} of ${assignment.folds}`);
    for (let i = 0; i < data.rows; i += 1) keep[i] = assignment.fold[i] === fold ? 0 : 1;
    const training = selectCollapsed(data, keep);
    for (let i = 0; i < data.rows; i += 1) keep[i] = 1 - (keep[i] as number);
    const heldOut = selectCollapsed(data, keep);
    const players = heldOut.player === null || assignment.heldOut === 'rows' ? null : new Set(heldOut.player).size;
    let heldAttempts = 0;
    for (let i = 0; i < heldOut.rows; i += 1) heldAttempts += heldOut.attempts[i] as number;
    const fitted = fitCoefficients(prepared, training, start);
    if (fitted.coefficients === null) {
      foldResults.push({ fold: fold + 1, status: fitted.status, players, held_out_attempts: heldAttempts, log_loss: null, brier: null });
      continue;
    }
    const probabilities = predictProbabilities(prepared, heldOut, fitted.coefficients);
    let logLoss = 0;
    let brier = 0;
    let weight = 0;
    for (let i = 0; i < heldOut.rows; i += 1) {
      const added = total.add(probabilities[i] as number, heldOut.successes[i] as number, heldOut.attempts[i] as number, heldOut.weight[i] as number);
      logLoss += added.logLoss;
      brier += added.brier;
      weight += added.weight;
    }
    foldResults.push({
      fold: fold + 1,
      status: fitted.status,
      players,
      held_out_attempts: heldAttempts,
      log_loss: weight > 0 ? logLoss / weight : null,
      brier: weight > 0 ? brier / weight : null,
    });
  }
  const failed = foldResults.filter((result) => result.log_loss === null);
  if (failed.length > 0) {
    warnings.push(
      warning('fold_not_fitted', file, `every cross-validation fold requires a converged fit, got ${failed.map((result) => `fold ${result.fold} (${result.status})`).join(', ')}; held-out scores leave those folds out`),
    );
  }
  if (!(total.weight > 0)) return null;
  return {
    folds: assignment.folds,
    seed,
    held_out: assignment.heldOut,
    attempts: total.weight,
    log_loss: total.logLoss / total.weight,
    brier: total.brier / total.weight,
    calibration_error: total.calibrationError(),
    fold_results: foldResults,
  };
}

/** Predicted against observed hit rate in ten equal-width bins of predicted probability (prior-weighted attempts). */
export function calibrationTable(data: CollapsedTrials, probabilities: ArrayLike<number>): CalibrationBin[] {
  const bins = new CalibrationBins();
  for (let i = 0; i < data.rows; i += 1) {
    const prior = data.weight[i] as number;
    bins.addToBin(probabilities[i] as number, prior * (data.attempts[i] as number), prior * (data.successes[i] as number));
  }
  const { binWeight, binPredicted, binObserved } = bins;
  return Array.from({ length: 10 }, (_, b) => {
    const weight = binWeight[b] as number;
    return {
      lower: b / 10,
      upper: (b + 1) / 10,
      attempts: weight,
      mean_predicted: weight > 0 ? (binPredicted[b] as number) / weight : null,
      observed: weight > 0 ? (binObserved[b] as number) / weight : null,
    };
  });
}

function accuracy(data: CollapsedTrials): Float64Array {
  return data.successes.map((value, i) => value / (data.attempts[i] as number));
}

/** Per-round files: one row per round (prior weights only); per-attempt files: attempt-weighted, i.e. OLS on the 0/1 attempts. */
/** The fields of a report whose fit gave no estimates (a fresh object each time: its arrays are the caller's). */
function noEstimates() {
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

function leastSquaresWeights(prepared: Prepared, data: CollapsedTrials): Float64Array {
  return prepared.likelihood === 'bernoulli' ? data.weight.map((value, i) => value * (data.attempts[i] as number)) : data.weight;
}

function leastSquaresBaseline(prepared: Prepared, design: TermDesign): LeastSquaresBaseline | null {
  const fit = fitLeastSquares({ design: design.matrix, response: accuracy(prepared.data), weights: leastSquaresWeights(prepared, prepared.data) });
  if (fit.status !== 'fitted') return null;
  return {
    family: 'least_squares',
    response: 'accuracy',
    rows: fit.observations,
    r_squared: fit.rSquared,
    residual_sd: fit.residualStandardDeviation,
    coefficients: design.columns.map((column, j) => ({
      name: column.name,
      estimate: fit.coefficients[j] as number,
      std_error: fit.standardErrors === null ? null : (fit.standardErrors[j] as number),
    })),
  };
}

function leastSquaresReport(
  prepared: Prepared,
  design: TermDesign,
  warnings: Issue[],
  progress: (stage: string) => void,
  options: FitModelOptions,
): Omit<FitReport, 'format' | 'family' | 'link' | 'likelihood' | 'terms' | 'difficulty' | 'data' | 'training' | 'cluster' | 'baseline'> {
  const { data } = prepared;
  const clusters = prepared.clustered && data.player !== null ? data.player : undefined;
  const fit = fitLeastSquares({
    design: design.matrix,
    response: accuracy(data),
    weights: leastSquaresWeights(prepared, data),
    ...(clusters === undefined ? {} : { clusters }),
  });
  if (fit.status !== 'fitted' || fit.standardErrors === null || fit.covariance === null) {
    const aliased = fit.status === 'fitted' ? [] : termsOfColumns(design, fit.aliased);
    return {
      ...noEstimates(),
      status: 'rank_deficient',
      aliased_terms: aliased,
      warnings: [
        ...warnings,
        fit.status === 'fitted'
          ? error('no_residual_df', prepared.source.file, `least squares requires more rows than coefficients, got ${fit.observations} rows for ${design.matrix.columns} coefficients`)
          : error('rank_deficient', prepared.source.file, `the terms require linearly independent design columns, got ${fit.aliased.map((name) => `\`${name}\``).join(', ')} aliased with earlier columns`),
      ],
    };
  }
  warnings.push(warning('normal_approximation', prepared.source.file, 'least-squares p-values and intervals use the normal approximation (many rows), and per-row accuracy is not normal: this family is a baseline, not a model for compensation'));
  const critical = normalQuantile(0.975);
  const size = design.matrix.columns;
  const standardErrors = fit.standardErrors;
  const fittedAll = multiply(design.matrix, fit.coefficients);
  const coefficients: CoefficientRow[] = design.columns.map((column, j) => {
    const estimate = fit.coefficients[j] as number;
    const standardError = standardErrors[j] as number;
    const robustError = fit.robust?.standardErrors[j];
    return {
      name: column.name,
      term: column.term,
      estimate,
      ...interval(estimate, standardError, critical),
      robust: robustError === undefined ? null : interval(estimate, robustError, critical),
    };
  });
  const folds = options.folds ?? 5;
  const crossValidation = folds >= 2 ? crossValidate(prepared, folds, options.seed ?? 1, warnings, progress) : null;
  let brier = 0;
  let weight = 0;
  for (let i = 0; i < data.rows; i += 1) {
    const p = fittedAll[i] as number;
    const s = data.successes[i] as number;
    const k = data.attempts[i] as number;
    const w = data.weight[i] as number;
    brier += w * (s * (1 - p) ** 2 + (k - s) * p * p);
    weight += w * k;
  }
  return {
    status: 'fitted',
    usable_for_compensation: false,
    covariance_kind: fit.robust === null ? 'model' : 'cluster_robust_cr1',
    coefficients,
    covariance: square(fit.covariance, size),
    robust_covariance: fit.robust === null ? null : square(fit.robust.covariance, size),
    statistics: {
      iterations: 1,
      observations: fit.observations,
      deviance: null,
      null_deviance: null,
      df_residual: fit.dfResidual,
      df_null: null,
      log_likelihood: null,
      aic: null,
      bic: null,
      mcfadden_r2: null,
      tjur_r2: null,
      brier: weight > 0 ? brier / weight : 0,
      r_squared: fit.rSquared,
      residual_sd: fit.residualStandardDeviation,
    },
    likelihood_ratio_tests: [],
    cross_validation: crossValidation,
    calibration: calibrationTable(data, fittedAll),
    scale_effect: null,
    aliased_terms: [],
    warnings,
  };
}
