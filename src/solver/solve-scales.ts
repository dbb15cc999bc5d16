/**
 * The lobby solver's answer, as docs/method.md (section 3, "The answer")
 * defines it, for the eligible players of one lobby.
 *
 * With the step q (real scales when there is none), the target T and each
 * player's allowed scales A_i and ceiling u_i (player-ceilings.ts), a vector
 * s is feasible when every s_i is in A_i, max(s) / min(s) <= ratio, the
 * assistance sum of (s_i - 1)+ is within the budget, and s_i <= max(u_i, L(s))
 * with L(s) the smallest multiple of q at or above max(s) / ratio (nobody is
 * raised above the target except to the lowest scale the ratio forces). The
 * answer is the feasible vector whose values min(E_i(s_i), T), sorted from
 * the lowest, are lexicographically largest (leximin); among those the least
 * assistance; remaining ties (identical curves) give the larger scale to the
 * player whose id sorts first.
 *
 * How it is computed:
 * - on the grid, every feasible vector has a lift index L (the smallest scale
 *   anyone may have). For a given L the problem is a box per player,
 *   [L, min(M_L, max(u_i, L), top_i)] with M_L the largest scale the ratio
 *   allows above L, plus the budget, which the greedy of step-greedy.ts
 *   solves exactly; the answer for L counts only if someone ends high enough
 *   that L is really the lift (max(s) above ratio x (L - q)). Feasible lifts
 *   form a range from the floor up, and the answer at a larger feasible lift
 *   is at least as good: lift-search.ts finds the largest one, then the
 *   smallest lift with the same sorted values, whose assistance is least
 *   (docs/method.md gives the argument; test/solver/exhaustive.test.ts
 *   checks it against enumeration of every feasible vector);
 * - without a step, water-filling on real scales (water-level.ts), with the
 *   lift max(s) / ratio applied at every level and the largest scale kept to
 *   ratio x the smallest upper_i, so that everyone can be lifted.
 *
 * Cost: O(players) for the common case (no budget); with a budget a few
 * water levels (Newton steps for point latencies) and O(players log players)
 * heap moves, for about three lifts with a ratio on the grid.
 */
import { type Result, error, fail, ok } from '../issues.js';
import type { Link } from '../model/links.js';
import { type CurveSet, expectedAtTerm } from './player-curve.js';
import { type ScaleForm, playerCeilings, termOf } from './player-ceilings.js';
import { type ScaleGrid, assistanceUnits, budgetUnits, gridValue, scaleGrid, unitsToAssistance } from './scale-grid.js';
import { LiftSearch } from './lift-search.js';
import { highestLinked, lowestLinked } from './level-bounds.js';
import { type LevelBox, waterLevel } from './water-level.js';
import { labelPlayers } from './bindings.js';
import { EXCESS_OVER_ONE, SolveWorkspace, orderFreeSum } from './workspace.js';
import type { ScaleProblem } from './scale-problem.js';

export type { ScaleProblem } from './scale-problem.js';

export { BINDINGS, type Binding, INELIGIBLE, AT_TARGET_TOLERANCE } from './bindings.js';
export { type ScaleForm, scaleOf, searchLimit, softCapped, termOf } from './player-ceilings.js';

/** Arrays are indexed by eligible slot 0 .. count - 1 and may be longer (they live in a `SolveWorkspace`). */
export interface ScaleSolution {
  readonly count: number;
  readonly target: number;
  /** The budget's water level: the level every player whose own limits allow it reaches; the target when the budget does not bind. */
  readonly level: number;
  readonly scales: Float64Array;
  readonly before: Float64Array;
  readonly after: Float64Array;
  /** Index into `BINDINGS`, per player. */
  readonly binding: Uint8Array;
  /** Assistance used: sum over players of (scale - 1) for scales above 1. */
  readonly assistance: number;
  /** The lowest scale the ratio forces on everyone (the floor without a ratio). */
  readonly lift: number;
  /** The quantisation step, or null. */
  readonly step: number | null;
}

