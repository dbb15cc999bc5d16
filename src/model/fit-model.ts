/**
 * `fitModel(trials, options)`: the whole fit a reviewer needs, from columnar
 * trials to one JSON-ready report.
 *
 * - The binomial GLM (`fitBinomial`) on collapsed rows (`collapse.ts`):
 *   per-attempt files with the Bernoulli likelihood, per-round files with the
 *   grouped one, prior weights from the `weight` column; options checked and
 *   rows prepared in `prepared-fit.ts`.
 * - Model-based standard errors, z, two-sided p and Wald 95% intervals; CR1
 *   cluster-robust errors by player (Liang & Zeger 1986; Cameron & Miller
 *   2015) on by default when there is a player column, with a warning below
 *   40 players (Cameron & Miller 2015, §VI: with few clusters CR1 errors are
 *   biased low). The coefficient table: `coefficient-rows.ts`.
 * - Likelihood-ratio test per factor (latency, scale, difficulty): every term
 *   that contains the factor is dropped, the model refitted on the same rows,
 *   and the deviance difference referred to chi-square with the difference in
 *   the number of columns as degrees of freedom (Wilks 1938; McCullagh &
 *   Nelder 1989, §4.4.3): `likelihood-ratio-tests.ts`.
 * - Cross-validation that leaves whole players out (k folds, seeded): held-out
 *   log loss, Brier score and the mean absolute calibration error in ten
 *   equal-width bins of predicted probability (the "expected calibration
 *   error" of Naeini, Cooper & Hauskrecht 2015, AAAI). Without a player
 *   column (or with fewer than two players) collapsed rows are assigned to
 *   folds at random instead, and a warning says so (`cross-validation.ts`).
 * - A calibration table of the fit itself, ten bins of predicted probability
 *   (`cross-validation.ts`).
 * - Statuses and warnings as results: iteration limit, separation, rank
 *   deficiency naming the term, a scale effect that is not increasing over
 *   the training latency range (`scale-effect.ts`).
 * - Ordinary least squares on per-row accuracy (hits / attempts) as the
 *   baseline family, with R²; attempt-weighted for per-attempt files, so it
 *   equals OLS on the 0/1 attempts (the linear probability model):
 *   `least-squares-baseline.ts`.
 * - The report's types: `fit-report-types.ts`.
 *
 * Held-out probabilities are clipped to [1e-15, 1 - 1e-15] before the log
 * loss, so a held-out prediction of exactly 0 or 1 costs 34.5 nats, not
 * infinity (the clipping scikit-learn's `log_loss` applies).
 *
 * Cost: (1 + factors + folds) fits, each O(iterations * rows * k^2) on the
 * collapsed rows; the refits that do not cluster (the reduced models, the
 * folds, a per-attempt file's baseline) run on rows merged over the players,
 * the folds from one-step estimates computed from the full fit
 * (`refit-starts.ts`), and they are jobs (`refit-jobs.ts`) that
 * `fit-model-threads.ts` can share with worker threads.
 */
import { type Issue, error, show, warning } from '../issues.js';
import type { Trials } from '../formats/trials-types.js';
import { groupTrials } from './collapse.js';
import type { GroupedTrials } from './collapsed-trials.js';
import { coefficientRows, square, termsOfColumns } from './coefficient-rows.js';
import { assembleCrossValidation, assignFolds, foldStartsOf } from './cross-validation.js';
import { type TermDesign, buildDesign } from './design.js';
import { designColumns } from './terms.js';
import { FIT_REPORT_FORMAT, type FitModelOptions, type FitReport, noEstimates } from './fit-report-types.js';
import { leastSquaresBaseline, leastSquaresReport } from './least-squares-baseline.js';
import { bernoulliDeviance, likelihoodRatioTest, testedFactors } from './likelihood-ratio-tests.js';
import { fitFullModel } from './merged-fit.js';
import { abandonEstimates, publishFoldStarts, sharedEstimates } from './shared-estimates.js';
import { countCodes, prepare, structuralIssues } from './prepared-fit.js';
import { type RefitContext, type RefitJob, type RefitResult, refitLabel, runRefit } from './refit-jobs.js';
import { scaleEffectOf, trainingRanges } from './scale-effect.js';

/** Players below which CR1 errors are flagged as biased low (Cameron & Miller 2015, §VI.C). */
export const FEW_CLUSTERS = 40;

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
  const stage = beginFitModel(trials, options);
  if (stage.done) return stage.report;
  return stage.fitFull() ?? stage.finish(stage.jobs.map(stage.run));
}

/** A fit's report up to its full fit and refits: the report itself when there is nothing to fit. */
export type FitStage =
  | { readonly done: true; readonly report: FitReport }
  | {
      readonly done: false;
      /** What the refits share (plain data, and the estimates they wait for). */
      readonly context: RefitContext;
      /** The refits: the baseline (which needs no estimate) first. */
      readonly jobs: readonly RefitJob[];
      /**
       * The full fit, its estimates and the folds' starts published to the refits as each is
       * ready; the report itself when the fit ends it (separation, rank deficiency: no refits
       * then, and jobs still waiting return at once), else null.
       */
      fitFull(): FitReport | null;
      /** Run one refit on this thread (on the full design it already has), saying so to `onProgress`. */
      run(job: RefitJob): RefitResult;
      /** The report, from the jobs' results (`results[i]` of `jobs[i]`), once `fitFull` gave null. */
      finish(results: readonly RefitResult[]): FitReport;
    };

