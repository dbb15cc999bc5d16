/**
 * The answer on the grid, by its lift (docs/method.md, section 3): every
 * feasible vector has a lift index L (the smallest scale the ratio allows
 * anyone, the floor without a ratio). For a given L each player's scale lies
 * in a box, [L, min(M_L, max(u_i, L), top_i)] with M_L the largest index whose
 * lift is at most L, and the budget couples them; step-greedy.ts solves the
 * box exactly. The box's answer counts for L only if its largest scale is
 * above M_{L-1} (so that L is the lift it implies); such lifts are "valid".
 *
 * Valid lifts form a range from the floor up, and a larger valid lift's
 * sorted values are at least as good (docs/method.md gives the argument;
 * test/solver/exhaustive.test.ts checks it against enumeration), so the
 * answer is at the largest valid lift, or at the smallest lift with the same
 * sorted values, whose assistance is least.
 *
 * Finding the largest valid lift: no lift above the lift of the largest
 * ceiling can be valid, except where the ratio forces equal scales
 * (L(m) = m), nor above the smallest top (everyone must reach the lift).
 * - Without a budget every box is filled to its top, and that bound is the
 *   answer (the player with the largest ceiling reaches it).
 * - With a budget, the search starts from the lift the answer on real scales
 *   suggests (water-filling with the ratio's lift, its largest scale rounded
 *   up to the grid), gallops up or down by 1, 2, 4, ... lifts to the border
 *   between valid and invalid lifts, and bisects there: about three boxes in
 *   all instead of log2 of the range.
 * A tie with the lift below is possible only if every player whose ceiling is
 * that lift's index is already at the target there; only then are the
 * sorted values compared, lift by lift downward by bisection.
 */
import { expectedAtTerm } from './player-curve.js';
import { termOf } from './player-ceilings.js';
import { type ScaleGrid, assistanceUnits, budgetUnits, gridValue, indexAtOrAbove, largestUnderLift, liftIndex } from './scale-grid.js';
import { type PlayerRanks, type StepBox, fillSteps } from './step-greedy.js';
import { type LevelBox, waterLevel } from './water-level.js';
import { highestLinked, lowestLinked } from './level-bounds.js';
import type { SolveWorkspace } from './workspace.js';
import type { ScaleProblem } from './scale-problem.js';

export interface LiftTrial {
  /** `infeasible`: the floor of the box costs more than the budget, or someone's top is below the lift; `not_lift`: nobody ends high enough for this lift to be the lift. */
  readonly status: 'valid' | 'infeasible' | 'not_lift';
  /** Assistance in the grid's units. */
  readonly units: number;
  /** The budget's water level (Infinity if the budget did not bind). */
  readonly level: number;
  /** M_L: the largest index the ratio allows at this lift (Infinity without a ratio). */
  readonly ratioCeiling: number;
  /** The largest index in the box's answer. */
  readonly largest: number;
}

export class LiftSearch {
  private readonly count: number;
  private readonly budget: number | null;
  private readonly ratio: number | null;
  private readonly box: StepBox;
  private readonly ranks: PlayerRanks;

  constructor(
    private readonly problem: ScaleProblem,
    private readonly grid: ScaleGrid,
    private readonly workspace: SolveWorkspace,
    idRanks: (idOf: ((slot: number) => string) | null, count: number, rank: Int32Array) => void,
  ) {
    const { curves, target, link, form, rules } = problem;
    this.count = curves.count;
    this.ratio = rules.max_scale_ratio;
    this.budget = rules.assistance_budget === null ? null : budgetUnits(grid, rules.assistance_budget);
    // Ranks break ties in the budget's greedy, and decide who keeps a shaved scale: computed on first need.
    const count = this.count;
    this.ranks = {
      ready: false,
      values: workspace.rank,
      compute() {
        idRanks(problem.idOf, count, workspace.rank);
        this.ready = true;
      },
    };
    const relaxation: LevelBox = {
      curves,
      link,
      form,
      low: workspace.low,
      high: workspace.highScale,
      lowTerm: workspace.lowTerm,
      highTerm: workspace.highTerm,
      ratio: null,
      floor: rules.scale_floor,
      scales: workspace.scratch,
      slope: Number.NaN,
      changes: workspace.changes,
    };
    this.cached = [
      { lift: Number.NaN, trial: null, index: workspace.cachedIndex },
      { lift: Number.NaN, trial: null, index: workspace.olderIndex },
    ];
    this.box = { grid, target, curves, link, form, ranks: this.ranks, start: workspace.start, high: workspace.high, index: workspace.index, frozen: workspace.frozen, heap: workspace.heap, lastKey: workspace.lastKey, nextKey: workspace.nextKey, relaxation, hint: Number.NaN };
  }

  private valueAt(player: number, at: number): number {
    const { curves, link, form } = this.problem;
    return expectedAtTerm(curves, player, link, termOf(form, gridValue(this.grid, at)));
  }

  private rankOf(player: number): number {
    if (!this.ranks.ready) this.ranks.compute();
    return this.ranks.values[player] as number;
  }

