/**
 * The report's tables of the fitted model, as a statistician reads them: the
 * coefficients with the model-based and the cluster-robust standard errors
 * side by side (z and p from the errors the model file keeps, labelled, and
 * p-values floored as the command line floors them), the fit statistics, the
 * likelihood-ratio tests, cross-validation and calibration; the rest of the
 * model file's `fit` block (per-fold results, the model covariance, the
 * least-squares baseline) folded away.
 */
import type { CompiledModel } from '../model/compile.js';
import { twoSidedNormalPValue } from '../stats/distributions.js';
import { pValueText } from '../stats/p-value-text.js';
import { escapeHtml, formatGeneral, formatNumber, htmlTable } from './html.js';

type FitBlock = Record<string, unknown>;

/** The fields of the fit block `lagparity fit` writes, which the tables above show. */
const KNOWN_FIT_FIELDS = new Set(['status', 'usable_for_compensation', 'likelihood', 'cluster', 'model_covariance', 'standard_errors', 'statistics', 'likelihood_ratio_tests', 'cross_validation', 'calibration', 'scale_effect', 'baseline_least_squares', 'warnings']);

const record = (value: unknown): FitBlock | null => (value !== null && typeof value === 'object' && !Array.isArray(value) ? (value as FitBlock) : null);
const list = (value: unknown): unknown[] => (Array.isArray(value) ? value : []);
const num = (value: unknown): number | null => (typeof value === 'number' && Number.isFinite(value) ? value : null);
const cell = (value: unknown, digits = 4): string => {
  const number = num(value);
  return number === null ? '–' : formatGeneral(Number(number.toPrecision(digits)));
};

/** Whether the model file keeps cluster-robust errors (the default of `lagparity fit`). */
function keepsRobust(model: CompiledModel): boolean {
  return model.source.coefficients.covariance_kind === 'cluster_robust_cr1';
}

export function coefficientTable(model: CompiledModel): string {
  const size = model.coefficients.length;
  const standardErrors = record(record(model.source.fit)?.standard_errors);
  const robust = keepsRobust(model);
  const rows = model.columns.map((column, index) => {
    const estimate = model.coefficients[index] as number;
    const kept = Math.sqrt(Math.max(model.covariance[index * size + index] as number, 0));
    const pair = record(standardErrors?.[column.name]);
    const modelError = robust ? num(pair?.model) : kept;
    const robustError = robust ? kept : null;
    const z = kept > 0 ? estimate / kept : null;
    return [column.name, formatGeneral(estimate), modelError === null ? '–' : formatGeneral(modelError), robustError === null ? '–' : formatGeneral(robustError), z === null ? '–' : formatNumber(z, 2), z === null ? '–' : pValueText(twoSidedNormalPValue(z))];
  });
  const kind = model.source.coefficients.covariance_kind;
  const clusters = num(record(record(model.source.fit)?.cluster)?.clusters);
  const caption = robust
    ? `Coefficients on the ${model.link.name} scale. z and p (two-sided, normal) use the cluster-robust errors (CR1 by player${clusters === null ? '' : `, ${clusters} clusters`}; Liang and Zeger 1986), the errors the model file keeps; the model-based errors (Fisher information; McCullagh and Nelder 1989) are shown for comparison. p below 1e-16 is shown as < 1e-16.`
    : `Coefficients on the ${model.link.name} scale. z and p (two-sided, normal) use the model file's covariance (${kind}); p below 1e-16 is shown as < 1e-16.`;
  return htmlTable(['term', 'estimate', 'model SE', 'robust SE (CR1)', robust ? 'z (robust)' : 'z', robust ? 'p (robust)' : 'p'], rows, { numeric: [1, 2, 3, 4, 5], caption });
}

