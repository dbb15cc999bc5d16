/**
 * The core of the lobby solver: given each eligible player's performance
 * curve and the target T, find scales that bring everyone to T where the rules
 * allow, and otherwise maximise the lowest expected performance, then the
 * next lowest, and so on (leximin), with performance counted up to T.
 *
 * Method, for a common level L <= T:
 * 1. desired: each player's inverse of their curve at L, kept in
 *    [floor, search limit] (the search limit is the desired scale from which
 *    the soft cap grants the hard cap);
 * 2. granted: the soft cap maps a desired scale d above its threshold a to
 *    a + fraction (d - a), and nothing exceeds the hard cap;
 * 3. ratio: no granted scale may exceed `max_scale_ratio` times the smallest
 *    one. The cheapest way to honour that without taking anything from the
 *    worst-off is to lift the smallest scales to (largest granted) / ratio:
 *    lifting only raises someone already at or above L, so it never lowers
 *    the minimum (holding the largest scales down would). Lifted players are
 *    labelled `ratio`;
 * 4. budget: every step above is non-decreasing in L, so the assistance used,
 *    sum over players of (scale - 1)+, is non-decreasing too, and bisection
 *    finds the largest L whose assistance fits the budget (water-filling).
 *    Players a cap holds below L keep their largest allowed scale, which is
 *    what leximin asks;
 * 5. quantisation rounds every scale down to the grid (so caps and the
 *    budget still hold), then holds the largest scales to the grid point at
 *    or below ratio x the smallest rounded one;
 * 6. order: walking from the best-connected player to the worst (the caller's
 *    `order`), a player's scale is lowered, never below the previous player's
 *    scale (nor below largest / ratio), until their expected performance does
 *    not exceed the previous player's. After rounding this is what keeps
 *    "no over-compensation" true; without rounding it matters only for the
 *    soft cap and for sampled latencies, whose curves can cross.
 *
 * Every step only lowers scales that an earlier step set, except the ratio
 * lift, whose cost the budget bisection already counts; so the floor, the
 * hard cap, the ratio and the budget hold for the final scales.
 */
import { type Result, error, fail, ok } from '../issues.js';
import type { Link } from '../model/links.js';
import type { CompiledRules } from './rules.js';
import type { PredictorLine } from '../model/compile.js';
import { type CurveSet, expectedAtTerm, inverseTerm } from './player-curve.js';
import { EXCESS_OVER_ONE, SolveWorkspace, orderFreeSum } from './workspace.js';

/** Why a player's scale is what it is: the constraint that holds it, or `none`. */
export const BINDINGS = ['none', 'floor', 'cap', 'soft_cap', 'ratio', 'budget', 'quantisation', 'ineligible'] as const;
export type Binding = (typeof BINDINGS)[number];

const NONE = 0;
const FLOOR = 1;
const CAP = 2;
const SOFT_CAP = 3;
const RATIO = 4;
const BUDGET = 5;
const QUANTISATION = 6;
/** Index of `ineligible` in BINDINGS. */
export const INELIGIBLE = 7;

/** Arrays are indexed by eligible slot 0 .. count - 1 and may be longer (they live in a `SolveWorkspace`). */
export interface ScaleSolution {
  readonly count: number;
  readonly target: number;
  /** The common level reached by every player no cap holds back (equals target unless a budget binds). */
  readonly level: number;
  readonly scales: Float64Array;
  readonly before: Float64Array;
  readonly after: Float64Array;
  /** Index into `BINDINGS`, per player. */
  readonly binding: Uint8Array;
  /** Assistance used: sum over players of (scale - 1) for scales above 1. */
  readonly assistance: number;
}

/** Probability tolerance under which a player counts as at the target. */
export const AT_TARGET_TOLERANCE = 1e-9;
/** Relative tolerance for comparing scales with a limit. */
const SCALE_TOLERANCE = 1e-12;

export type ScaleForm = 'log' | 'raw';

export function termOf(form: ScaleForm, scale: number): number {
  return form === 'log' ? Math.log(scale) : scale;
}

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

