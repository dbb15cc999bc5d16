/**
 * The core of the lobby solver: given each eligible player's performance
 * curve, find scales that bring everyone to the target where the rules allow,
 * and otherwise maximise the lowest expected performance, then the next
 * lowest, and so on (leximin).
 *
 * Method. For a common level L <= T, each player's desired scale is the
 * inverse of their curve at L, kept in [floor, search limit]; the soft cap maps
 * it to a granted scale (never above the hard cap); the ratio limit lowers
 * every granted scale to at most ratio x the smallest one. Every step is
 * non-decreasing in L, so the assistance used, sum of (scale - 1)+, is too:
 * with a budget, bisection finds the largest L whose assistance fits
 * (water-filling). Players a cap holds below L stay at their largest allowed
 * scale, which is what leximin asks. Quantisation then rounds down to the grid,
 * walking from the best-connected player to the worst so that expected
 * performance stays non-increasing along that order (no over-compensation)
 * and scales stay non-decreasing (no reward for a worse measured latency).
 */
import type { Link } from '../model/links.js';
import { scaleFromTermValue, scaleTermValue } from '../model/terms.js';
import type { CompiledRules } from './rules.js';
import { type PlayerCurve, expectedAtTerm, inverseTerm } from './player-curve.js';

export type Binding = 'none' | 'floor' | 'cap' | 'soft_cap' | 'ratio' | 'budget' | 'quantisation' | 'ineligible';

export interface ScaleSolution {
  readonly target: number;
  /** The common level reached by every player no cap holds back (equals target unless a budget binds). */
  readonly level: number;
  readonly scales: Float64Array;
  readonly before: Float64Array;
  readonly after: Float64Array;
  readonly binding: Binding[];
  /** Assistance used: sum over players of (scale - 1) for scales above 1. */
  readonly assistance: number;
}

/** Probability tolerance under which a player counts as at the target. */
export const AT_TARGET_TOLERANCE = 1e-9;

interface Stage {
  desired: Float64Array;
  granted: Float64Array;
  limited: Float64Array;
}

function softCapped(desired: number, rules: CompiledRules): number {
  const soft = rules.soft_cap;
  const granted = soft !== null && desired > soft.above ? soft.above + soft.fraction * (desired - soft.above) : desired;
  return Math.min(granted, rules.scale_cap);
}

/** The largest desired scale worth searching for: beyond it the granted scale is the hard cap anyway. */
function searchLimit(rules: CompiledRules): number {
  const soft = rules.soft_cap;
  return soft === null ? rules.scale_cap : soft.above + (rules.scale_cap - soft.above) / soft.fraction;
}

function stagesAt(level: number, curves: readonly PlayerCurve[], link: Link, form: 'log' | 'raw', rules: CompiledRules): Stage {
  const count = curves.length;
  const lowTerm = scaleTermValue(form, rules.scale_floor);
  const highTerm = scaleTermValue(form, searchLimit(rules));
  const desired = new Float64Array(count);
  const granted = new Float64Array(count);
  const limited = new Float64Array(count);
  let smallest = Infinity;
  for (let index = 0; index < count; index += 1) {
    const curve = curves[index] as PlayerCurve;
    const scale = scaleFromTermValue(form, inverseTerm(curve, link, level, lowTerm, highTerm));
    const kept = Math.min(Math.max(scale, rules.scale_floor), searchLimit(rules));
    desired[index] = kept;
    granted[index] = softCapped(kept, rules);
    smallest = Math.min(smallest, granted[index] ?? Infinity);
  }
  const ratioBound = rules.max_scale_ratio === null ? Infinity : rules.max_scale_ratio * smallest;
  for (let index = 0; index < count; index += 1) limited[index] = Math.min(granted[index] ?? 0, ratioBound);
  return { desired, granted, limited };
}

function assistanceOf(scales: ArrayLike<number>): number {
  let sum = 0;
  for (let index = 0; index < scales.length; index += 1) sum += Math.max(0, (scales[index] ?? 1) - 1);
  return sum;
}