/** E_i at scale 1 for every player: the performance before compensation. */
export function expectedBefore(curves: CurveSet, link: Link, form: ScaleForm, out: Float64Array): Float64Array {
  const unitTerm = termOf(form, 1);
  for (let player = 0; player < curves.count; player += 1) out[player] = expectedAtTerm(curves, player, link, unitTerm);
  return out;
}

/**
 * Solve the scales of the eligible players (see the module comment), in
 * `workspace` (the solution's arrays point into it). With `scalesOnly` the
 * performances after and the labels are left out (the bulk paths).
 *
 * @returns the solution, or the issues that stop it: a target that is not a
 *   probability strictly between 0 and 1 in floating point
 *   (`target_out_of_range`: a model that predicts a hit probability of
 *   exactly 1 or 0 there), a player with no allowed scale on the grid
 *   (`no_allowed_scale`), a budget below what the floor alone costs
 *   (`budget_below_floor`).
 */
export function solveScales(problem: ScaleProblem, workspace: SolveWorkspace = new SolveWorkspace(), scalesOnly = false): Result<ScaleSolution> {
  const { curves, target, link, form, rules } = problem;
  const count = curves.count;
  workspace.reserve(count, 0);
  if (!(target > 0 && target < 1)) {
    return fail([error('target_out_of_range', 'rules.target', `compensation requires a target hit probability strictly between 0 and 1, got ${String(target)}: the model predicts ${target >= 1 ? 'a certain hit' : 'a certain miss'} at the target's latency, in floating point, so no scale can be told from another`)]);
  }
  const step = rules.quantisation_step;
  const grid = step === null ? null : scaleGrid(step, rules.scale_floor, rules.scale_cap);
  const stuck = playerCeilings(curves, link, form, rules, target, grid, workspace);
  if (stuck >= 0) {
    return fail([error('no_allowed_scale', `players[${stuck}]`, `\`quantisation_step\` ${String(step)} requires a multiple of the step between \`scale_floor\` ${rules.scale_floor} and the player's largest allowed scale ${(workspace.upper[stuck] as number).toPrecision(6)}, got none`)]);
  }
  const budget = rules.assistance_budget;
  const floorCost = count * Math.max(0, rules.scale_floor - 1);
  if (budget !== null && (grid === null ? floorCost > budget : count * assistanceUnits(grid, grid.floorIndex) > budgetUnits(grid, budget))) {
    return fail([error('budget_below_floor', 'rules.assistance_budget', `\`assistance_budget\` requires at least what the floor alone costs in this lobby, ${count} x (${rules.scale_floor} - 1) = ${floorCost}, got ${budget}`)]);
  }
  const answer = grid === null ? solveOnReals(problem, workspace) : solveOnGrid(problem, grid, workspace);
  const scales = workspace.scales;
  const after = workspace.after;
  const binding = workspace.binding;
  if (!scalesOnly) {
    for (let player = 0; player < count; player += 1) after[player] = expectedAtTerm(curves, player, link, termOf(form, scales[player] as number));
    labelPlayers({ count, target, rules, grid, scales, after, need: workspace.need, upper: workspace.upper, ceiling: workspace.ceiling, index: workspace.index, ratioCeiling: answer.ratioCeiling }, binding);
  }
  return ok({ count, target, level: answer.level, scales, before: problem.before, after, binding, assistance: answer.assistance, lift: answer.lift, step });
}

interface Answer {
  readonly level: number;
  readonly assistance: number;
  readonly lift: number;
  /** The largest scale the ratio allowed in the answer (a grid index with a step, a scale without); Infinity without a ratio. */
  readonly ratioCeiling: number;
}

