/**
 * Whether the answer keeps the players in order: how far any eligible player
 * ends above a better-connected one (a higher expected performance before
 * compensation), and the bound docs/method.md states for it.
 *
 * The answer does not force an order (that cascades down a lobby, see
 * docs/method.md); instead the rounding's effect is bounded and reported:
 * with point latencies and curves that do not cross (hit probability falls
 * with latency at every scale), a worse-connected player ends above a
 * better-connected one by at most one grid step's effect on a player's
 * expected performance, next to their own scale. `step_gain` is that
 * largest one-step effect, and is also the most a player can gain from a
 * measured latency just high enough to move them one step up; the audit
 * judges it against the rules' `accepted_step_gain`.
 */
import type { Link } from '../model/links.js';
import { type CurveSet, expectedAtTerm } from './player-curve.js';
import { type ScaleForm, termOf } from './player-ceilings.js';

export interface OrderingFigures {
  /** The largest amount by which an eligible player's expected performance after ends above that of a player with a higher expected performance before; 0 if nobody does. */
  readonly largest_overtake: number;
  /** The largest change one grid step (up or down from their scale) makes to any eligible player's expected performance; 0 without a step. */
  readonly step_gain: number;
}

/**
 * The ordering figures of a solved lobby.
 *
 * @param sortedCopy, lowestAt, above scratch of at least `count` slots each.
 * Cost: a native sort of the befores and a binary search per player, plus two
 * curve evaluations per player with a step.
 */
export function orderingFigures(
  count: number,
  before: Float64Array,
  after: Float64Array,
  scales: Float64Array,
  step: number | null,
  floor: number,
  curves: CurveSet,
  link: Link,
  form: ScaleForm,
  sortedCopy: Float64Array,
  lowestAt: Float64Array,
  above: Int32Array,
): OrderingFigures {
  // Rank each player by how many have a strictly higher before (a native sort and a binary search each); the lowest
  // after among all players of rank r, running over r, gives the lowest after among the better-connected.
  const sorted = sortedCopy.subarray(0, count);
  sorted.set(before.subarray(0, count));
  sorted.sort();
  for (let rank = 0; rank < count; rank += 1) lowestAt[rank] = Infinity;
  for (let slot = 0; slot < count; slot += 1) {
    const value = before[slot] as number;
    let low = 0;
    let high = count;
    while (low < high) {
      const middle = (low + high) >>> 1;
      if ((sorted[middle] as number) <= value) low = middle + 1;
      else high = middle;
    }
    const rank = count - low;
    above[slot] = rank;
    if ((after[slot] as number) < (lowestAt[rank] as number)) lowestAt[rank] = after[slot] as number;
  }
  let running = Infinity;
  for (let rank = 0; rank < count; rank += 1) {
    const here = lowestAt[rank] as number;
    lowestAt[rank] = running;
    if (here < running) running = here;
  }
  let largest = 0;
  for (let slot = 0; slot < count; slot += 1) {
    const overtake = (after[slot] as number) - (lowestAt[above[slot] as number] as number);
    if (overtake > largest) largest = overtake;
  }
  let bound = 0;
  if (step !== null) {
    for (let slot = 0; slot < count; slot += 1) {
      const scale = scales[slot] as number;
      const here = after[slot] as number;
      const up = expectedAtTerm(curves, slot, link, termOf(form, scale + step)) - here;
      if (up > bound) bound = up;
      if (scale - step >= floor * (1 - 1e-12)) {
        const down = here - expectedAtTerm(curves, slot, link, termOf(form, scale - step));
        if (down > bound) bound = down;
      }
    }
  }
  return { largest_overtake: largest, step_gain: bound };
}

