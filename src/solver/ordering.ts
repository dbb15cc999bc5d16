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
 * @param order, buffer scratch of at least `count` slots each.
 * Cost: a sort of the players, plus two curve evaluations per player with a step.
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
  order: Int32Array,
  buffer: Int32Array,
): OrderingFigures {
  const slots = sortDescending(before, count, order, buffer);
  let largest = 0;
  let lowestBetter = Infinity;
  let position = 0;
  while (position < count) {
    const groupBefore = before[slots[position] as number] as number;
    let end = position;
    while (end < count && before[slots[end] as number] === groupBefore) end += 1;
    let lowestInGroup = Infinity;
    for (let member = position; member < end; member += 1) {
      const value = after[slots[member] as number] as number;
      if (value - lowestBetter > largest) largest = value - lowestBetter;
      if (value < lowestInGroup) lowestInGroup = value;
    }
    if (lowestInGroup < lowestBetter) lowestBetter = lowestInGroup;
    position = end;
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

/**
 * Slots 0 .. count - 1 ordered by `keys` from the largest, into `order`: a
 * bottom-up merge sort (stable; Knuth, TAOCP vol. 3, 5.2.4) with the
 * comparisons inline. A comparator passed to Array.prototype.sort cost a fifth
 * of a 100-player balanceLobby here.
 */
export function sortDescending(keys: Float64Array, count: number, order: Int32Array, buffer: Int32Array): Int32Array {
  let source = order;
  let target = buffer;
  for (let slot = 0; slot < count; slot += 1) source[slot] = slot;
  for (let width = 1; width < count; width *= 2) {
    for (let start = 0; start < count; start += 2 * width) {
      const middle = Math.min(start + width, count);
      const end = Math.min(start + 2 * width, count);
      let left = start;
      let right = middle;
      let out = start;
      while (left < middle && right < end) {
        const leftSlot = source[left] as number;
        const rightSlot = source[right] as number;
        if ((keys[rightSlot] as number) > (keys[leftSlot] as number)) {
          target[out++] = rightSlot;
          right += 1;
        } else {
          target[out++] = leftSlot;
          left += 1;
        }
      }
      while (left < middle) target[out++] = source[left++] as number;
      while (right < end) target[out++] = source[right++] as number;
    }
    const swap = source;
    source = target;
    target = swap;
  }
  return source.subarray(0, count);
}
