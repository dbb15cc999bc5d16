/**
 * Is the model still right? Its terms refitted on the live rows, and a
 * likelihood-ratio test of the refitted coefficients against the model's
 * (Wilks 1938): LR = 2 (l(refit) - l(model)), chi-square with as many degrees
 * of freedom as coefficients refitted, on the model's link.
 *
 * The LR test takes attempts as independent given the covariates; attempts
 * of one player are not (skill), and on many rows that alone makes the plain
 * test reject a right model. So it is also adjusted for clustering by player
 * (Rao, J. N. K. and Scott, A. J. (1984), On chi-squared tests for multiway
 * contingency tables with cell proportions estimated from survey data, *The
 * Annals of Statistics* 12(1), 46-60; second-order correction): LR is
 * asymptotically sum_j delta_j chi2_1 with delta_j the eigenvalues of
 * D = I V (I the information, V the CR1 covariance of the refit), and is
 * referred as LR / (mean delta (1 + a^2)) to chi-square with k / (1 + a^2)
 * degrees of freedom, a^2 = sum (delta_j - mean delta)^2 / (k mean delta^2);
 * only tr D and tr D^2 are needed. The recommendation follows the adjusted
 * test.
 *
 * Columns the live data cannot estimate (a difficulty level nobody played,
 * a scale that never varied) are held at the model's values (an offset) and
 * left out of the degrees of freedom.
 *
 * Cost: one fit of the model's columns (two when some are held) and one
 * pass for the model's log-likelihood (the refit's is the fit's own).
 */
import type { LikelihoodRatioCheck, RefitCoefficient } from './field-types.js';
import type { Link } from '../model/links.js';
import { type DesignMatrix, multiply } from '../numeric/design-matrix.js';
import { choleskySolve } from '../numeric/cholesky.js';
import { chiSquareUpperTail } from '../stats/distributions.js';
import { type FieldRows, fitField } from './field-fit.js';

export interface RefitTest {
  readonly test: LikelihoodRatioCheck;
  readonly coefficients: RefitCoefficient[];
}

/**
 * Refit `design` (the model's columns over the live rows) and test it against
 * `coefficients` (the model's), whose linear predictor is `linearPredictor`.
 */
export function refitTest(rows: FieldRows, design: DesignMatrix, link: Link, coefficients: Float64Array, linearPredictor: Float64Array): RefitTest {
  const names = design.names;
  let held: string[] = [];
  let result = fitField(rows, design, { link: link.name, start: coefficients });
  if (!result.ok && result.aliased !== undefined && result.aliased.length < names.length) {
    held = [...result.aliased];
    result = fitField(rows, withoutColumns(design, held), { link: link.name, offset: heldOffset(design, held, coefficients), start: coefficients.filter((_, j) => !held.includes(names[j] as string)) });
  }
  const unfitted = (reason: string): RefitTest => ({
    test: { status: 'not_tested', reason },
    coefficients: names.map((name, j) => ({ name, model: coefficients[j] as number, refit: null, robust_std_error: null })),
  });
  if (!result.ok) return unfitted(`the refit gave no estimate: ${result.reason}`);
  const { fit } = result;
  // The refit's own log-likelihood (a field fit's is the Bernoulli kernel of these rows, the held columns in its offset).
  const statistic = Math.max(0, 2 * (fit.logLikelihood - logLikelihood(rows, link, linearPredictor)));
  const df = fit.coefficients.length;
  const adjusted = fit.robust === null ? null : raoScott(statistic, fit.covariance, fit.robust.covariance, df);
  let fitted = 0;
  const table = names.map((name, j) => {
    if (held.includes(name)) return { name, model: coefficients[j] as number, refit: null, robust_std_error: null };
    const at = fitted;
    fitted += 1;
    return { name, model: coefficients[j] as number, refit: fit.coefficients[at] as number, robust_std_error: (fit.robust?.standardErrors[at] ?? fit.standardErrors[at]) as number };
  });
  return { test: { status: 'tested', statistic, df, p_value: chiSquareUpperTail(statistic, df), adjusted, held_at_model: held }, coefficients: table };
}

