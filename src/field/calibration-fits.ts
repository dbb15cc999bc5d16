/**
 * The field check's calibration fits as independent jobs: calibration in the
 * large, the calibration slope and the refit with its likelihood-ratio test,
 * each on the live rows alone. A thread sets their inputs up from the live
 * groups and the model's document ({@link calibrationInputsFrom}, plain data
 * that crosses to a worker thread by structured clone: `check-field-threads.ts`)
 * by the same code as `beginFieldCheck`, so each job gives the same result on
 * any thread.
 */
import type { GroupedTrials } from '../model/collapsed-trials.js';
import { type CompiledModel, compileModelFile } from '../model/compile.js';
import { buildDesign } from '../model/design.js';
import type { ModelFile } from '../formats/model-types.js';
import type { LinkName } from '../model/links.js';
import { linkFor } from '../model/links.js';
import type { DesignMatrix } from '../numeric/design-matrix.js';
import { type CalibrationFigure, calibrationInTheLarge, calibrationSlope } from './calibration.js';
import { type FieldRows, fieldRows } from './field-fit.js';
import { type LiveRows, joinLiveRows } from './live-rows.js';
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

/**
 * The calibration fits' inputs from the live rows joined to the model. The design (a matrix of
 * the rows by the model's columns, for the refit alone) is built when first read: a thread that
 * leaves the refit to another never builds it.
 */
export function calibrationInputsOf(live: LiveRows, model: CompiledModel, shape: GroupedTrials['shape']): CalibrationInputs {
  let design: DesignMatrix | undefined;
  return {
    rows: fieldRows(live.data, shape),
    logitPrediction: live.offset,
    linearPredictor: live.linearPredictor,
    get design() {
      return (design ??= buildDesign(live.data, model.source.terms, model.difficulty).matrix);
    },
    link: model.link.name,
    coefficients: model.coefficients,
  };
}

/** What a thread sets the calibration fits up from: the live groups and the model's document. */
export interface CalibrationSource {
  readonly trials: GroupedTrials;
  readonly model: ModelFile;
}

/**
 * The inputs {@link calibrationInputsOf} gives on the thread that checked them, set up on another
 * from the same data; throws on data that thread would have refused.
 */
export function calibrationInputsFrom(source: CalibrationSource): CalibrationInputs {
  const model = compileModelFile(source.model);
  if (!model.ok) throw new Error('field check: the model does not compile on this thread');
  const live = joinLiveRows(source.trials, model.value);
  if (!live.ok) throw new Error('field check: the live rows do not join on this thread');
  return calibrationInputsOf(live.value, model.value, source.trials.shape);
}

/** The jobs, the longest first (the refit has the model's columns, the others one or two). */
export const CALIBRATION_JOBS: readonly CalibrationJob[] = ['refit', 'slope', 'in_the_large'];

export type CalibrationFit = { readonly job: 'refit'; readonly refit: RefitTest } | { readonly job: 'slope' | 'in_the_large'; readonly figure: CalibrationFigure };

export function runCalibrationFit(inputs: CalibrationInputs, job: CalibrationJob): CalibrationFit {
  if (job === 'refit') return { job, refit: refitTest(inputs.rows, inputs.design, linkFor(inputs.link), inputs.coefficients, inputs.linearPredictor) };
  return { job, figure: job === 'slope' ? calibrationSlope(inputs.rows, inputs.logitPrediction) : calibrationInTheLarge(inputs.rows, inputs.logitPrediction) };
}
