/**
 * The compensation scale a latency needs, and its interval: the scale s* at
 * which a player at latency L has the hit probability of a player at the
 * reference latency L0 (the playtest's lowest level, "no added latency")
 * playing unscaled. On the model's predictor line at one difficulty
 * (`predictor-line.ts`),
 *
 *     linearPredictor(L, s) = (a0 + a1 L) + (b0 + b1 L) h(s),    h = log or identity,
 *
 * the link cancels and s* has the closed form the solver uses
 * (`player-curve.ts`: h(s) = (g(T) - alpha) / beta) with g(T) the predictor at
 * (L0, s = 1):
 *
 *     h(s*) = [a1 (L0 - L) + (b0 + b1 L0) h(1)] / (b0 + b1 L),
 *
 * defined when the scale's slope b0 + b1 L is above 0 (else no scale makes up
 * for the latency).
 *
 * Interval: the delta method on h(s*) (a ratio of two quantities linear in the
 * coefficients; Casella, G. and Berger, R. L. (2002), *Statistical
 * Inference*, 2nd ed., §5.5.4), with the coefficients' covariance (the fit's
 * cluster-robust one in the size study), then mapped through h^-1, which is
 * increasing, so the interval stays on the scale's side of 0 for log h. The
 * delta method suits this smooth function of the coefficients; the solver's
 * uncertainty view draws coefficients instead because caps and rounding make
 * its scales non-smooth (method.md, section 4). The ratio's interval is poor
 * when the slope b0 + b1 L is barely distinguishable from 0 (Fieller's
 * problem); the size study then counts wide intervals, and a fitted slope at
 * or below 0 as a model that cannot be used.
 *
 * Cost: O(k^2) for k coefficients.
 */
import type { DesignColumn, DifficultyCoding } from '../model/terms.js';
import { scaleFromTermValue, scaleTermValue } from '../model/terms.js';
import { type PredictorLine, predictorLine } from '../model/predictor-line.js';
import { normalQuantile } from '../stats/distributions.js';

export type ScaleForm = 'log' | 'raw';

/** The slope of the predictor in h(s) at a latency. */
function slopeAt(line: PredictorLine, latency: number): number {
  return line.scaleSlope + line.scaleSlopePerMs * latency;
}

/** The numerator a1 (L0 - L) + (b0 + b1 L0) h(1). */
function numeratorAt(line: PredictorLine, form: ScaleForm, latency: number, reference: number): number {
  return line.basePerMs * (reference - latency) + slopeAt(line, reference) * scaleTermValue(form, 1);
}

/**
 * The scale at `latency` that restores the hit probability at `reference`
 * and scale 1; null when the scale's slope at `latency` is not above 0, or
 * (raw scale) the answer is not above 0.
 *
 * @example
 *   // logit p = 0.9 - 0.008 L + 1.6 log s: at 120 ms with the reference 0 ms
 *   neededScale({ base: 0.9, basePerMs: -0.008, scaleSlope: 1.6, scaleSlopePerMs: 0 }, 'log', 120, 0); // exp(0.6) = 1.822
 */
export function neededScale(line: PredictorLine, form: ScaleForm, latency: number, reference: number): number | null {
  const slope = slopeAt(line, latency);
  if (!(slope > 0)) return null;
  const scale = scaleFromTermValue(form, numeratorAt(line, form, latency, reference) / slope);
  return Number.isFinite(scale) && scale > 0 ? scale : null;
}

export interface ScaleInterval {
  readonly scale: number;
  readonly lower: number;
  readonly upper: number;
  /** Standard error of h(s*) by the delta method. */
  readonly termStandardError: number;
}

export interface FittedCoefficients {
  readonly columns: readonly DesignColumn[];
  readonly coding: DifficultyCoding;
  readonly estimates: ArrayLike<number>;
  /** k-by-k row-major. */
  readonly covariance: ArrayLike<number>;
}

/**
 * s* at `latency` for fitted coefficients at `difficulty`, with its
 * two-sided `level` interval by the delta method; null when s* is undefined
 * (see `neededScale`) or the variance is not finite.
 */
export function neededScaleInterval(
  fitted: FittedCoefficients,
  difficulty: number | string,
  form: ScaleForm,
  latency: number,
  reference: number,
  level = 0.9,
): ScaleInterval | null {
  const size = fitted.columns.length;
  const line = predictorLine(fitted.columns, fitted.estimates, fitted.coding, difficulty);
  if (!line.ok) return null;
  const slope = slopeAt(line.value, latency);
  if (!(slope > 0)) return null;
  const term = numeratorAt(line.value, form, latency, reference) / slope;
  // The numerator and the slope are linear in the coefficients: their coefficient on each is the line of a unit vector.
  const gradient = new Float64Array(size);
  const unit = new Float64Array(size);
  for (let j = 0; j < size; j += 1) {
    unit.fill(0);
    unit[j] = 1;
    const part = predictorLine(fitted.columns, unit, fitted.coding, difficulty);
    if (!part.ok) return null;
    gradient[j] = (numeratorAt(part.value, form, latency, reference) - term * slopeAt(part.value, latency)) / slope;
  }
  let variance = 0;
  for (let a = 0; a < size; a += 1) {
    let row = 0;
    for (let b = 0; b < size; b += 1) row += (fitted.covariance[a * size + b] as number) * (gradient[b] as number);
    variance += (gradient[a] as number) * row;
  }
  if (!(variance >= 0) || !Number.isFinite(variance)) return null;
  const standardError = Math.sqrt(variance);
  const half = normalQuantile(0.5 + level / 2) * standardError;
  const scale = scaleFromTermValue(form, term);
  const lower = scaleFromTermValue(form, term - half);
  const upper = scaleFromTermValue(form, term + half);
  if (![scale, lower, upper].every(Number.isFinite)) return null;
  return { scale, lower, upper, termStandardError: standardError };
}
