/**
 * Ordinary least squares on per-row accuracy (hits / attempts) as the
 * baseline family, with R²; attempt-weighted for per-attempt files, so it
 * equals OLS on the 0/1 attempts (the linear probability model): the
 * baseline beside a binomial fit, and the whole report of `--family
 * least_squares` (normal-approximation p-values and intervals; a baseline,
 * not a model for compensation).
 */
import { type Issue, error, warning } from '../issues.js';
import { multiply } from '../numeric/design-matrix.js';
import { normalQuantile } from '../stats/distributions.js';
import { interval, square, termsOfColumns } from './coefficient-rows.js';
import { calibrationTable, crossValidate } from './cross-validation.js';
import { mergedOverPlayers } from './collapse.js';
import { type TermDesign, buildDesign } from './design.js';
import { fitLeastSquares } from './fit-least-squares.js';
import { type CoefficientRow, type FitModelOptions, type FitReport, type LeastSquaresBaseline, noEstimates } from './fit-report-types.js';
import { type Prepared, accuracy, leastSquaresGroups, leastSquaresWeights } from './prepared-fit.js';

/**
 * The baseline beside a binomial fit (no clusters). A per-attempt file's rows are merged over the
 * players first (`collapseOver`): least squares on the attempts does not depend on how they are
 * grouped, and the merged rows are fewer (on the 1M-row bench file about 297,000 instead of a
 * million). A per-round file's rounds are its observations and stay as they are (on the full
 * design, `fullDesign`, which only that case builds).
 */
export function leastSquaresBaseline(prepared: Prepared, fullDesign: () => TermDesign): LeastSquaresBaseline | null {
  const perAttempt = prepared.likelihood === 'bernoulli';
  const rows = perAttempt ? mergedOverPlayers(prepared.data) : prepared.data;
  const design = perAttempt ? buildDesign(rows, prepared.terms, prepared.coding) : fullDesign();
  const matrix = design.matrix;
  const groups = leastSquaresGroups(prepared, rows);
  const fit = fitLeastSquares({ design: matrix, response: accuracy(rows), weights: leastSquaresWeights(prepared, rows), ...(groups === undefined ? {} : { groups }) });
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

export function leastSquaresReport(
  prepared: Prepared,
  design: TermDesign,
  warnings: Issue[],
  progress: (stage: string) => void,
  options: FitModelOptions,
): Omit<FitReport, 'format' | 'family' | 'link' | 'likelihood' | 'terms' | 'difficulty' | 'data' | 'training' | 'cluster' | 'baseline'> {
  const { data } = prepared;
  const clusters = prepared.clustered && data.player !== null ? data.player : undefined;
  const groups = leastSquaresGroups(prepared, data);
  const fit = fitLeastSquares({
    design: design.matrix,
    response: accuracy(data),
    weights: leastSquaresWeights(prepared, data),
    ...(clusters === undefined ? {} : { clusters }),
    ...(groups === undefined ? {} : { groups }),
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
