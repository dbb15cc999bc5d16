/**
 * A player's expected performance as a function of their scale:
 *
 *     E(s) = mean over latency samples j of  g^-1( alpha_j + beta_j h(s) )
 *
 * where g is the link, h(s) the scale term (log s or s) and alpha_j, beta_j the
 * model's predictor line at sample j's latency. E is strictly increasing in s
 * exactly when every beta_j > 0 (each summand is then increasing); the solver
 * refuses a model for which that fails.
 *
 * The inverse has a closed form for one latency value,
 * h(s) = (g(T) - alpha) / beta; for several samples it is found by a
 * safeguarded Newton iteration inside a bracket (Press et al., Numerical
 * Recipes, 3rd ed., section 9.4, "rtsafe"), to 1e-12 in probability.
 */
import type { Link } from '../model/links.js';
import type { PredictorLine } from '../model/compile.js';

export interface PlayerCurve {
  readonly alphas: Float64Array;
  readonly betas: Float64Array;
}

/** Tolerance on probability for the iterative inverse. */
export const PROBABILITY_TOLERANCE = 1e-12;

export function playerCurve(line: PredictorLine, latencies: ArrayLike<number>): PlayerCurve {
  const count = latencies.length;
  const alphas = new Float64Array(count);
  const betas = new Float64Array(count);
  for (let index = 0; index < count; index += 1) {
    const latency = latencies[index] ?? 0;
    alphas[index] = line.base + line.basePerMs * latency;
    betas[index] = line.scaleSlope + line.scaleSlopePerMs * latency;
  }
  return { alphas, betas };
}

/** The smallest scale-term coefficient over the samples; E is increasing iff this is > 0. */
export function smallestSlope(curve: PlayerCurve): number {
  let smallest = Infinity;
  for (const beta of curve.betas) smallest = Math.min(smallest, beta);
  return smallest;
}

/** E at a scale-term value (h(s)). */
export function expectedAtTerm(curve: PlayerCurve, link: Link, term: number): number {
  const { alphas, betas } = curve;
  const count = alphas.length;
  let sum = 0;
  for (let index = 0; index < count; index += 1) sum += link.inverse((alphas[index] ?? 0) + (betas[index] ?? 0) * term);
  return sum / count;
}

function expectedAndSlope(curve: PlayerCurve, link: Link, term: number): { value: number; slope: number } {
  const { alphas, betas } = curve;
  const count = alphas.length;
  let value = 0;
  let slope = 0;
  for (let index = 0; index < count; index += 1) {
    const beta = betas[index] ?? 0;
    const predictor = (alphas[index] ?? 0) + beta * term;
    value += link.inverse(predictor);
    slope += beta * link.derivative(predictor);
  }
  return { value: value / count, slope: slope / count };
}

/**
 * The scale-term value at which E reaches `target`, searched in [low, high].
 * Returns `low` if E(low) >= target and `high` if E(high) < target.
 */
export function inverseTerm(curve: PlayerCurve, link: Link, target: number, low: number, high: number): number {
  if (curve.alphas.length === 1) {
    const alpha = curve.alphas[0] ?? 0;
    const beta = curve.betas[0] ?? 1;
    const term = (link.link(target) - alpha) / beta;
    if (!(term > low)) return low;
    if (!(term < high)) return high;
    return term;
  }
  if (expectedAtTerm(curve, link, low) >= target) return low;
  if (expectedAtTerm(curve, link, high) < target) return high;
  let lower = low;
  let upper = high;
  let term = 0.5 * (low + high);
  for (let iteration = 0; iteration < 200; iteration += 1) {
    const { value, slope } = expectedAndSlope(curve, link, term);
    const difference = value - target;
    if (Math.abs(difference) <= PROBABILITY_TOLERANCE) return term;
    if (difference < 0) lower = term;
    else upper = term;
    const newton = slope > 0 ? term - difference / slope : Number.NaN;
    term = newton > lower && newton < upper ? newton : 0.5 * (lower + upper);
    if (upper - lower <= 4 * Number.EPSILON * Math.max(1, Math.abs(term))) return term;
  }
  return term;
}