/** The largest multiple of `step` at or below `value` (a value within 1e-9 steps below a multiple counts as on it, and is kept). */
export function gridDown(value: number, step: number): number {
  const rounded = Math.floor(value / step + 1e-9) * step;
  return rounded < value ? rounded : value;
}

/**
 * True when the solver needs the players' order (best-connected first) for the
 * walk of step 6: with rounding, with sampled curves, and with a soft cap
 * unless the model makes the walk a no-op. For point latencies, a soft cap
 * cannot cause over-compensation when the scale coefficient does not fall
 * with latency (b1 >= 0) and the latency slope a1 + b1 h is <= 0 over the
 * searched scales: a player's shortfall in the linear predictor is then
 * b (h(d) - h(granted(d))), non-decreasing in latency on both factors.
 */
export function needsOrder(curves: CurveSet, rules: CompiledRules, line: PredictorLine, form: ScaleForm): boolean {
  if (rules.quantisation_step !== null || (curves.offsets[curves.count] as number) !== curves.count) return true;
  return softCapMayOverCompensate(rules, line, form);
}

/** For point latencies: whether the soft cap could leave a higher-latency player above a lower-latency one (see `needsOrder`). */
export function softCapMayOverCompensate(rules: CompiledRules, line: PredictorLine, form: ScaleForm): boolean {
  if (rules.soft_cap === null) return false;
  const lowTerm = termOf(form, rules.scale_floor);
  const highTerm = termOf(form, searchLimit(rules));
  const safe = line.scaleSlopePerMs >= 0 && line.basePerMs + line.scaleSlopePerMs * lowTerm <= 0 && line.basePerMs + line.scaleSlopePerMs * highTerm <= 0;
  return !safe;
}

/** E_i at scale 1 for every player: the performance before compensation. */
export function expectedBefore(curves: CurveSet, link: Link, form: ScaleForm, out: Float64Array): Float64Array {
  const unitTerm = termOf(form, 1);
  for (let player = 0; player < curves.count; player += 1) out[player] = expectedAtTerm(curves, player, link, unitTerm);
  return out;
}

interface Work {
  readonly curves: CurveSet;
  readonly link: Link;
  readonly form: ScaleForm;
  readonly rules: CompiledRules;
  readonly lowTerm: number;
  readonly highTerm: number;
  readonly limit: number;
  readonly desired: Float64Array;
  readonly granted: Float64Array;
  readonly scales: Float64Array;
}

/** Steps 1-3 at a level; returns the assistance used (an order-free sum, so that it does not depend on the players' input order). */
function allocate(work: Work, level: number): number {
  const { curves, link, form, rules, lowTerm, highTerm, limit, desired, granted, scales } = work;
  const count = curves.count;
  const floor = rules.scale_floor;
  const linked = link.link(level);
  let largest = -Infinity;
  for (let player = 0; player < count; player += 1) {
    const term = inverseTerm(curves, player, link, level, linked, lowTerm, highTerm);
    let wanted = term <= lowTerm ? floor : term >= highTerm ? limit : scaleOf(form, term);
    // Within rounding of the floor counts as the floor, so that a player who needs nothing costs nothing.
    if (wanted < floor * (1 + SCALE_TOLERANCE)) wanted = floor;
    else if (wanted > limit) wanted = limit;
    desired[player] = wanted;
    const given = softCapped(wanted, rules);
    granted[player] = given;
    if (given > largest) largest = given;
  }
  const ratio = rules.max_scale_ratio;
  const lift = ratio === null ? -Infinity : Math.max(floor, largest / ratio);
  for (let player = 0; player < count; player += 1) {
    const given = granted[player] as number;
    scales[player] = given > lift ? given : lift;
  }
  // The budget's bisection compares this sum with the budget, so it must not depend on the players' order; without a
  // budget it is reported only once, at the end.
  return rules.assistance_budget === null ? 0 : orderFreeSum(scales, count, EXCESS_OVER_ONE);
}

