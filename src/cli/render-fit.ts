/** `lagparity fit` for people: the report and the `--compare` ranking as tables (loaded only when not writing JSON). */
import type { FitReport } from '../model/fit-report-types.js';
import { compactTable } from './table.js';
import { fixed } from './output.js';
import { pValueText } from '../stats/p-value-text.js';

function number(value: number | null, digits = 4): string {
  if (value === null) return '-';
  const magnitude = Math.abs(value);
  if (magnitude !== 0 && (magnitude < 1e-3 || magnitude >= 1e6)) return value.toExponential(digits - 1);
  if (magnitude >= 1000) return fixed(value, 1);
  return String(Number(value.toPrecision(digits)));
}

/** The report as tables for people. */
export function renderFit(report: FitReport): string {
  const data = report.data;
  const model = report.family === 'binomial' ? `binomial ${report.link ?? ''}, ${report.likelihood ?? ''} likelihood` : 'least squares on accuracy';
  const lines = [
    `${data.file}: ${data.rows} rows (${data.shape.replace('_', ' ')}, ${data.attempts} attempts${data.players === null ? '' : `, ${data.players} player${data.players === 1 ? '' : 's'}`}; ${data.fitted_rows} after collapsing); ${model}: ${report.status}` +
      (report.statistics === null ? '' : ` (${report.statistics.iterations} iterations)`),
  ];
  if (report.coefficients.length === 0) return lines.join('\n');
  // One choice of errors, labelled, the same as the report's: the errors the model file keeps
  // (CR1 by player when clustered, else model-based); z, p and the interval come from them.
  const robust = report.coefficients.some((row) => row.robust !== null);
  const kept = robust ? 'robust SE' : 'model SE';
  const table = compactTable(
    ['term', 'estimate', kept, 'z', 'p', '95% interval', ...(robust ? ['model SE'] : [])],
    ['left', 'right', 'right', 'right', 'right', 'right', 'right'],
  );
  for (const row of report.coefficients) {
    const used = row.robust ?? row;
    table.push([row.name, number(row.estimate), number(used.std_error), fixed(used.z, 2), pValueText(used.p_value), `${number(used.ci_lower)} .. ${number(used.ci_upper)}`, ...(robust ? [number(row.std_error)] : [])]);
  }
  lines.push(table.toString());
  lines.push(
    robust
      ? `robust SE: CR1 by player (${report.cluster.clusters ?? 0} clusters), the errors the model file keeps; z, p (two-sided, normal) and the interval use them; model SE for comparison`
      : 'model SE: from the Fisher information at the estimate (McCullagh and Nelder 1989); z, p (two-sided, normal) and the interval use them',
  );
  const stats = report.statistics;
  if (stats !== null && report.family === 'binomial') {
    lines.push(
      `deviance ${fixed(stats.deviance, 2)} on ${stats.df_residual} df (null ${fixed(stats.null_deviance, 2)} on ${stats.df_null ?? '-'} df); log-likelihood ${fixed(stats.log_likelihood, 2)}; AIC ${fixed(stats.aic, 2)}; BIC ${fixed(stats.bic, 2)}`,
      `McFadden R² ${fixed(stats.mcfadden_r2, 4)}; Tjur R² ${fixed(stats.tjur_r2, 4)}; Brier ${fixed(stats.brier, 4)}`,
    );
  } else if (stats !== null) {
    lines.push(`R² ${fixed(stats.r_squared, 4)}; residual SD ${fixed(stats.residual_sd, 4)} on ${stats.df_residual} df; Brier ${fixed(stats.brier, 4)}`);
  }
  if (report.likelihood_ratio_tests.length > 0) {
    lines.push(
      `likelihood-ratio tests: ${report.likelihood_ratio_tests
        .map((test) => (test.status === 'tested' ? `${test.factor} chi² ${fixed(test.statistic, 2)} on ${test.df} df, p ${pValueText(test.p_value)}` : `${test.factor} not tested (${test.reason})`))
        .join('; ')}`,
    );
  }
  const cv = report.cross_validation;
  if (cv !== null) {
    lines.push(`cross-validation (${cv.folds} folds by ${cv.held_out === 'players' ? 'player' : 'row'}, seed ${cv.seed}): log loss ${fixed(cv.log_loss, 4)}, Brier ${fixed(cv.brier, 4)}, calibration error ${fixed(cv.calibration_error, 4)}`);
  }
  if (report.calibration.length > 0) {
    const bins = report.calibration.filter((bin) => bin.attempts > 0);
    lines.push(`calibration (predicted -> observed): ${bins.map((bin) => `${fixed(bin.mean_predicted, 2)}->${fixed(bin.observed, 2)}`).join(' ')}`);
  }
  if (report.baseline !== null && report.family === 'binomial') lines.push(`baseline least squares on accuracy: R² ${fixed(report.baseline.r_squared, 4)}`);
  if (report.scale_effect !== null) {
    lines.push(
      report.scale_effect.increasing
        ? `scale effect: increasing over the training range (smallest slope ${number(report.scale_effect.smallest_slope)} at ${report.scale_effect.at_latency_ms ?? '-'} ms)`
        : 'scale effect: NOT increasing over the training range; this model cannot be used for compensation',
    );
  }
  return lines.join('\n');
}

/** One ranked `--compare` candidate. */
export interface Ranked {
  readonly spec: string;
  readonly status: string;
  readonly log_loss: number | null;
  readonly brier: number | null;
  readonly calibration_error: number | null;
  readonly aic: number | null;
}

export function renderComparison(ranked: readonly Ranked[]): string {
  const table = compactTable(['rank', 'candidate', 'status', 'held-out log loss', 'Brier', 'calibration error', 'AIC'], ['right', 'left', 'left', 'right', 'right', 'right', 'right']);
  ranked.forEach((entry, index) => {
    table.push([String(index + 1), entry.spec, entry.status, fixed(entry.log_loss, 4), fixed(entry.brier, 4), fixed(entry.calibration_error, 4), fixed(entry.aic, 1)]);
  });
  return `comparison, best held-out log loss first:\n${table.toString()}`;
}