/** Round down to the grid, keeping performance non-increasing and scales non-decreasing along `order`. */
function quantise(
  scales: Float64Array,
  curves: readonly PlayerCurve[],
  order: readonly number[],
  link: Link,
  form: 'log' | 'raw',
  rules: CompiledRules,
  step: number,
): Float64Array {
  const toGrid = (value: number) => Math.floor(value / step + 1e-9) * step;
  const rounded = new Float64Array(scales.length);
  let smallest = Infinity;
  for (let index = 0; index < scales.length; index += 1) {
    rounded[index] = Math.max(toGrid(scales[index] ?? 0), toGrid(rules.scale_floor + 1e-12));
    smallest = Math.min(smallest, rounded[index] ?? Infinity);
  }
  // The ratio limit on the rounded smallest scale.
  if (rules.max_scale_ratio !== null) {
    const bound = toGrid(rules.max_scale_ratio * smallest);
    for (let index = 0; index < rounded.length; index += 1) rounded[index] = Math.min(rounded[index] ?? 0, bound);
  }
  let previousScale = -Infinity;
  let previousPerformance = Infinity;
  for (const index of order) {
    const curve = curves[index] as PlayerCurve;
    let scale = Math.max(rounded[index] ?? 0, previousScale);
    let performance = expectedAtTerm(curve, link, scaleTermValue(form, scale));
    while (performance > previousPerformance && scale - step >= previousScale - 1e-12 && scale - step >= rules.scale_floor - 1e-12) {
      scale -= step;
      performance = expectedAtTerm(curve, link, scaleTermValue(form, scale));
    }
    rounded[index] = scale;
    previousScale = scale;
    previousPerformance = Math.min(previousPerformance, performance);
  }
  return rounded;
}

/**
 * Solve the scales of the eligible players, given their curves and the
 * target. `order` lists player indices from best-connected to worst (highest
 * unscaled performance first), used only by quantisation.
 */
export function solveScales(
  curves: readonly PlayerCurve[],
  target: number,
  order: readonly number[],
  link: Link,
  form: 'log' | 'raw',
  rules: CompiledRules,
): ScaleSolution {
  const count = curves.length;
  const floorTerm = scaleTermValue(form, rules.scale_floor);
  const unitTerm = scaleTermValue(form, 1);
  const before = new Float64Array(count);
  let lowestAtFloor = Infinity;
  for (let index = 0; index < count; index += 1) {
    const curve = curves[index] as PlayerCurve;
    before[index] = expectedAtTerm(curve, link, unitTerm);
    lowestAtFloor = Math.min(lowestAtFloor, expectedAtTerm(curve, link, floorTerm));
  }
  let level = target;
  const atTarget = stagesAt(target, curves, link, form, rules);
  let stage = atTarget;
  const budget = rules.assistance_budget;
  if (budget !== null && assistanceOf(atTarget.limited) > budget) {
    let low = Math.min(lowestAtFloor, target);
    let high = target;
    stage = stagesAt(low, curves, link, form, rules);
    if (assistanceOf(stage.limited) <= budget) {
      for (let iteration = 0; iteration < 200 && high - low > 1e-14; iteration += 1) {
        const middle = 0.5 * (low + high);
        const candidate = stagesAt(middle, curves, link, form, rules);
        if (assistanceOf(candidate.limited) <= budget) {
          low = middle;
          stage = candidate;
        } else high = middle;
      }
    }
    level = low;
  }
  const continuous = stage.limited;
  const scales = rules.quantisation_step === null ? continuous : quantise(continuous, curves, order, link, form, rules, rules.quantisation_step);
  const after = new Float64Array(count);
  const binding: Binding[] = new Array<Binding>(count);
  for (let index = 0; index < count; index += 1) {
    const curve = curves[index] as PlayerCurve;
    const scale = scales[index] ?? 1;
    after[index] = expectedAtTerm(curve, link, scaleTermValue(form, scale));
    const performance = after[index] ?? 0;
    const wanted = atTarget.desired[index] ?? 1;
    if (performance >= target - AT_TARGET_TOLERANCE) {
      binding[index] = performance > target + AT_TARGET_TOLERANCE && scale <= rules.scale_floor + 1e-12 ? 'floor' : 'none';
    } else if ((atTarget.granted[index] ?? 0) < wanted - 1e-12) {
      binding[index] = (atTarget.granted[index] ?? 0) >= rules.scale_cap - 1e-12 && (rules.soft_cap === null || wanted >= searchLimit(rules) - 1e-12) ? 'cap' : rules.soft_cap === null ? 'cap' : 'soft_cap';
    } else if ((atTarget.limited[index] ?? 0) < (atTarget.granted[index] ?? 0) - 1e-12) {
      binding[index] = 'ratio';
    } else if (level < target && (continuous[index] ?? 0) < (atTarget.limited[index] ?? 0) - 1e-12) {
      binding[index] = 'budget';
    } else if (scale < (continuous[index] ?? 0) - 1e-12) {
      binding[index] = 'quantisation';
    } else {
      // Within the search limits but short of the target: the floor of the search bracket or the cap.
      binding[index] = scale >= rules.scale_cap - 1e-12 ? 'cap' : 'none';
    }
  }
  return { target, level, scales, before, after, binding, assistance: assistanceOf(scales) };
}