/**
 * Solve the scales of the eligible players.
 *
 * @param curves the eligible players' curves.
 * @param before E_i(1) per player (`expectedBefore`).
 * @param target T.
 * @param order player indices from best-connected to worst (highest `before`
 *   first, ties broken by something independent of input order, e.g. the
 *   player id). Used when `needsOrder` says so (a fallback by `before`, then
 *   index, is built if it is null then); otherwise ignored.
 * @param line the predictor line (for `needsOrder`).
 * @param workspace arrays to work in; the solution's arrays point into it.
 * @returns the solution, or an issue when the rules contradict themselves for
 *   this lobby (a budget smaller than the floor alone costs).
 *
 * Cost: O(players x samples) per level; with a binding budget about 50 levels
 * (bisection to 1e-15 in probability).
 */
export function solveScales(
  curves: CurveSet,
  before: Float64Array,
  target: number,
  link: Link,
  form: ScaleForm,
  rules: CompiledRules,
  order: Int32Array | null,
  line: PredictorLine,
  workspace: SolveWorkspace = new SolveWorkspace(),
): Result<ScaleSolution> {
  const count = curves.count;
  workspace.reserve(count, 0);
  if (!needsOrder(curves, rules, line, form)) order = null;
  else if (order === null) order = fallbackOrder(before, count);
  const floor = rules.scale_floor;
  const cap = rules.scale_cap;
  const limit = searchLimit(rules);
  const work: Work = {
    curves,
    link,
    form,
    rules,
    lowTerm: termOf(form, floor),
    highTerm: termOf(form, limit),
    limit,
    desired: workspace.desired,
    granted: workspace.granted,
    scales: workspace.continuous,
  };
  let level = target;
  let assistance = allocate(work, target);
  const budget = rules.assistance_budget;
  if (budget !== null && assistance > budget) {
    let low = Infinity;
    for (let player = 0; player < count; player += 1) low = Math.min(low, expectedAtTerm(curves, player, link, work.lowTerm));
    low = Math.min(low, target);
    const floorCost = count * Math.max(0, floor - 1);
    if (floorCost > budget) {
      return fail([
        error('budget_below_floor', 'rules.assistance_budget', `\`assistance_budget\` requires at least what the floor alone costs in this lobby, ${count} x (${floor} - 1) = ${floorCost}, got ${budget}`),
      ]);
    }
    if (allocate(work, low) > budget) {
      // Only rounding in the inverse (a target near probability 1) can make the lowest level cost more than the floor:
      // then everyone stays at the floor.
      work.scales.fill(floor);
      assistance = floorCost;
    } else {
      let high = target;
      for (let iteration = 0; iteration < 200 && high - low > 1e-15; iteration += 1) {
        const middle = 0.5 * (low + high);
        if (middle <= low || middle >= high) break;
        if (allocate(work, middle) <= budget) low = middle;
        else high = middle;
      }
      assistance = allocate(work, low);
    }
    level = low;
  }
  const continuous = work.scales;
  const scales = workspace.scales;
  scales.set(continuous.subarray(0, count));
  const step = rules.quantisation_step;
  const ratio = rules.max_scale_ratio;
  if (step !== null) {
    let smallest = Infinity;
    for (let player = 0; player < count; player += 1) {
      const rounded = Math.max(floor, gridDown(continuous[player] as number, step));
      scales[player] = rounded;
      if (rounded < smallest) smallest = rounded;
    }
    if (ratio !== null) {
      const bound = Math.max(smallest, gridDown(ratio * smallest, step));
      for (let player = 0; player < count; player += 1) if ((scales[player] as number) > bound) scales[player] = bound;
    }
  }
  const loweredBy = order === null ? null : orderWalk(work, scales, order, step, workspace.loweredBy, workspace.after);
  const after = workspace.after;
  // The walk leaves every player's final performance in `after`.
  if (loweredBy === null) for (let player = 0; player < count; player += 1) after[player] = expectedAtTerm(curves, player, link, termOf(form, scales[player] as number));

  // Labels, in order when a walk ran (a player the walk lowered takes the label of the player who bounds them).
  const binding = workspace.binding;
  const tolerance = AT_TARGET_TOLERANCE;
  for (let position = 0; position < count; position += 1) {
    const player = order === null ? position : (order[position] as number);
    const performance = after[player] as number;
    const scale = scales[player] as number;
    const unrounded = continuous[player] as number;
    let label = NONE;
    if (performance >= target - tolerance) {
      if (performance <= target + tolerance) label = NONE;
      else if (unrounded > (work.granted[player] as number) * (1 + SCALE_TOLERANCE)) label = RATIO;
      else if (scale <= floor * (1 + SCALE_TOLERANCE)) label = FLOOR;
    } else if (unrounded >= cap * (1 - SCALE_TOLERANCE)) label = CAP;
    else if ((work.granted[player] as number) < (work.desired[player] as number) * (1 - SCALE_TOLERANCE)) label = SOFT_CAP;
    else if (level < target - tolerance && expectedAtTerm(curves, player, link, termOf(form, unrounded)) < target - tolerance) label = BUDGET;
    else if (scale < unrounded * (1 - SCALE_TOLERANCE)) label = QUANTISATION;
    else if (loweredBy !== null && (loweredBy[player] as number) >= 0) label = binding[loweredBy[player] as number] as number;
    binding[player] = label;
  }
  assistance = orderFreeSum(scales, count, EXCESS_OVER_ONE);
  return ok({ count, target, level, scales, before, after, binding, assistance });
}

