/**
 * Water-filling under the assistance budget, on real scales: the largest
 * common level theta such that every player raised to theta (within their
 * own bounds) costs at most the budget.
 *
 * At a level theta each player takes the scale at which their curve reaches
 * theta, kept within [low_i, high_i]; with a ratio (answers without a step)
 * everyone is then lifted to max(floor, largest / ratio). Every part of this
 * is non-decreasing in theta, so the assistance, sum of (s_i - 1)+, is too,
 * and continuous: the largest affordable level is the root of
 * assistance(theta) = budget. It is found on the link scale g(theta) (so that
 * levels near 0 or 1, players around a second of latency, are resolved as
 * finely as any other): for point latencies by Newton's method on the
 * assistance's derivative, else by regula falsi with the Anderson-Bjorck weights
 * (Anderson and Bjorck (1973), "A new high order method of regula falsi
 * type for computing a root of an equation", BIT 13, 253-264; the Illinois
 * halving of Dowell and Jarratt (1971) where their factor is not positive),
 * every step kept inside the bracket (and bisection whenever two steps have
 * not halved it), until the bracket is a few ulps wide or the assistance is
 * within the caller's tolerance of the budget.
 * The level returned is the bracket's affordable end.
 *
 * Cost: O(players x samples) per level (closed-form inverse for a point
 * latency, a safeguarded Newton solve for samples), times the iterations
 * (about 5-15).
 */
import type { Link } from '../model/links.js';
import { type CurveSet, inverseTerm } from './player-curve.js';
import { type ScaleForm, scaleOf } from './player-ceilings.js';
import { EXCESS_OVER_ONE, PLAIN, orderFreeSum } from './workspace.js';

export interface LevelBox {
  readonly curves: CurveSet;
  readonly link: Link;
  readonly form: ScaleForm;
  /** Per player: the lowest and highest scale, and their scale terms h(s). */
  readonly low: Float64Array;
  readonly high: Float64Array;
  readonly lowTerm: Float64Array;
  readonly highTerm: Float64Array;
  /** The ratio to lift to (answers without a step), or null. */
  readonly ratio: number | null;
  readonly floor: number;
  /** Receives each player's scale at the level. */
  readonly scales: Float64Array;
  /** Receives the assistance's derivative in the link value at the last level filled (NaN: unknown). */
  slope: number;
  /** Scratch: each player's share of that derivative. */
  readonly changes: Float64Array;
}

/**
 * Fill `box.scales` at the level whose link value is `linked`; returns the
 * assistance (an order-free sum). For point latencies it also leaves in
 * `box.slope` the assistance's derivative in the link value (players within
 * their bounds: ds/d(link) = s / beta for log s, 1 / beta for s; lifted
 * players follow the largest scale / ratio), for Newton steps; NaN for
 * sampled curves.
 */
export function fillAtLevel(box: LevelBox, linked: number): number {
  const { curves, link, form, low, high, lowTerm, highTerm, scales } = box;
  const count = curves.count;
  const level = link.inverse(linked);
  const points = (curves.offsets[count] as number) === count;
  const logForm = form === 'log';
  const betas = curves.betas;
  let largest = -Infinity;
  let largestSlope = 0;
  const changes = box.changes;
  for (let player = 0; player < count; player += 1) {
    const bottom = lowTerm[player] as number;
    const topTerm = highTerm[player] as number;
    let scale: number;
    let change = 0;
    if (!(topTerm > bottom)) scale = low[player] as number;
    else {
      const term = inverseTerm(curves, player, link, level, linked, bottom, topTerm);
      if (term <= bottom) scale = low[player] as number;
      else if (term >= topTerm) scale = high[player] as number;
      else {
        scale = scaleOf(form, term);
        if (points) change = (logForm ? scale : 1) / (betas[player] as number);
      }
    }
    scales[player] = scale;
    changes[player] = scale > 1 ? change : 0;
    if (scale > largest) {
      largest = scale;
      largestSlope = change;
    }
  }
  if (box.ratio !== null) {
    const lifted = largest / box.ratio;
    const lift = Math.max(box.floor, lifted);
    const liftSlope = lifted > box.floor && lift > 1 ? largestSlope / box.ratio : 0;
    for (let player = 0; player < count; player += 1) {
      const scale = scales[player] as number;
      if (scale < lift) {
        // The player's own change no longer counts: they follow the lift.
        scales[player] = lift;
        changes[player] = liftSlope;
      }
    }
  }
  // Order-free like the assistance, so that permuting the players cannot move a Newton step by a bit.
  box.slope = points ? orderFreeSum(changes, count, PLAIN) : Number.NaN;
  return orderFreeSum(scales, count, EXCESS_OVER_ONE);
}

