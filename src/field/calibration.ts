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
 * Both binomial fits (few-column-logit.ts), with model-based and
 * cluster-robust (CR1, by player) errors; the interval is the robust one, 95%.
 *
 * Cost: two fits of one and two columns over the rows, a few passes each.
 */
import type { CalibrationEstimate } from './field-types.js';
import { type FieldRows, twoSidedCritical } from './field-fit.js';
import { type FewColumnFit, fitIndicatorLogit, fitLineLogit } from './few-column-logit.js';

const LEVEL = 0.95;

export type CalibrationFigure = { readonly ok: true; readonly value: CalibrationEstimate } | { readonly ok: false; readonly reason: string };

/** a in logit P = a + q, q = the logit of the prediction as an offset. */
export function calibrationInTheLarge(rows: FieldRows, logitPrediction: Float64Array): CalibrationFigure {
  return figureOf(fitIndicatorLogit(rows, logitPrediction, null, 1, ['(Intercept)']), 0);
}

/** b in logit P = a + b q, q = the logit of the prediction. */
export function calibrationSlope(rows: FieldRows, logitPrediction: Float64Array): CalibrationFigure {
  return figureOf(fitLineLogit(rows, null, logitPrediction, [0, 1], ['(Intercept)', 'logit_prediction']), 1);
}

/** Coefficient j with its CR1 interval (the model-based one without a robust covariance). */
function figureOf(result: FewColumnFit, j: number): CalibrationFigure {
  if (!result.ok) return result;
  const k = result.coefficients.length;
  const estimate = result.coefficients[j] as number;
  const modelError = Math.sqrt(result.covariance[j * k + j] as number);
  const standardError = result.robustCovariance === null ? modelError : Math.sqrt(result.robustCovariance[j * k + j] as number);
  const critical = twoSidedCritical(LEVEL);
  return {
    ok: true,
    value: {
      estimate,
      std_error: standardError,
      model_std_error: modelError,
      lower: estimate - critical * standardError,
      upper: estimate + critical * standardError,
      level: LEVEL,
    },
  };
}
