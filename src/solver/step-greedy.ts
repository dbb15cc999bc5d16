/**
 * Leximin on the grid inside a box, under the assistance budget: each player
 * i takes an index in [start_i, high_i] (all players share the grid), the
 * assistance sum of (s_i - 1)+ may not exceed the budget, and the sorted
 * vector of expected performances is to be lexicographically largest, then
 * the assistance least, then ties between identical curves resolved in
 * favour of the player whose id sorts first.
 *
 * Method: the greedy of "give the next step to the worst-off". A step of
 * player i from index k is an event with value E_i(k) (their performance
 * before the step) and the cost of the step. Events are taken in increasing
 * (value, id rank) order; an event the remaining budget cannot pay freezes
 * its player, and the greedy goes on with the others. Above the scale 1
 * every step costs one step of assistance, so after the first event that
 * cannot be paid only a cheaper one can be, the step that crosses 1 when 1
 * is not on the grid; steps below 1 are free and every player takes them
 * first (`start_i` is already past them). Why the greedy is exact for equal
 * step costs: each player's last step was taken when they were the worst-off
 * among players with room, so lowering anyone to pay for another step
 * leaves someone at or below the current minimum (the exchange argument of
 * docs/method.md, section 3); `test/solver/exhaustive.test.ts` compares it
 * with enumeration of every feasible vector.
 *
 * The greedy runs from a warm start, not from the bottom: the water level of
 * the continuous relaxation (`waterLevel`) gives a level theta, every player
 * takes exactly the events with value < theta (a prefix of the event order,
 * found by evaluating the curve at the grid points next to the relaxed
 * scale), and heaps of the players' last taken and next events move the
 * prefix back until it is affordable and then forward, with freezing, to the
 * end. The relaxation costs at most the discrete state at the same level, so
 * the backward moves are at most about one per player.
 *
 * Cost: the relaxation (O(players) per level, 5-15 levels) plus
 * O(players log players) heap moves.
 */
import type { Link } from '../model/links.js';
import { type CurveSet, expectedAtTerm } from './player-curve.js';
import { type ScaleForm, termOf } from './player-ceilings.js';
import { type ScaleGrid, assistanceUnits, gridValue, indexAtOrAbove } from './scale-grid.js';
import { type LevelBox, waterLevel } from './water-level.js';
import { highestLinked, lowestLinked } from './level-bounds.js';

export interface StepBox {
  readonly grid: ScaleGrid;
  /** T: an event whose value is already at the target gains nothing and is never taken. */
  readonly target: number;
  readonly curves: CurveSet;
  readonly link: Link;
  readonly form: ScaleForm;
  /** The players' positions when sorted by id (code-unit order); ties between equal values go to the lower rank. */
  readonly ranks: PlayerRanks;
  /** Per player: the first index (after the free steps below 1) and the box's top index. */
  readonly start: Float64Array;
  readonly high: Float64Array;
  /** Receives each player's index. */
  readonly index: Float64Array;
  /** Scratch: per-player flags, heap slots, and the curve's value before each player's last step and next step (heap keys). */
  readonly frozen: Uint8Array;
  readonly heap: Int32Array;
  readonly lastKey: Float64Array;
  readonly nextKey: Float64Array;
  /** Scratch for the relaxation: its scales, bounds and terms (`scales` may alias nothing else). */
  readonly relaxation: LevelBox;
  /** The relaxation's last water level (link scale), tried first by the next fill of a box like this one; NaN at first. */
  hint: number;
}

/**
 * Players' id ranks, computed the first time two equal values meet in a heap
 * (identical curves): sorting the ids cost about a twentieth of a solve with a
 * budget, and most lobbies never need it.
 */
export interface PlayerRanks {
  ready: boolean;
  readonly values: Int32Array;
  compute(): void;
}

export interface StepFill {
  /** Assistance in the grid's units (see `assistanceUnits`). */
  readonly units: number;
  /** The value of the first event the budget could not pay (the budget's water level), or Infinity if none. */
  readonly level: number;
}

function valueAt(box: StepBox, player: number, index: number): number {
  return expectedAtTerm(box.curves, player, box.link, termOf(box.form, gridValue(box.grid, index)));
}

/** Heap order: by key, then by rank; `sign` 1 for a min-heap, -1 for a max-heap. */
function before(keys: Float64Array, ranks: PlayerRanks, left: number, right: number, sign: number): boolean {
  const leftKey = keys[left] as number;
  const rightKey = keys[right] as number;
  if (leftKey !== rightKey) return sign > 0 ? leftKey < rightKey : leftKey > rightKey;
  if (!ranks.ready) ranks.compute();
  const rank = ranks.values;
  return sign > 0 ? (rank[left] as number) < (rank[right] as number) : (rank[left] as number) > (rank[right] as number);
}

function push(heap: Int32Array, keys: Float64Array, ranks: PlayerRanks, size: number, player: number, sign: number): number {
  let position = size;
  heap[position] = player;
  while (position > 0) {
    const parent = (position - 1) >> 1;
    const above = heap[parent] as number;
    if (!before(keys, ranks, player, above, sign)) break;
    heap[position] = above;
    heap[parent] = player;
    position = parent;
  }
  return size + 1;
}

function siftDown(heap: Int32Array, keys: Float64Array, ranks: PlayerRanks, size: number, from: number, sign: number): void {
  const moving = heap[from] as number;
  let position = from;
  for (;;) {
    const left = 2 * position + 1;
    if (left >= size) break;
    const right = left + 1;
    let child = left;
    if (right < size && before(keys, ranks, heap[right] as number, heap[left] as number, sign)) child = right;
    if (!before(keys, ranks, heap[child] as number, moving, sign)) break;
    heap[position] = heap[child] as number;
    position = child;
  }
  heap[position] = moving;
}

