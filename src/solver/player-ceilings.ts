/**
 * Each eligible player's own limits, before the lobby-wide constraints (ratio,
 * budget) are considered (docs/method.md, section 3, "The answer"):
 *
 * - need_i: the scale at which the player's expected performance E_i reaches
 *   the target T, searched within [floor, search limit] (the search limit is
 *   the desired scale from which the soft cap grants the hard cap); the floor
 *   when E_i(floor) >= T already, Infinity when E_i(search limit) < T;
 * - upper_i: the hard cap, or, where the soft cap applies (need_i above its
 *   threshold a), the granted scale a + f (need_i - a), never above the hard
 *   cap;
 * - with a step q: top_i, the index of the largest multiple of q at or below
 *   upper_i (A_i = the multiples of q in [floor, upper_i]);
 * - the ceiling u_i: the largest allowed scale with E_i(s) <= T, or the
 *   smallest allowed scale if even that exceeds T. Without a step it is
 *   min(upper_i, need_i); with one, the index found from need_i and then
 *   confirmed by evaluating E_i at the grid points around it, so that the
 *   comparison with T is exact and not subject to the inverse's tolerance.
 *
 * Nobody is raised above their ceiling except to the lowest scale the ratio
 * forces (constraint 4 of the definition).
 */
import type { Link } from '../model/links.js';
import type { CompiledRules } from './rules.js';
import { type CurveSet, expectedAtTerm, inverseTerm } from './player-curve.js';
import { type ScaleGrid, gridValue, indexAtOrBelow } from './scale-grid.js';

export type ScaleForm = 'log' | 'raw';

/** h(s): the scale term of the model, log s or s. */
export function termOf(form: ScaleForm, scale: number): number {
  return form === 'log' ? Math.log(scale) : scale;
}

/** The scale for a scale term. */
export function scaleOf(form: ScaleForm, term: number): number {
  return form === 'log' ? Math.exp(term) : term;
}

/** The largest desired scale worth searching for: from it on the granted scale is the hard cap. */
export function searchLimit(rules: CompiledRules): number {
  const soft = rules.soft_cap;
  return soft === null ? rules.scale_cap : soft.above + (rules.scale_cap - soft.above) / soft.fraction;
}

/** The granted scale for a desired one: the soft cap, then the hard cap. */
export function softCapped(desired: number, rules: CompiledRules): number {
  const soft = rules.soft_cap;
  const granted = soft !== null && desired > soft.above ? soft.above + soft.fraction * (desired - soft.above) : desired;
  return granted < rules.scale_cap ? granted : rules.scale_cap;
}

/** Per-player arrays the ceilings are written to (indexed by eligible slot). */
export interface CeilingArrays {
  readonly need: Float64Array;
  readonly upper: Float64Array;
  /** Grid index of the largest allowed scale (with a step only). */
  readonly top: Float64Array;
  /** u_i: a grid index with a step, a scale without. */
  readonly ceiling: Float64Array;
  /** 1 where E_i is already at the target one grid step below the ceiling (a curve flat in floating point). */
  readonly flat: Uint8Array;
}

/**
 * Fill `out` for every player of `curves`. Returns the slot of a player who
 * has no allowed scale on the grid (possible only through rounding, since the
 * rules require the floor to be a multiple of the step and the cap to be at
 * or above the floor), else -1.
 *
 * Cost: one inverse per player (closed form for a point latency, a
 * safeguarded Newton solve for samples), plus about two curve evaluations per
 * player with a step.
 */
export function playerCeilings(curves: CurveSet, link: Link, form: ScaleForm, rules: CompiledRules, target: number, grid: ScaleGrid | null, out: CeilingArrays): number {
  const { need, upper, top, ceiling, flat } = out;
  const floor = rules.scale_floor;
  const cap = rules.scale_cap;
  const limit = searchLimit(rules);
  const lowTerm = termOf(form, floor);
  const highTerm = termOf(form, limit);
  const linkedTarget = link.link(target);
  const soft = rules.soft_cap;
  for (let player = 0; player < curves.count; player += 1) {
    const term = inverseTerm(curves, player, link, target, linkedTarget, lowTerm, highTerm);
    // Past the search limit the need is recorded as Infinity: the caps hold the player, whatever the exact value.
    let wanted: number;
    if (term >= highTerm && expectedAtTerm(curves, player, link, highTerm) < target) wanted = Infinity;
    else wanted = term <= lowTerm ? floor : term >= highTerm ? limit : scaleOf(form, term);
    // Within rounding of the floor counts as the floor, so that a player who needs nothing costs nothing.
    if (wanted < floor * (1 + 1e-12)) wanted = floor;
    else if (wanted > limit && wanted !== Infinity) wanted = limit;
    need[player] = wanted;
    const granted = soft !== null && wanted > soft.above ? Math.min(cap, soft.above + soft.fraction * (wanted - soft.above)) : cap;
    upper[player] = granted;
    if (grid === null) {
      ceiling[player] = wanted < granted ? wanted : granted;
      continue;
    }
    const highest = indexAtOrBelow(grid, granted);
    if (highest < grid.floorIndex) return player;
    top[player] = highest;
    let index = wanted <= floor ? grid.floorIndex : Math.min(highest, Math.max(grid.floorIndex, indexAtOrBelow(grid, wanted)));
    // Confirm against the curve itself: the largest index with E <= T, or the floor's index.
    while (index > grid.floorIndex && expectedAtTerm(curves, player, link, termOf(form, gridValue(grid, index))) > target) index -= 1;
    while (index < highest && expectedAtTerm(curves, player, link, termOf(form, gridValue(grid, index + 1))) <= target) index += 1;
    ceiling[player] = index;
    // A curve that is flat at the target in floating point (a probability that rounds to the target, e.g. to 1) is
    // marked: scales below its ceiling give the same value, and the answer takes the least of them.
    flat[player] = index > grid.floorIndex && expectedAtTerm(curves, player, link, termOf(form, gridValue(grid, index))) === target && expectedAtTerm(curves, player, link, termOf(form, gridValue(grid, index - 1))) >= target ? 1 : 0;
  }
  return -1;
}