/** The Rao-Scott second-order adjustment of an LR statistic from the model-based and robust covariances. */
export function raoScott(statistic: number, modelCovariance: Float64Array, robustCovariance: Float64Array, k: number) {
  // D = I V = C^-1 V, column by column: C d_j = v_j.
  const product = new Float64Array(k * k);
  for (let j = 0; j < k; j += 1) {
    const column = Float64Array.from({ length: k }, (_, i) => robustCovariance[i * k + j] as number);
    const solved = choleskySolve(modelCovariance, column);
    if (solved === null) return null;
    for (let i = 0; i < k; i += 1) product[i * k + j] = solved[i] as number;
  }
  let trace = 0;
  let traceOfSquare = 0;
  for (let i = 0; i < k; i += 1) {
    trace += product[i * k + i] as number;
    for (let j = 0; j < k; j += 1) traceOfSquare += (product[i * k + j] as number) * (product[j * k + i] as number);
  }
  const mean = trace / k;
  if (!(mean > 0)) return null;
  const aSquared = Math.max(0, (traceOfSquare - k * mean * mean) / (k * mean * mean));
  const adjusted = statistic / (mean * (1 + aSquared));
  const df = k / (1 + aSquared);
  return { statistic: adjusted, df, p_value: chiSquareUpperTail(adjusted, df), mean_design_effect: mean, a_squared: aSquared };
}

/**
 * sum prior [s log mu + (n - s) log(1 - mu)] at the linear predictors (1 - mu from the link's
 * complement). For the logit link log mu and log(1 - mu) come from one log1p(exp(-|eta|)), as in
 * the fit's own passes (`irls-passes.ts`), so that the statistic, a difference of this and the
 * refit's log-likelihood, has both sides computed alike.
 */
function logLikelihood(rows: FieldRows, link: Link, linearPredictor: Float64Array): number {
  const logit = link.name === 'logit';
  let sum = 0;
  for (let i = 0; i < linearPredictor.length; i += 1) {
    const prior = rows.priorWeights[i] as number;
    const trials = rows.trials[i] as number;
    if (!(prior * trials > 0)) continue;
    const successes = rows.successes[i] as number;
    const eta = linearPredictor[i] as number;
    let logMu: number;
    let logComplement: number;
    if (logit) {
      const softplus = Math.log1p(Math.exp(-Math.abs(eta)));
      logMu = eta >= 0 ? -softplus : eta - softplus;
      logComplement = eta >= 0 ? -eta - softplus : -softplus;
    } else {
      logMu = Math.log(link.inverse(eta));
      logComplement = Math.log(link.inverseComplement(eta));
    }
    if (successes > 0) sum += prior * successes * logMu;
    if (successes < trials) sum += prior * (trials - successes) * logComplement;
  }
  return sum;
}

/** The design without the `held` columns (itself when none are held). */
function withoutColumns(design: DesignMatrix, held: readonly string[]): DesignMatrix {
  return held.length === 0 ? design : pickColumns(design, (name) => !held.includes(name));
}

/** The columns of `design` whose names pass `keep`, in order. */
function pickColumns(design: DesignMatrix, keep: (name: string) => boolean): DesignMatrix {
  const picked = design.names.map((name, j) => ({ name, j })).filter(({ name }) => keep(name));
  const values = new Float64Array(design.rows * picked.length);
  picked.forEach(({ j }, to) => values.set(design.values.subarray(j * design.rows, (j + 1) * design.rows), to * design.rows));
  return { rows: design.rows, columns: picked.length, names: picked.map(({ name }) => name), values };
}

/** The held columns' part of the model's linear predictor. */
function heldOffset(design: DesignMatrix, held: readonly string[], coefficients: Float64Array): Float64Array {
  return multiply(
    pickColumns(design, (name) => held.includes(name)),
    design.names.flatMap((name, j) => (held.includes(name) ? [coefficients[j] as number] : [])),
  );
}