/**
 * Everything of {@link fitModel} but the refits (the least-squares baseline,
 * the likelihood-ratio refits, the folds' fits), which it returns as jobs
 * with a function that finishes the report from their results: a caller can
 * run them anywhere (`fit-model-threads.ts` runs them on worker threads).
 */
export function beginFitModel(trials: Trials | GroupedTrials, options: FitModelOptions = {}, { shared = false }: { readonly shared?: boolean } = {}): FitStage {
  const prepared = prepare('groups' in trials ? trials : groupTrials(trials), options);
  const { data, terms, coding, source } = prepared;
  const progress = options.onProgress ?? (() => undefined);
  const warnings: Issue[] = [];
  const file = source.file;
  // Players are kept apart in the groups, so the groups hold every player who has a row.
  const players = data.player === null ? null : countCodes(data.player);
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
    return { done: true, report: { ...base, ...empty, status: 'rank_deficient', aliased_terms: structural.aliased, warnings: [...warnings, ...structural.issues] } };
  }

  // The players' rows' design matrix, built when something needs it: the one-fit command's merged
  // fit does not (merged-fit.ts), the refits do.
  let built: TermDesign | null = null;
  const fullDesign = (): TermDesign => (built ??= buildDesign(data, terms, coding));
  const shape = { columns: designColumns(terms, coding) };
  const baselineNow = () => (options.baseline === false ? null : leastSquaresBaseline(prepared, fullDesign));
  if (prepared.family === 'least_squares') {
    const baseline = baselineNow();
    progress('fit');
    return { done: true, report: { ...base, ...leastSquaresReport(prepared, fullDesign(), warnings, progress, options), baseline } };
  }
  const folds = options.folds ?? 5;
  const seed = options.seed ?? 1;
  const assignment = folds >= 2 ? assignFolds(data, folds, seed) : null;
  const estimates = sharedEstimates(shape.columns.length, assignment?.folds ?? 0, shared);
  const context: RefitContext = { prepared, assignment, estimates };
  const jobs: RefitJob[] = [
    ...(options.baseline === false ? [] : [{ kind: 'baseline' as const }]),
    ...(options.likelihoodRatioTests === false ? [] : testedFactors(prepared).map((factor) => ({ kind: 'reduced' as const, factor }))),
    ...Array.from({ length: assignment?.folds ?? 0 }, (_, fold) => ({ kind: 'fold' as const, fold })),
  ];
  const run = (job: RefitJob): RefitResult => {
    progress(refitLabel(job, assignment?.folds ?? 0));
    return runRefit(context, job, fullDesign);
  };
  let finish: ((results: readonly RefitResult[]) => FitReport) | null = null;
  const fitFull = (): FitReport | null => {
    let full: ReturnType<typeof fullReport>;
    try {
      full = fullReport();
    } catch (cause) {
      // Jobs waiting on another thread return at once; the error goes on to the caller.
      abandonEstimates(estimates);
      throw cause;
    }
    if (full.done) {
      abandonEstimates(estimates);
      return full.report;
    }
    finish = full.finish;
    return null;
  };
  const fullReport = (): { readonly done: true; readonly report: FitReport } | { readonly done: false; readonly finish: (results: readonly RefitResult[]) => FitReport } => {
    progress('fit');
    const fit = fitFullModel(prepared, fullDesign, { folds: assignment !== null });
    if (fit.status === 'rank_deficient' || fit.status === 'separation') {
      const aliasedTerms = fit.status === 'rank_deficient' ? termsOfColumns(shape, fit.aliased) : [];
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
      return { done: true, report: { ...base, ...empty, status: fit.status, aliased_terms: aliasedTerms, baseline: baselineNow(), warnings: [...warnings, issue] } };
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
    const coefficients = coefficientRows(shape, fit);
    const scaleEffect = scaleEffectOf(prepared, shape, fit.coefficients, training);
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

    // The refits may already be running (fit-model-threads.ts): the folds wait for their starts
    // (one Newton step from the full estimates, see refit-starts.ts).
    publishFoldStarts(estimates, fit.coefficients, assignment === null ? [] : foldStartsOf(prepared, assignment, fit.coefficients));
    const full = { columns: shape.columns.length, bernoulliDeviance: bernoulliDeviance(prepared, fit.deviance) };
    const calibration = fit.calibration;
    const finishReport = (results: readonly RefitResult[]): FitReport => {
      const likelihoodRatioTests = results.flatMap((result) => (result.kind === 'reduced' ? [likelihoodRatioTest(result.reduced, full)] : []));
      const baseline = results.find((result) => result.kind === 'baseline')?.baseline ?? null;
      const foldFits = results.flatMap((result) => (result.kind === 'fold' ? [result.fit] : []));
      const crossValidation = assignment === null ? null : assembleCrossValidation(prepared, assignment, seed, foldFits, warnings);
      return {
        ...base,
        status: fit.status,
        usable_for_compensation: fit.status === 'converged' && scaleEffect.increasing,
        covariance_kind: robust === null ? 'model' : 'cluster_robust_cr1',
        coefficients,
        covariance: square(fit.covariance, shape.columns.length),
        robust_covariance: robust === null ? null : square(robust.covariance, shape.columns.length),
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
    };
    return { done: false, finish: finishReport };
  };
  return {
    done: false,
    context,
    jobs,
    fitFull,
    run,
    finish: (results) => {
      if (finish === null) throw new Error('finish requires fitFull to have returned null');
      return finish(results);
    },
  };
}