  /** The last two lifts solved, with their answers' indices, so that the search can go back to one without solving it again. */
  private readonly cached: { lift: number; trial: LiftTrial | null; index: Float64Array }[];
  private current = Number.NaN;

  /** Solve the box of lift `lift` into `workspace.index` (from the cache when it is one of the last two lifts). */
  trial(lift: number): LiftTrial {
    const index = this.workspace.index;
    const count = this.count;
    if (lift === this.current) return (this.cached[0] as (typeof this.cached)[number]).trial as LiftTrial;
    const [recent, older] = this.cached as [(typeof this.cached)[number], (typeof this.cached)[number]];
    if (lift === older.lift && older.trial !== null) {
      index.set(older.index.subarray(0, count));
      this.cached[0] = older;
      this.cached[1] = recent;
      this.current = lift;
      return older.trial;
    }
    const trial = this.solveBox(lift);
    // Keep this answer in the older entry's array, which becomes the recent one.
    older.index.set(index.subarray(0, count));
    older.lift = lift;
    older.trial = trial;
    this.cached[0] = older;
    this.cached[1] = recent;
    this.current = lift;
    return trial;
  }

  private solveBox(lift: number): LiftTrial {
    const { grid, budget, ratio, count } = this;
    const { top, ceiling, start, high, index, flat, bestIndex } = this.workspace;
    const target = this.problem.target;
    const largestAllowed = ratio === null ? Infinity : largestUnderLift(grid, lift, ratio);
    if (budget !== null && count * assistanceUnits(grid, lift) > budget) return { status: 'infeasible', units: 0, level: Infinity, ratioCeiling: largestAllowed, largest: -Infinity };
    for (let player = 0; player < count; player += 1) {
      const own = Math.max(ceiling[player] as number, lift);
      const highest = Math.min(largestAllowed, own, top[player] as number);
      if (highest < lift) return { status: 'infeasible', units: 0, level: Infinity, ratioCeiling: largestAllowed, largest: -Infinity };
      high[player] = highest;
      start[player] = Math.max(lift, Math.min(highest, grid.oneIndex));
    }
    const filled = fillSteps(this.box, budget);
    let units = filled.units;
    // Steps that leave a player at the target gain nothing (a curve flat in floating point): the least assistance drops them.
    let shaved = -1;
    for (let player = 0; player < count; player += 1) {
      if (flat[player] === 0) continue;
      const was = index[player] as number;
      let at = was;
      while (at > (start[player] as number) && this.valueAt(player, at - 1) >= target) at -= 1;
      if (at < was) {
        units -= assistanceUnits(grid, was) - assistanceUnits(grid, at);
        bestIndex[player] = was;
        index[player] = at;
        shaved = player;
      }
    }
    let largest = -Infinity;
    for (let player = 0; player < count; player += 1) largest = Math.max(largest, index[player] as number);
    if (ratio !== null && lift > grid.floorIndex) {
      const needed = largestUnderLift(grid, lift - 1, ratio) + 1;
      if (largest < needed && shaved >= 0) {
        // Shaving took away the scale that makes this lift the lift: give it back to one player, the first by id.
        let keeper = -1;
        for (let player = 0; player < count; player += 1) {
          if (flat[player] === 1 && (bestIndex[player] as number) >= needed && (index[player] as number) < needed && (keeper < 0 || this.rankOf(player) < this.rankOf(keeper))) keeper = player;
        }
        if (keeper >= 0) {
          units += assistanceUnits(grid, needed) - assistanceUnits(grid, index[keeper] as number);
          index[keeper] = needed;
          largest = needed;
        }
      }
      if (largest < needed) return { status: 'not_lift', units, level: filled.level, ratioCeiling: largestAllowed, largest };
    }
    return { status: 'valid', units, level: filled.level, ratioCeiling: largestAllowed, largest };
  }

  /** The lift of the answer (the floor's index without a ratio). */
  answerLift(): number {
    const { grid, ratio, count } = this;
    const floorIndex = grid.floorIndex;
    if (ratio === null) return floorIndex;
    const { top, ceiling } = this.workspace;
    let smallestTop = Infinity;
    let largestCeiling = -Infinity;
    for (let player = 0; player < count; player += 1) {
      smallestTop = Math.min(smallestTop, top[player] as number);
      largestCeiling = Math.max(largestCeiling, ceiling[player] as number);
    }
    // Lifts above the largest ceiling's own lift are possible only where the ratio forces equal scales (L(m) = m).
    let equalUpTo = ratio <= 1 ? smallestTop : Math.min(smallestTop, Math.ceil(ratio / (ratio - 1)) + 1);
    while (equalUpTo > floorIndex && liftIndex(grid, equalUpTo, ratio) !== equalUpTo) equalUpTo -= 1;
    const upper = Math.max(floorIndex, Math.min(smallestTop, Math.max(liftIndex(grid, largestCeiling, ratio), equalUpTo)));
    const chosen = this.largestValid(upper);
    return chosen > floorIndex ? this.smallestTied(chosen) : chosen;
  }

