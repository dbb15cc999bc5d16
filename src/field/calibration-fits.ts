/**
 * The field check's calibration fits as independent jobs: calibration in the
 * large, the calibration slope and the refit with its likelihood-ratio test,
 * each on the live rows alone. Their inputs are plain data (they cross to a
 * worker thread by structured clone: `check-field-threads.ts`) and each job
 * gives the same result on any thread.
 */
import type { LinkName } from '../model/links.js';
import { linkFor } from '../model/links.js';
import type { DesignMatrix } from '../numeric/design-matrix.js';
import { type CalibrationFigure, calibrationInTheLarge, calibrationSlope } from './calibration.js';
import type { FieldRows } from './field-fit.js';
import { type RefitTest, refitTest } from './refit-test.js';

/** What the three fits share. */
export interface CalibrationInputs {
  readonly rows: FieldRows;
  /** The logit of the model's prediction per row (the offset of calibration in the large, the slope's covariate). */
  readonly logitPrediction: Float64Array;
  /** The model's linear predictor per row (the refit's reference). */
  readonly linearPredictor: Float64Array;
  /** The model's columns over the live rows, for the refit. */
  readonly design: DesignMatrix;
  readonly link: LinkName;
  readonly coefficients: Float64Array;
}

export type CalibrationJob = 'refit' | 'slope' | 'in_the_large';

/** The jobs, the longest first (the refit has the model's columns, the others one or two). */
export const CALIBRATION_JOBS: readonly CalibrationJob[] = ['refit', 'slope', 'in_the_large'];

export type CalibrationFit = { readonly job: 'refit'; readonly refit: RefitTest } | { readonly job: 'slope' | 'in_the_large'; readonly figure: CalibrationFigure };

export function runCalibrationFit(inputs: CalibrationInputs, job: CalibrationJob): CalibrationFit {
  if (job === 'refit') return { job, refit: refitTest(inputs.rows, inputs.design, linkFor(inputs.link), inputs.coefficients, inputs.linearPredictor) };
  return { job, figure: job === 'slope' ? calibrationSlope(inputs.rows, inputs.logitPrediction) : calibrationInTheLarge(inputs.rows, inputs.logitPrediction) };
}
