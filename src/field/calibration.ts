/**
 * Calibration of a model's predictions on new rows (Cox, D. R. (1958), Two
 * further applications of a model for binary regression, *Biometrika*
 * 45(3/4), 562-565): with q the logit of the predicted probability,
 *
 * - calibration-in-the-large: logit P(hit) = a + q (q an offset); a = 0 when
 *   the predictions are right on average (a < 0: they are too high);
 * - the calibration slope: logit P(hit) = a + b q; b = 1 when the
 *   predictions spread as the outcomes do (b < 1: too extreme, b > 1: too
 *   timid: on live data, effects stronger than the model's).
 *
 * Both binomial fits, with model-based and cluster-robust (CR1, by player)
 * errors; the interval is the robust one, 95%.
 *
 * Cost: two fits of one and two columns over the rows.
 */
import type { CalibrationEstimate } from './field-types.js';
import { type FieldRows, fitField, robustError, twoSidedCritical } from './field-fit.js';
import { designMatrixFromColumns, interceptColumn } from '../numeric/design-matrix.js';

const LEVEL = 0.95;

export type CalibrationFigure = { readonly ok: true; readonly value: CalibrationEstimate } | { readonly ok: false; readonly reason: string };

/** a in logit P = a + q, q = the logit of the prediction as an offset. */
export function calibrationInTheLarge(rows: FieldRows, logitPrediction: Float64Array): CalibrationFigure {
  const design = designMatrixFromColumns([interceptColumn(logitPrediction.length)]);
  const result = fitField(rows, design, { offset: logitPrediction, start: [0] });
  if (!result.ok) return result;
  return { ok: true, value: estimateOf(result.fit, 0) };
}

/** b in logit P = a + b q, q = the logit of the prediction. */
export function calibrationSlope(rows: FieldRows, logitPrediction: Float64Array): CalibrationFigure {
  const design = designMatrixFromColumns([interceptColumn(logitPrediction.length), { name: 'logit_prediction', values: logitPrediction }]);
  const result = fitField(rows, design, { start: [0, 1] });
  if (!result.ok) return result;
  return { ok: true, value: estimateOf(result.fit, 1) };
}

function estimateOf(fit: Parameters<typeof robustError>[0], j: number): CalibrationEstimate {
  const estimate = fit.coefficients[j] as number;
  const standardError = robustError(fit, j);
  const critical = twoSidedCritical(LEVEL);
  return {
    estimate,
    std_error: standardError,
    model_std_error: fit.standardErrors[j] as number,
    lower: estimate - critical * standardError,
    upper: estimate + critical * standardError,
    level: LEVEL,
  };
}