/** A bracket of the water level: link values whose assistance is known to be within the budget (low) and above it (high). */
export interface LevelBracket {
  readonly low: number;
  readonly lowAssistance: number;
  readonly high: number;
  readonly highAssistance: number;
}

/**
 * The largest link value in the bracket whose level is affordable, given
 * assistance(low) <= budget < assistance(high): it stops when the bracket is
 * a few ulps wide or the affordable end is within `closeEnough` of the
 * budget. `hint`, a level from a similar problem, is tried first. Leaves
 * `box.scales` filled at it and returns it with its assistance.
 */
export function waterLevel(box: LevelBox, budget: number, bracket: LevelBracket, closeEnough: number, hint = Number.NaN): { readonly linked: number; readonly assistance: number } {
  let { low, high } = bracket;
  let lowValue = bracket.lowAssistance - budget;
  let lowWeight = lowValue;
  let highWeight = bracket.highAssistance - budget;
  let side = 0;
  let filledAtLow = false;
  let width = Infinity;
  let lastLinked = Number.NaN;
  let lastValue = Number.NaN;
  let lastSlope = Number.NaN;
  let steppedBelow = false;
  for (let iteration = 0; iteration < 200; iteration += 1) {
    if (high - low <= 4 * Number.EPSILON * Math.max(1, Math.abs(low), Math.abs(high))) break;
    if (lowValue >= -closeEnough) break;
    // Safeguard (as Brent's method does): if two steps have not halved the bracket, bisect, so that kinks (players
    // reaching their bounds) cannot slow the search below bisection's pace.
    let middle = high - (highWeight * (high - low)) / (highWeight - lowWeight);
    if (!(middle > low && middle < high) || (iteration % 2 === 0 && high - low > 0.5 * width)) middle = 0.5 * (low + high);
    if (iteration % 2 === 0) width = high - low;
    // Newton's step from the last level, where its derivative is known (point latencies), inside the bracket.
    if (lastSlope > 0) {
      const newton = lastLinked - lastValue / lastSlope;
      if (newton > low && newton < high) middle = newton;
    }
    // A level from a similar problem (the lift next to this one) is a better first try than the secant.
    if (iteration === 0 && hint > low && hint < high) middle = hint;
    // The root reached from above: step just below it by twice the estimated distance (and a few ulps), so that the
    // affordable end arrives too instead of creeping up by bisection.
    // Once only in a row: on a flat stretch (everyone at a bound) the estimate is no good, and bisection takes over.
    let steppingBelow = false;
    if (side === 1 && highWeight <= closeEnough && !steppedBelow) {
      const slope = lastSlope > 0 && lastLinked === high ? lastSlope : (highWeight - lowValue) / (high - low);
      const below = high - 2 * (highWeight / slope) - 4 * Number.EPSILON * Math.max(1, Math.abs(high));
      if (below > low && below < high) {
        middle = below;
        steppingBelow = true;
      }
    } else if (steppedBelow) middle = 0.5 * (low + high);
    steppedBelow = steppingBelow;
    const value = fillAtLevel(box, middle) - budget;
    lastLinked = middle;
    lastValue = value;
    lastSlope = box.slope;
    // Anderson-Bjorck: when the same end moves twice, the stale end's weight shrinks by m = 1 - f(new) / f(old), or
    // halves (Illinois) when m <= 0 (Anderson and Bjorck (1973), BIT 13, 253-264).
    if (value <= 0) {
      if (side === -1) {
        const shrink = 1 - value / lowWeight;
        highWeight *= shrink > 0 ? shrink : 0.5;
      }
      low = middle;
      lowValue = value;
      lowWeight = value;
      filledAtLow = true;
      side = -1;
    } else {
      if (side === 1) {
        const shrink = 1 - value / highWeight;
        lowWeight *= shrink > 0 ? shrink : 0.5;
      }
      high = middle;
      highWeight = value;
      filledAtLow = false;
      side = 1;
    }
  }
  return { linked: low, assistance: filledAtLow ? lowValue + budget : fillAtLevel(box, low) };
}
