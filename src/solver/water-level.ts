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
 * finely as any other) by the Illinois variant of regula falsi (Dowell and
 * Jarratt (1971), "A modified regula falsi method for computing the root of
 * an equation", BIT 11, 168-174), kept inside the bracket, until the bracket
 * is a few ulps wide or the assistance is within 1e-14 of the budget.
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

/**
 * The largest link value in [lowLinked, highLinked] whose level is affordable,
 * given assistance(lowLinked) <= budget < assistance(highLinked). Leaves
 * `box.scales` filled at it and returns it with its assistance.
 */
export function waterLevel(box: LevelBox, budget: number, lowLinked: number, highLinked: number): { readonly linked: number; readonly assistance: number } {
  let low = lowLinked;
  let high = highLinked;
  let lowValue = fillAtLevel(box, low) - budget;
  const highValue = fillAtLevel(box, high) - budget;
  // Illinois: the weights halve the stale end's value when the same end moves twice in a row.
  let lowWeight = lowValue;
  let highWeight = highValue;
  let side = 0;
  const closeEnough = 1e-14 * Math.max(1, budget);
  for (let iteration = 0; iteration < 200; iteration += 1) {
    if (high - low <= 4 * Number.EPSILON * Math.max(1, Math.abs(low), Math.abs(high))) break;
    if (lowValue >= -closeEnough) break;
    let middle = high - (highWeight * (high - low)) / (highWeight - lowWeight);
    if (!(middle > low && middle < high)) middle = 0.5 * (low + high);
    const value = fillAtLevel(box, middle) - budget;
    if (value <= 0) {
      low = middle;
      lowValue = value;
      lowWeight = value;
      if (side === -1) highWeight *= 0.5;
      side = -1;
    } else {
      high = middle;
      highWeight = value;
      if (side === 1) lowWeight *= 0.5;
      side = 1;
    }
  }
  return { linked: low, assistance: fillAtLevel(box, low) };
}
