/**
 * The linear predictor at one difficulty, as the four numbers of
 *
 *     linearPredictor(latency, s) = (a0 + a1 latency) + (b0 + b1 latency) h(s)
 *
 * (see `compile.ts`). A module of its own, without the model-file schema, so
 * that fitting (`fit-model.ts`) does not load zod; `compile.ts` re-exports it.
 */
import { type Result, error, fail, ok, show } from '../issues.js';
import type { DesignColumn, DifficultyCoding } from './terms.js';

/** The linear predictor at one difficulty, affine in latency and in the scale term. */
export interface PredictorLine {
  /** a0: intercept part at latency 0. */
  readonly base: number;
  /** a1: change of the intercept part per ms of latency. */
  readonly basePerMs: number;
  /** b0: coefficient of the scale term at latency 0. */
  readonly scaleSlope: number;
  /** b1: change of the scale term's coefficient per ms of latency. */
  readonly scaleSlopePerMs: number;
}

/** The predictor line of given coefficients at a difficulty. Shared with uncertainty draws. */
export function predictorLine(
  columns: readonly DesignColumn[],
  coefficients: ArrayLike<number>,
  coding: DifficultyCoding,
  difficulty: number | string,
): Result<PredictorLine> {
  if (coding.kind === 'numeric' && !(typeof difficulty === 'number' && Number.isFinite(difficulty))) {
    return fail([error('wrong_difficulty', 'difficulty', `the model requires a numeric difficulty (a finite number), got ${show(difficulty)}`)]);
  }
  if (coding.kind === 'levels' && (typeof difficulty !== 'string' || !coding.levels.includes(difficulty))) {
    return fail([error('wrong_difficulty', 'difficulty', `the model requires a difficulty level among ${coding.levels.map((level) => show(level)).join(', ')}, got ${show(difficulty)}`)]);
  }
  let base = 0;
  let basePerMs = 0;
  let scaleSlope = 0;
  let scaleSlopePerMs = 0;
  columns.forEach((column, index) => {
    let factor = coefficients[index] ?? 0;
    if (column.difficulty === 'value') factor *= difficulty as number;
    else if (column.difficulty !== null) factor *= difficulty === column.difficulty.level ? 1 : 0;
    if (column.scale && column.latency) scaleSlopePerMs += factor;
    else if (column.scale) scaleSlope += factor;
    else if (column.latency) basePerMs += factor;
    else base += factor;
  });
  return ok({ base, basePerMs, scaleSlope, scaleSlopePerMs });
}
