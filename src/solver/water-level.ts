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
 * finely as any other) by regula falsi with the Anderson-Bjorck weights
 * (Anderson and Bjorck (1973), "A new high order method of regula falsi
 * type for computing a root of an equation", BIT 13, 253-264; the Illinois
 * halving of Dowell and Jarratt (1971) where their factor is not positive),
 * kept inside the bracket, until the bracket is a few ulps wide or the
 * assistance is within the caller's tolerance of the budget.
 * The level returned is the bracket's affordable end.
 *
 * Cost: O(players x samples) per level (closed-form inverse for a point
 * latency, a safeguarded Newton solve for samples), times the iterations
 * (about 5-15).
 */
import type { Link } from '../model/links.js';
import { type CurveSet, inverseTerm } from './player-curve.js';
import { type ScaleForm, scaleOf } from './player-ceilings.js';
import { EXCESS_OVER_ONE, orderFreeSum } from './workspace.js';

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
}

/** Fill `box.scales` at the level whose link value is `linked`; returns the assistance (an order-free sum). */
export function fillAtLevel(box: LevelBox, linked: number): number {
  const { curves, link, form, low, high, lowTerm, highTerm, scales } = box;
  const count = curves.count;
  const level = link.inverse(linked);
  let largest = -Infinity;
  for (let player = 0; player < count; player += 1) {
    const bottom = lowTerm[player] as number;
    const topTerm = highTerm[player] as number;
    let scale: number;
    if (!(topTerm > bottom)) scale = low[player] as number;
    else {
      const term = inverseTerm(curves, player, link, level, linked, bottom, topTerm);
      scale = term <= bottom ? (low[player] as number) : term >= topTerm ? (high[player] as number) : scaleOf(form, term);
    }
    scales[player] = scale;
    if (scale > largest) largest = scale;
  }
  if (box.ratio !== null) {
    const lift = Math.max(box.floor, largest / box.ratio);
    for (let player = 0; player < count; player += 1) if ((scales[player] as number) < lift) scales[player] = lift;
  }
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
 * budget. Leaves `box.scales` filled at it and returns it with its
 * assistance.
 */
export function waterLevel(box: LevelBox, budget: number, bracket: LevelBracket, closeEnough: number): { readonly linked: number; readonly assistance: number } {
  let { low, high } = bracket;
  let lowValue = bracket.lowAssistance - budget;
  let lowWeight = lowValue;
  let highWeight = bracket.highAssistance - budget;
  let side = 0;
  let filledAtLow = false;
  let width = Infinity;
  for (let iteration = 0; iteration < 200; iteration += 1) {
    if (high - low <= 4 * Number.EPSILON * Math.max(1, Math.abs(low), Math.abs(high))) break;
    if (lowValue >= -closeEnough) break;
    // Safeguard (as Brent's method does): if two steps have not halved the bracket, bisect, so that kinks (players
    // reaching their bounds) cannot slow the search below bisection's pace.
    let middle = high - (highWeight * (high - low)) / (highWeight - lowWeight);
    if (!(middle > low && middle < high) || (iteration % 2 === 0 && high - low > 0.5 * width)) middle = 0.5 * (low + high);
    if (iteration % 2 === 0) width = high - low;
    // The root reached from above: step just below it by twice the secant's estimate (and a few ulps), so that the
    // affordable end arrives too instead of creeping up by bisection.
    if (side === 1 && highWeight <= closeEnough) {
      const slope = (highWeight - lowValue) / (high - low);
      const below = high - 2 * (highWeight / slope) - 4 * Number.EPSILON * Math.max(1, Math.abs(high));
      if (below > low && below < high) middle = below;
    }
    const value = fillAtLevel(box, middle) - budget;
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