/** Without a step: water-filling on real scales, the ratio's lift applied at every level. */
function solveOnReals(problem: ScaleProblem, workspace: SolveWorkspace): Answer {
  const { curves, target, link, form, rules } = problem;
  const count = curves.count;
  const floor = rules.scale_floor;
  const ratio = rules.max_scale_ratio;
  const { upper, ceiling, low, lowTerm, highScale, highTerm, scales } = workspace;
  let ratioCeiling = Infinity;
  if (ratio !== null) {
    // Everyone must be liftable to max(s) / ratio, so max(s) <= ratio x the smallest upper_i.
    let smallestUpper = Infinity;
    for (let player = 0; player < count; player += 1) smallestUpper = Math.min(smallestUpper, upper[player] as number);
    ratioCeiling = ratio * smallestUpper;
  }
  let largest = -Infinity;
  for (let player = 0; player < count; player += 1) {
    const high = Math.min(ceiling[player] as number, ratioCeiling);
    scales[player] = high;
    if (high > largest) largest = high;
  }
  let lift = floor;
  if (ratio !== null) {
    lift = Math.max(floor, largest / ratio);
    for (let player = 0; player < count; player += 1) if ((scales[player] as number) < lift) scales[player] = lift;
  }
  let assistance = orderFreeSum(scales, count, EXCESS_OVER_ONE);
  const budget = rules.assistance_budget;
  if (budget === null || assistance <= budget) return { level: target, assistance, lift, ratioCeiling };
  // The budget binds: water-filling between the floor and each player's highest scale.
  const floorTerm = termOf(form, floor);
  for (let player = 0; player < count; player += 1) {
    const high = Math.min(ceiling[player] as number, ratioCeiling);
    low[player] = floor;
    lowTerm[player] = floorTerm;
    highScale[player] = high;
    highTerm[player] = termOf(form, high);
  }
  const box: LevelBox = { curves, link, form, low, high: highScale, lowTerm, highTerm, ratio, floor, scales, slope: Number.NaN, changes: workspace.changes };
  const lowLinked = lowestLinked(curves, floorTerm);
  const floorCost = count * Math.max(0, floor - 1);
  const water = waterLevel(box, budget, { low: lowLinked, lowAssistance: floorCost, high: Math.min(link.link(target), highestLinked(curves, highTerm)), highAssistance: assistance }, 1e-14 * Math.max(1, budget));
  assistance = water.assistance;
  largest = -Infinity;
  for (let player = 0; player < count; player += 1) largest = Math.max(largest, scales[player] as number);
  if (ratio !== null) lift = Math.max(floor, largest / ratio);
  return { level: link.inverse(water.linked), assistance, lift, ratioCeiling };
}

/** With a step: the greedy inside the box of each candidate lift (see the module comment and lift-search.ts). */
function solveOnGrid(problem: ScaleProblem, grid: ScaleGrid, workspace: SolveWorkspace): Answer {
  const search = new LiftSearch(problem, grid, workspace, idRanks);
  const chosen = search.answerLift();
  const trial = search.trial(chosen);
  const { scales, index } = workspace;
  for (let player = 0; player < problem.curves.count; player += 1) scales[player] = gridValue(grid, index[player] as number);
  return {
    level: trial.level === Infinity ? problem.target : Math.min(problem.target, trial.level),
    assistance: unitsToAssistance(grid, trial.units),
    lift: gridValue(grid, chosen),
    ratioCeiling: trial.ratioCeiling,
  };
}

/** Each player's position in code-unit order of their ids (slot order when there are none, or for equal ids). */
export function idRanks(idOf: ((slot: number) => string) | null, count: number, rank: Int32Array): void {
  for (let player = 0; player < count; player += 1) rank[player] = player;
  if (idOf === null) return;
  const ids = Array.from({ length: count }, (_, slot) => idOf(slot));
  const order = Array.from({ length: count }, (_, player) => player);
  order.sort((left, right) => {
    const leftId = ids[left] as string;
    const rightId = ids[right] as string;
    return leftId < rightId ? -1 : leftId > rightId ? 1 : left - right;
  });
  for (let position = 0; position < count; position += 1) rank[order[position] as number] = position;
}