/** Remove the top; returns the new size. */
function pop(heap: Int32Array, keys: Float64Array, ranks: PlayerRanks, size: number, sign: number): number {
  heap[0] = heap[size - 1] as number;
  if (size > 2) siftDown(heap, keys, ranks, size - 1, 0, sign);
  return size - 1;
}

/** Order the first `size` entries of `heap` into a heap (Floyd's construction, O(size)). */
function heapify(heap: Int32Array, keys: Float64Array, ranks: PlayerRanks, size: number, sign: number): void {
  for (let from = (size >> 1) - 1; from >= 0; from -= 1) siftDown(heap, keys, ranks, size, from, sign);
}

/**
 * Fill `box.index` with the leximin answer inside the box. `budget` is in
 * the grid's units (`budgetUnits`), or null for none; the caller has checked
 * that every player at `start` is affordable.
 */
export function fillSteps(box: StepBox, budget: number | null): StepFill {
  const { grid, curves, start, high, index, frozen, heap, ranks, lastKey, nextKey } = box;
  const count = curves.count;
  let units = 0;
  let highest = 0;
  for (let player = 0; player < count; player += 1) {
    index[player] = high[player] as number;
    highest += assistanceUnits(grid, high[player] as number);
  }
  if (budget === null || highest <= budget) return { units: highest, level: Infinity };

  // Warm start: the relaxation's water level, to within n/8 steps of assistance: the heaps below move the rest, at
  // O(log n) an event, cheaper than another level at O(n).
  const relaxation = box.relaxation;
  let lowAssistance = 0;
  let highAssistance = 0;
  for (let player = 0; player < count; player += 1) {
    const bottom = gridValue(grid, start[player] as number);
    const top = gridValue(grid, high[player] as number);
    relaxation.low[player] = bottom;
    relaxation.high[player] = top;
    relaxation.lowTerm[player] = termOf(box.form, bottom);
    relaxation.highTerm[player] = termOf(box.form, top);
    lowAssistance += Math.max(0, bottom - 1);
    highAssistance += Math.max(0, top - 1);
  }
  const highLinked = highestLinked(curves, relaxation.highTerm);
  const lowLinked = Math.min(highLinked, lowestLinked(curves, relaxation.lowTerm));
  const relaxed = waterLevel(relaxation, unitsToScale(grid, budget), { low: lowLinked, lowAssistance, high: highLinked, highAssistance }, grid.step * Math.max(1, count / 8), box.hint);
  box.hint = relaxed.linked;
  const theta = box.link.inverse(relaxed.linked);
  // Every player takes exactly the events below theta; the curve's values next to the answer are kept as heap keys.
  for (let player = 0; player < count; player += 1) {
    const first = start[player] as number;
    const top = high[player] as number;
    let at = Math.min(top, Math.max(first, indexAtOrAbove(grid, relaxation.scales[player] as number)));
    let below = Number.NaN;
    let above = Number.NaN;
    while (at > first) {
      const value = valueAt(box, player, at - 1);
      if (value < theta) {
        below = value;
        break;
      }
      above = value;
      at -= 1;
    }
    while (at < top) {
      const value = Number.isNaN(above) ? valueAt(box, player, at) : above;
      if (value >= theta) {
        above = value;
        break;
      }
      below = value;
      above = Number.NaN;
      at += 1;
    }
    index[player] = at;
    lastKey[player] = below;
    nextKey[player] = above;
    frozen[player] = 0;
    units += assistanceUnits(grid, at);
  }

  let level = Infinity;
  // Backward: give back the last events taken, latest first, until the budget holds.
  if (units > budget) {
    let size = 0;
    for (let player = 0; player < count; player += 1) if ((index[player] as number) > (start[player] as number)) heap[size++] = player;
    heapify(heap, lastKey, ranks, size, -1);
    while (units > budget && size > 0) {
      const player = heap[0] as number;
      size = pop(heap, lastKey, ranks, size, -1);
      const at = index[player] as number;
      units -= assistanceUnits(grid, at) - assistanceUnits(grid, at - 1);
      index[player] = at - 1;
      nextKey[player] = lastKey[player] as number;
      if (units <= budget) {
        level = lastKey[player] as number;
        frozen[player] = 1;
        break;
      }
      if (at - 1 > (start[player] as number)) {
        lastKey[player] = valueAt(box, player, at - 2);
        size = push(heap, lastKey, ranks, size, player, -1);
      }
    }
  }
  // Forward: the next events in order; one the budget cannot pay freezes its player, one at the target gains nothing.
  let size = 0;
  for (let player = 0; player < count; player += 1) if (frozen[player] === 0 && (index[player] as number) < (high[player] as number)) heap[size++] = player;
  heapify(heap, nextKey, ranks, size, 1);
  while (size > 0) {
    const player = heap[0] as number;
    size = pop(heap, nextKey, ranks, size, 1);
    const at = index[player] as number;
    const key = nextKey[player] as number;
    if (key >= box.target) continue;
    const step = assistanceUnits(grid, at + 1) - assistanceUnits(grid, at);
    if (units + step > budget) {
      if (level === Infinity) level = key;
      continue;
    }
    units += step;
    index[player] = at + 1;
    if (at + 1 < (high[player] as number)) {
      nextKey[player] = valueAt(box, player, at + 1);
      size = push(heap, nextKey, ranks, size, player, 1);
    }
  }
  return { units, level };
}

function unitsToScale(grid: ScaleGrid, units: number): number {
  return grid.denominator === 0 ? units : units / grid.denominator;
}
