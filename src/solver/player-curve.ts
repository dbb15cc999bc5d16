/**
 * Players' expected performance as a function of their scale, for a whole
 * lobby at once:
 *
 *     E_i(s) = mean over latency samples j of player i of  g^-1( alpha_j + beta_j h(s) )
 *
 * where g is the link, h(s) the scale term (log s or s) and alpha_j, beta_j
 * the model's predictor line at sample j's latency. E_i is strictly increasing
 * in s exactly when every beta_j > 0 (each summand is then increasing); the
 * solver refuses a model for which that fails.
 *
 * The players' samples are held in one flat pair of arrays (`CurveSet`), so a
 * lobby costs two allocations, not two per player.
 *
 * The inverse has a closed form for one latency value,
 * h(s) = (g(T) - alpha) / beta; for several samples it is found by a
 * safeguarded Newton iteration inside a bracket (Press, W. H. et al. (2007),
 * Numerical Recipes, 3rd ed., section 9.4, `rtsafe`), to 1e-12 in probability.
 */
import type { Link } from '../model/links.js';
import type { PredictorLine } from '../model/compile.js';

/** The predictor lines of every sample of every player; player i owns samples offsets[i] .. offsets[i + 1] - 1. */
export interface CurveSet {
  readonly count: number;
  readonly offsets: Int32Array;
  readonly alphas: Float64Array;
  readonly betas: Float64Array;
}

/** Tolerance on probability for the iterative inverse. */
export const PROBABILITY_TOLERANCE = 1e-12;

const MAXIMUM_ITERATIONS = 200;

/**
 * Build the curves of players from their latencies (one array of latencies per
 * player, each non-empty) at a predictor line.
 *
 * Cost: O(total samples); three typed-array allocations.
 */
export function curveSet(line: PredictorLine, latencies: readonly ArrayLike<number>[]): CurveSet {
  const count = latencies.length;
  const offsets = new Int32Array(count + 1);
  let total = 0;
  for (let player = 0; player < count; player += 1) {
    total += (latencies[player] as ArrayLike<number>).length;
    offsets[player + 1] = total;
  }
  const alphas = new Float64Array(total);
  const betas = new Float64Array(total);
  let position = 0;
  for (let player = 0; player < count; player += 1) {
    const samples = latencies[player] as ArrayLike<number>;
    for (let index = 0; index < samples.length; index += 1) {
      const latency = samples[index] as number;
      alphas[position] = line.base + line.basePerMs * latency;
      betas[position] = line.scaleSlope + line.scaleSlopePerMs * latency;
      position += 1;
    }
  }
  return { count, offsets, alphas, betas };
}

/** E_i at a scale-term value h(s). Cost: one inverse link per sample. */
export function expectedAtTerm(curves: CurveSet, player: number, link: Link, term: number): number {
  const start = curves.offsets[player] as number;
  const end = curves.offsets[player + 1] as number;
  const { alphas, betas } = curves;
  if (end - start === 1) return link.inverse((alphas[start] as number) + (betas[start] as number) * term);
  let sum = 0;
  for (let index = start; index < end; index += 1) sum += link.inverse((alphas[index] as number) + (betas[index] as number) * term);
  return sum / (end - start);
}

/**
 * The scale-term value at which player `player`'s E reaches `target`, searched
 * in [low, high]: `low` if E(low) >= target, `high` if E(high) < target.
 * `linkedTarget` is `link.link(target)`, passed in so that a lobby computes it
 * once per level rather than once per player.
 *
 * One sample: closed form. Several: Newton steps kept inside a shrinking
 * bracket, bisecting whenever a step would leave it, until E is within
 * `PROBABILITY_TOLERANCE` of the target or the bracket is a few ulps wide.
 */
export function inverseTerm(
  curves: CurveSet,
  player: number,
  link: Link,
  target: number,
  linkedTarget: number,
  low: number,
  high: number,
): number {
  const start = curves.offsets[player] as number;
  const end = curves.offsets[player + 1] as number;
  const { alphas, betas } = curves;
  if (end - start === 1) {
    const term = (linkedTarget - (alphas[start] as number)) / (betas[start] as number);
    if (!(term > low)) return low;
    if (!(term < high)) return high;
    return term;
  }
  // Start from the closed form of the average line, kept inside the bracket. The bracket ends are evaluated only
  // if the iteration runs into them (a player a cap or the floor holds), not for every player.
  let alphaSum = 0;
  let betaSum = 0;
  for (let index = start; index < end; index += 1) {
    alphaSum += alphas[index] as number;
    betaSum += betas[index] as number;
  }
  const count = end - start;
  let lower = low;
  let upper = high;
  let term = (linkedTarget - alphaSum / count) / (betaSum / count);
  if (!(term >= lower)) term = lower;
  else if (!(term <= upper)) term = upper;
  const logistic = link.name === 'logit';
  let lowChecked = false;
  let highChecked = false;
  for (let iteration = 0; iteration < MAXIMUM_ITERATIONS; iteration += 1) {
    let value = 0;
    let slope = 0;
    if (logistic) {
      // One exponential gives both mu and dmu/dx = mu (1 - mu) = e / (1 + e)^2 with e = exp(-|x|).
      for (let index = start; index < end; index += 1) {
        const beta = betas[index] as number;
        const predictor = (alphas[index] as number) + beta * term;
        const exponential = Math.exp(predictor >= 0 ? -predictor : predictor);
        const denominator = 1 + exponential;
        value += predictor >= 0 ? 1 / denominator : exponential / denominator;
        slope += (beta * exponential) / (denominator * denominator);
      }
    } else {
      for (let index = start; index < end; index += 1) {
        const beta = betas[index] as number;
        const predictor = (alphas[index] as number) + beta * term;
        value += link.inverse(predictor);
        slope += beta * link.derivative(predictor);
      }
    }
    const difference = value / count - target;
    if (Math.abs(difference) <= PROBABILITY_TOLERANCE) return term;
    if (difference < 0) lower = term;
    else upper = term;
    if (upper - lower <= 4 * Number.EPSILON * Math.max(1, Math.abs(term))) return term;
    const newton = slope > 0 ? term - (difference * count) / slope : Number.NaN;
    if (!(newton < upper) && upper === high && !highChecked) {
      highChecked = true;
      if (expectedAtTerm(curves, player, link, high) < target) return high;
    }
    if (!(newton > lower) && lower === low && !lowChecked) {
      lowChecked = true;
      if (expectedAtTerm(curves, player, link, low) >= target) return low;
    }
    // A Newton step that leaves the bracket is replaced by bisection; across a very wide bracket (a raw scale with an
    // enormous cap, where the derivative underflows far from the root) by a step of sqrt(width), which shrinks the
    // width's exponent by half each time instead of by one bit.
    const width = upper - lower;
    term = newton > lower && newton < upper ? newton : width > 1e4 ? (difference < 0 ? lower + Math.sqrt(width) : upper - Math.sqrt(width)) : lower + 0.5 * width;
  }
  return term;
}