/**
 * Step 6 (see the module comment). Leaves each player's final performance in
 * `after`; returns, per player, the index of the player whose performance
 * bounded them, or -1.
 */
function orderWalk(work: Work, scales: Float64Array, order: Int32Array, step: number | null, loweredBy: Int32Array, after: Float64Array): Int32Array {
  const { curves, link, form, rules } = work;
  const count = curves.count;
  let largest = -Infinity;
  for (let player = 0; player < count; player += 1) if ((scales[player] as number) > largest) largest = scales[player] as number;
  const ratio = rules.max_scale_ratio;
  const lowest = ratio === null ? rules.scale_floor : Math.max(rules.scale_floor, largest / ratio);
  loweredBy.fill(-1, 0, count);
  let previousScale = -Infinity;
  let previousPerformance = Infinity;
  let bounding = -1;
  for (let position = 0; position < count; position += 1) {
    const player = order[position] as number;
    let scale = scales[player] as number;
    let performance = expectedAtTerm(curves, player, link, termOf(form, scale));
    if (performance > previousPerformance) {
      const bottom = scale >= previousScale ? Math.max(previousScale, lowest) : lowest;
      const start = scale;
      if (step !== null) {
        while (performance > previousPerformance && scale - step >= bottom * (1 - SCALE_TOLERANCE)) {
          scale = Math.max(scale - step, rules.scale_floor);
          performance = expectedAtTerm(curves, player, link, termOf(form, scale));
        }
      } else if (bottom < scale) {
        const term = inverseTerm(curves, player, link, previousPerformance, link.link(previousPerformance), termOf(form, bottom), termOf(form, scale));
        scale = Math.min(start, Math.max(bottom, scaleOf(form, term)));
        performance = expectedAtTerm(curves, player, link, termOf(form, scale));
      }
      if (scale < start) loweredBy[player] = bounding;
      scales[player] = scale;
    }
    after[player] = performance;
    previousScale = scale;
    if (performance <= previousPerformance) {
      previousPerformance = performance;
      bounding = player;
    }
  }
  return loweredBy;
}

/** Highest `before` first, ties by index: used only when a caller passes no order. */
function fallbackOrder(before: Float64Array, count: number): Int32Array {
  const order = new Int32Array(count);
  for (let index = 0; index < count; index += 1) order[index] = index;
  return order.sort((left, right) => (before[right] as number) - (before[left] as number) || left - right);
}