  private largestValid(upper: number): number {
    const floorIndex = this.grid.floorIndex;
    const budget = this.budget;
    const valid = (lift: number) => lift <= floorIndex || this.trial(lift).status === 'valid';
    // Without a budget every lift up to the bound is valid (the player with the largest ceiling reaches it).
    if (budget === null && valid(upper)) return upper;
    // Gallop from the lift of the answer on real scales, then bisect between the last valid and first invalid lift.
    let low = floorIndex;
    let high = upper;
    const guess = Math.min(upper, Math.max(floorIndex, this.realLiftGuess()));
    if (valid(guess)) {
      low = guess;
      for (let stride = 1; low < high; stride *= 2) {
        const next = Math.min(high, low + stride);
        if (valid(next)) low = next;
        else {
          high = next - 1;
          break;
        }
      }
    } else {
      high = guess - 1;
      for (let stride = 1; high > low; stride *= 2) {
        const next = Math.max(low, high - stride + 1);
        if (valid(next)) {
          low = next;
          break;
        }
        high = next - 1;
      }
    }
    while (low < high) {
      const middle = Math.floor((low + high + 1) / 2);
      if (valid(middle)) low = middle;
      else high = middle - 1;
    }
    return low;
  }

  /**
   * The lift index the answer on real scales suggests: water-filling with the
   * ratio's lift (water-level.ts) to within a step of assistance, its largest
   * scale rounded up to the grid, and that scale's lift.
   */
  private realLiftGuess(): number {
    const { grid, count } = this;
    const ratio = this.ratio as number;
    const { curves, link, form, rules, target } = this.problem;
    const { need, upper, low, lowTerm, highScale, highTerm, scratch } = this.workspace;
    const floor = rules.scale_floor;
    let smallestUpper = Infinity;
    for (let player = 0; player < count; player += 1) smallestUpper = Math.min(smallestUpper, upper[player] as number);
    const floorTerm = termOf(form, floor);
    let largest = -Infinity;
    for (let player = 0; player < count; player += 1) {
      const high = Math.min(need[player] as number, upper[player] as number, ratio * smallestUpper);
      low[player] = floor;
      lowTerm[player] = floorTerm;
      highScale[player] = high;
      highTerm[player] = termOf(form, high);
      largest = Math.max(largest, high);
    }
    const budget = rules.assistance_budget;
    if (budget !== null) {
      const lift = Math.max(floor, largest / ratio);
      let highAssistance = 0;
      for (let player = 0; player < count; player += 1) highAssistance += Math.max(0, Math.max(highScale[player] as number, lift) - 1);
      if (highAssistance > budget) {
        const lowLinked = lowestLinked(curves, floorTerm);
        const box: LevelBox = { curves, link, form, low, high: highScale, lowTerm, highTerm, ratio, floor, scales: scratch, slope: Number.NaN, changes: this.workspace.changes };
        const highLinked = Math.min(link.link(target), highestLinked(curves, highTerm));
        waterLevel(box, budget, { low: Math.min(lowLinked, highLinked), lowAssistance: count * Math.max(0, floor - 1), high: highLinked, highAssistance }, grid.step);
        largest = -Infinity;
        for (let player = 0; player < count; player += 1) largest = Math.max(largest, scratch[player] as number);
      }
    }
    return liftIndex(grid, indexAtOrAbove(grid, largest), ratio);
  }

  /** The smallest lift at or below `chosen` with the same sorted values as `chosen`'s answer. */
  private smallestTied(chosen: number): number {
    const { count } = this;
    const { ceiling, bestObjective, objective } = this.workspace;
    const target = this.problem.target;
    // A tie needs every player whose ceiling is the lift below to be at the target there already.
    for (let player = 0; player < count; player += 1) {
      if ((ceiling[player] as number) === chosen - 1 && this.valueAt(player, chosen - 1) < target) return chosen;
    }
    this.trial(chosen);
    this.sortedObjective(bestObjective);
    const same = (lift: number): boolean => {
      if (this.trial(lift).status !== 'valid' && lift > this.grid.floorIndex) return false;
      this.sortedObjective(objective);
      for (let player = 0; player < count; player += 1) if (objective[player] !== bestObjective[player]) return false;
      return true;
    };
    if (!same(chosen - 1)) return chosen;
    let low = this.grid.floorIndex;
    let high = chosen - 1;
    while (low < high) {
      const middle = Math.floor((low + high) / 2);
      if (same(middle)) high = middle;
      else low = middle + 1;
    }
    return low;
  }

  /** min(E_i(s_i), T) for the current indices, sorted ascending, into `out`. */
  private sortedObjective(out: Float64Array): void {
    const { count } = this;
    const target = this.problem.target;
    const index = this.workspace.index;
    for (let player = 0; player < count; player += 1) {
      const value = this.valueAt(player, index[player] as number);
      out[player] = value < target ? value : target;
    }
    out.subarray(0, count).sort();
  }
}