/** The fit block's tables; a note when the model was not written by a fit. */
export function fitTables(model: CompiledModel): string {
  const fit = record(model.source.fit);
  if (fit === null) return `<p class="note">The model file has no <code>fit</code> block: it was not written by a fit (its label says “${escapeHtml(model.source.label ?? 'no label')}”).</p>`;
  const parts: string[] = [];
  const stats = record(fit.statistics);
  if (stats !== null) {
    const rows: string[][] = [
      ['status', escapeHtml(String(fit.status ?? '–'))],
      ['observations (rows fitted)', cell(stats.observations, 10)],
      ['iterations (IRLS)', cell(stats.iterations, 4)],
      ['deviance (residual df)', `${cell(stats.deviance, 6)} (${cell(stats.df_residual, 10)})`],
      ['null deviance (df)', `${cell(stats.null_deviance, 6)} (${cell(stats.df_null, 10)})`],
      ['log-likelihood', cell(stats.log_likelihood, 6)],
      ['AIC', cell(stats.aic, 6)],
      ['BIC', cell(stats.bic, 6)],
      ["McFadden's R²", `${cell(stats.mcfadden_r2, 3)} <span class="note">(values of 0.1–0.2 are usual for hit-or-miss outcomes, whose individual results are mostly chance; it is not the share of variance explained)</span>`],
      ["Tjur's R²", cell(stats.tjur_r2, 3)],
      ['Brier score', cell(stats.brier, 4)],
    ];
    parts.push(`<table class="stats"><caption>Fit statistics (binomial ${escapeHtml(model.link.name)} model; ${escapeHtml(String(fit.likelihood ?? ''))} likelihood)</caption><tbody>${rows.map(([name, value]) => `<tr><th>${escapeHtml(name ?? '')}</th><td class="num">${value}</td></tr>`).join('')}</tbody></table>`);
  }
  const tests = list(fit.likelihood_ratio_tests).map(record).filter((test): test is FitBlock => test !== null);
  if (tests.length > 0) {
    parts.push(
      htmlTable(
        ['factor', 'terms dropped', 'df', 'χ²', 'p'],
        tests.map((test) => [String(test.factor ?? ''), list(test.dropped_terms).join(', '), cell(test.df, 4), test.status === 'tested' ? cell(test.statistic, 6) : `not tested: ${String(test.reason ?? '')}`, test.status === 'tested' ? pValueText(num(test.p_value)) : '–']),
        { numeric: [2, 3, 4], caption: 'Likelihood-ratio tests: the model against the model without each factor (its main effect and its interaction).' },
      ),
    );
  }
  const cv = record(fit.cross_validation);
  if (cv !== null) {
    parts.push(
      `<p>Cross-validation: ${cell(cv.folds, 3)} folds holding out ${escapeHtml(String(cv.held_out ?? ''))} (seed ${cell(cv.seed, 10)}): log loss ${cell(cv.log_loss)}, Brier score ${cell(cv.brier)}, calibration error ${cell(cv.calibration_error)} on the held-out attempts.</p>`,
    );
  }
  const calibration = list(fit.calibration).map(record).filter((bin): bin is FitBlock => bin !== null && num(bin.attempts) !== 0);
  if (calibration.length > 0) {
    parts.push(
      htmlTable(
        ['predicted bin', 'attempts', 'mean predicted', 'observed'],
        calibration.map((bin) => [`[${cell(bin.lower, 2)}, ${cell(bin.upper, 2)})`, cell(bin.attempts, 12), cell(bin.mean_predicted, 3), cell(bin.observed, 3)]),
        { numeric: [1, 2, 3], caption: 'Calibration on the fitted data: rows grouped by predicted probability.' },
      ),
    );
  }
  const scaleEffect = record(fit.scale_effect);
  if (scaleEffect !== null) {
    parts.push(`<p>Scale effect: hit probability ${scaleEffect.increasing === true ? 'increases' : 'does not increase'} with the scale everywhere in the training range (smallest slope ${cell(scaleEffect.smallest_slope)} at ${cell(scaleEffect.at_latency_ms, 4)} ms, difficulty ${escapeHtml(String(scaleEffect.at_difficulty ?? ''))}); usable for compensation: ${fit.usable_for_compensation === true ? 'yes' : 'no'}.</p>`);
  }
  const warnings = list(fit.warnings).map(record).filter((entry): entry is FitBlock => entry !== null);
  if (warnings.length > 0) parts.push(`<div class="warn">Fit warnings:<ul>${warnings.map((entry) => `<li>${escapeHtml(String(entry.message ?? ''))}</li>`).join('')}</ul></div>`);
  // Fields this report does not know (a model file from elsewhere, or a later version) are shown as written.
  const other = Object.entries(fit).filter(([key]) => !KNOWN_FIT_FIELDS.has(key));
  const otherList = other.length === 0 ? '' : `<dl class="fit">${other.map(([key, value]) => `<dt>${escapeHtml(key)}</dt><dd><code>${escapeHtml(JSON.stringify(value) ?? '')}</code></dd>`).join('')}</dl>`;
  const folded = ['fold_results' in (cv ?? {}) ? foldTable(list(cv?.fold_results)) : '', covarianceTable(fit.model_covariance, model), baselineTable(record(fit.baseline_least_squares)), otherList].filter((text) => text !== '');
  if (folded.length > 0) parts.push(`<details><summary>More: per-fold results, the model-based covariance, the least-squares baseline${other.length === 0 ? '' : ', other fields of the fit block'}</summary>${folded.join('\n')}</details>`);
  return parts.join('\n');
}

function foldTable(folds: unknown[]): string {
  const rows = folds.map(record).filter((fold): fold is FitBlock => fold !== null);
  if (rows.length === 0) return '';
  return htmlTable(
    ['fold', 'status', 'players', 'held-out attempts', 'log loss', 'Brier'],
    rows.map((fold) => [cell(fold.fold, 3), String(fold.status ?? ''), cell(fold.players, 6), cell(fold.held_out_attempts, 12), cell(fold.log_loss), cell(fold.brier)]),
    { numeric: [0, 2, 3, 4, 5], caption: 'Cross-validation folds.' },
  );
}

function covarianceTable(matrix: unknown, model: CompiledModel): string {
  const rows = list(matrix).map(list);
  if (rows.length === 0) return '';
  const names = model.columns.map((column) => column.name);
  return htmlTable(['', ...names], rows.map((row, index) => [names[index] ?? '', ...row.map((value) => cell(value, 3))]), { numeric: names.map((_, index) => index + 1), caption: 'Model-based covariance of the coefficients.' });
}

function baselineTable(baseline: FitBlock | null): string {
  if (baseline === null) return '';
  const rows = list(baseline.coefficients).map(record).filter((row): row is FitBlock => row !== null);
  return htmlTable(['term', 'estimate', 'std. error'], rows.map((row) => [String(row.name ?? ''), cell(row.estimate), cell(row.std_error)]), {
    numeric: [1, 2],
    caption: `Baseline: least squares on per-round accuracy (R² ${cell(baseline.r_squared, 3)}, residual SD ${cell(baseline.residual_sd, 3)}); for comparison only.`,
  });
}
