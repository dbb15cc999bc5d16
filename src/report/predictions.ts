/**
 * What the report needs from a compiled model: the predicted hit probability
 * at a covariate point with its 95% band, and the calibration of the model
 * on a trials file.
 *
 * The band is the delta method on the linear predictor (e.g. McCullagh, P.
 * and Nelder, J. A. (1989), Generalized Linear Models, 2nd ed., §2.5 and
 * §4.4; the way R's `predict(..., se.fit = TRUE)` is usually turned into an
 * interval): with x the design row and V the coefficient covariance,
 * se = sqrt(x' V x), and the band is g^-1(x'b -/+ z se) with z the 0.975
 * normal quantile. Computing it on the link scale and mapping it through the
 * inverse link keeps it inside [0, 1] and makes it asymmetric where the curve
 * bends, which a band on the probability scale would not.
 */
import { type Issue, type Result, error, fail, ok, show } from '../issues.js';
import type { Trials } from '../formats/trials-types.js';
import type { CompiledModel } from '../model/compile.js';
import { columnValue, scaleTermValue } from '../model/terms.js';
import { normalQuantile } from '../stats/distributions.js';

/** z for a two-sided 95% band: the 0.975 standard normal quantile. */
export const Z_975 = normalQuantile(0.975);

export interface Prediction {
  readonly probability: number;
  readonly linearPredictor: number;
  /** Standard error of the linear predictor, sqrt(x' V x). */
  readonly standardError: number;
  /** The 95% band; equal to `probability` when the covariance is zero. */
  readonly lower: number;
  readonly upper: number;
}

/** Whether the model's covariance has any non-zero entry (an all-zero one gives no band). */
export function hasCovariance(model: CompiledModel): boolean {
  return model.covariance.some((value) => value !== 0);
}

/** The design row of the model at a covariate point. */
function designRow(model: CompiledModel, latency: number, scale: number, difficulty: number | string, into: Float64Array): Float64Array {
  const scaleTerm = scaleTermValue(model.scaleForm, scale);
  model.columns.forEach((column, index) => (into[index] = columnValue(column, latency, scaleTerm, difficulty)));
  return into;
}

/**
 * The predicted hit probability at (latency, scale, difficulty) with its
 * delta-method 95% band. `difficulty` must be one the model accepts (see
 * {@link difficultyForModel}).
 *
 * Cost: O(p^2) for p coefficients.
 */
export function predictWithBand(model: CompiledModel, latency: number, scale: number, difficulty: number | string): Prediction {
  const size = model.coefficients.length;
  const row = designRow(model, latency, scale, difficulty, new Float64Array(size));
  let linearPredictor = 0;
  for (let index = 0; index < size; index += 1) linearPredictor += (row[index] as number) * (model.coefficients[index] as number);
  let variance = 0;
  for (let left = 0; left < size; left += 1) {
    const value = row[left] as number;
    if (value === 0) continue;
    for (let right = 0; right < size; right += 1) variance += value * (model.covariance[left * size + right] as number) * (row[right] as number);
  }
  // Rounding can leave a tiny negative variance for a semi-definite matrix.
  const standardError = Math.sqrt(Math.max(variance, 0));
  const link = model.link;
  return {
    probability: link.inverse(linearPredictor),
    linearPredictor,
    standardError,
    lower: link.inverse(linearPredictor - Z_975 * standardError),
    upper: link.inverse(linearPredictor + Z_975 * standardError),
  };
}

/**
 * The difficulty of each of the trials' difficulty values as the model takes
 * it: the level name, or the number. An issue (`wrong_difficulty`, at the
 * trials file's `difficulty` column) when the model does not know a value.
 */
export function difficultyForModel(trials: Trials, model: CompiledModel): Result<(row: number) => number | string> {
  const coding = model.difficulty;
  const where = `${trials.file}:difficulty`;
  const column = trials.difficulty;
  if (coding.kind === 'numeric') {
    if (column.kind === 'levels') {
      return fail([error('wrong_difficulty', where, `the model requires numeric difficulties, got levels ${column.levels.slice(0, 5).map((level) => show(level)).join(', ')}`)]);
    }
    return ok((row: number) => column.values[row] as number);
  }
  const names = column.kind === 'levels' ? column.levels : [...new Set(Array.from(column.values, String))];
  const unknown = names.filter((name) => !coding.levels.includes(name));
  if (unknown.length > 0) {
    return fail([error('wrong_difficulty', where, `the model requires difficulty levels among ${coding.levels.map((level) => show(level)).join(', ')}, got ${unknown.slice(0, 5).map((level) => show(level)).join(', ')}`)]);
  }
  if (column.kind === 'levels') return ok((row: number) => column.levels[column.codes[row] as number] as string);
  return ok((row: number) => String(column.values[row]));
}

export interface CalibrationBin {
  /** The bin of predicted probability, [lower, upper) (the last one closed). */
  readonly lower: number;
  readonly upper: number;
  readonly rows: number;
  readonly attempts: number;
  /** Attempt-weighted mean predicted probability in the bin. */
  readonly mean_predicted: number;
  /** Hits / attempts in the bin. */
  readonly observed: number;
}

/**
 * Calibration in `bins` equal-width bins of predicted probability (default
 * ten: [0, 0.1), ..., [0.9, 1]): per bin, the attempt-weighted mean
 * prediction and the observed hit rate. Bins with no rows are left out. A
 * well-calibrated model has the points on the diagonal.
 *
 * Cost: O(n p) for n rows and p coefficients.
 */
export function calibrationBins(trials: Trials, model: CompiledModel, bins = 10): Result<CalibrationBin[]> {
  const difficulty = difficultyForModel(trials, model);
  if (!difficulty.ok) return difficulty;
  const difficultyAt = difficulty.value;
  const size = model.coefficients.length;
  const row = new Float64Array(size);
  const attempts = new Float64Array(bins);
  const hits = new Float64Array(bins);
  const predicted = new Float64Array(bins);
  const rows = new Float64Array(bins);
  const issues: Issue[] = [];
  for (let index = 0; index < trials.rows; index += 1) {
    designRow(model, trials.latency[index] as number, trials.scale[index] as number, difficultyAt(index), row);
    let linearPredictor = 0;
    for (let column = 0; column < size; column += 1) linearPredictor += (row[column] as number) * (model.coefficients[column] as number);
    const probability = model.link.inverse(linearPredictor);
    if (!Number.isFinite(probability)) {
      issues.push(error('not_a_number', `${trials.file}:row ${index + 1}`, `a prediction requires a finite linear predictor, got ${show(linearPredictor)}`));
      break;
    }
    const bin = Math.min(Math.floor(probability * bins), bins - 1);
    const weight = trials.attempts[index] as number;
    rows[bin] = (rows[bin] as number) + 1;
    attempts[bin] = (attempts[bin] as number) + weight;
    hits[bin] = (hits[bin] as number) + (trials.successes[index] as number);
    predicted[bin] = (predicted[bin] as number) + weight * probability;
  }
  if (issues.length > 0) return fail(issues);
  const result: CalibrationBin[] = [];
  for (let bin = 0; bin < bins; bin += 1) {
    const total = attempts[bin] as number;
    if (total === 0) continue;
    result.push({
      lower: bin / bins,
      upper: (bin + 1) / bins,
      rows: rows[bin] as number,
      attempts: total,
      mean_predicted: (predicted[bin] as number) / total,
      observed: (hits[bin] as number) / total,
    });
  }
  return ok(result);
}
