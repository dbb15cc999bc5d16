/**
 * An independent reference for the solver: the answer of docs/method.md
 * (section 3, "The answer") found by enumerating every vector of allowed
 * scales, for lobbies small enough to enumerate. It shares no code with
 * src/solver/: its own curves (the model's line written out, its own link
 * inverses, the normal CDF from mathjs's erf), its own bisection for the
 * scale a player needs, and the feasibility rules read literally from the
 * definition, with the tolerances a reader would use for floating point
 * (1e-9 of a step for "multiple of q" and the budget, 1e-12 relative for the
 * ratio and for constraint 4). The best vector is chosen by exact
 * comparisons, as the definition reads; the vectors within 1e-12 of its
 * sorted objective and 1e-9 of its assistance are returned as its ties, since
 * two implementations of the same curve may differ in the last bits.
 */
import { erf } from 'mathjs';
import type { ModelSpec } from './arbitraries.js';
import type { CompiledRules } from '../../src/solver/rules.js';

export interface ReferencePlayer {
  readonly id: string;
  /** The latencies the rules' estimator leaves: all samples for all_samples, else the one estimate. */
  readonly latencies: readonly number[];
}

export interface ReferenceAnswer {
  readonly feasible: boolean;
  /** Per player, in input order (the best vector under the full order, ids breaking the last ties). */
  readonly scales: readonly number[];
  /** min(E_i(s_i), T), sorted ascending. */
  readonly objective: readonly number[];
  readonly assistance: number;
  /** How many feasible vectors come within 1e-12 of the best's sorted objective and 1e-9 of its assistance (the best included). */
  readonly optimal: number;
  /** Every feasible vector that ties with the best, for checking a solver's choice among them. */
  readonly ties: readonly (readonly number[])[];
}

const inverseLinks = {
  logit: (x: number) => 1 / (1 + Math.exp(-x)),
  probit: (x: number) => 0.5 * (1 + (erf(x / Math.SQRT2) as number)),
  cloglog: (x: number) => 1 - Math.exp(-Math.exp(x)),
};

/** E_i(s): the prediction averaged over the player's latencies, written out from the model spec. */
export function referenceCurve(spec: ModelSpec, difficulty: number, latencies: readonly number[]): (scale: number) => number {
  const inverse = inverseLinks[spec.link];
  return (scale: number) => {
    const term = spec.form === 'log' ? Math.log(scale) : scale;
    let sum = 0;
    for (const latency of latencies) sum += inverse(spec.intercept + spec.latency * latency + spec.difficulty * difficulty + (spec.scale + spec.interaction * latency) * term);
    return sum / latencies.length;
  };
}

/**
 * The scale at which a curve reaches `level`, by bisection on [floor, limit]
 * to 1e-15 relative: the floor if the curve is already there, Infinity if it
 * never gets there.
 */
export function referenceNeed(curve: (scale: number) => number, level: number, floor: number, limit: number): number {
  if (curve(floor) >= level) return floor;
  if (curve(limit) < level) return Infinity;
  let low = floor;
  let high = limit;
  for (let iteration = 0; iteration < 200 && high - low > 1e-15 * high; iteration += 1) {
    const middle = 0.5 * (low + high);
    if (curve(middle) < level) low = middle;
    else high = middle;
  }
  return high;
}

/** Enumerate every allowed vector and return the answer. Cost: product of the players' grid sizes. */
export function referenceAnswer(spec: ModelSpec, difficulty: number, players: readonly ReferencePlayer[], rules: CompiledRules, target: number): ReferenceAnswer {
  const step = rules.quantisation_step;
  if (step === null) throw new Error('the reference enumerates grids only');
  const { scale_floor: floor, scale_cap: cap, max_scale_ratio: ratio, assistance_budget: budget } = rules;
  const soft = rules.soft_cap;
  const limit = soft === null ? cap : soft.above + (cap - soft.above) / soft.fraction;
  const curves = players.map((player) => referenceCurve(spec, difficulty, player.latencies));
  const allowed: number[][] = [];
  const ceilings: number[] = [];
  curves.forEach((curve) => {
    const need = referenceNeed(curve, target, floor, limit);
    const upper = soft !== null && need > soft.above ? Math.min(cap, soft.above + soft.fraction * (need - soft.above)) : cap;
    const values: number[] = [];
    for (let k = Math.ceil(floor / step - 1e-9); k * step <= upper + 1e-9 * step; k += 1) values.push(k * step);
    allowed.push(values);
    let ceiling = values[0] as number;
    for (const value of values) if (curve(value) <= target) ceiling = value;
    ceilings.push(ceiling);
  });
  const idOrder = players.map((_, index) => index).sort((left, right) => {
    const a = (players[left] as ReferencePlayer).id;
    const b = (players[right] as ReferencePlayer).id;
    return a < b ? -1 : a > b ? 1 : 0;
  });
  const count = players.length;
  const objectiveOf = (vector: number[]) => vector.map((scale, index) => Math.min((curves[index] as (s: number) => number)(scale), target)).sort((a, b) => a - b);
  // Assistance as q x (sum of indices above 1) - (their count): equal sums of the same scales compare equal, in any order.
  const assistanceOf = (vector: number[]) => {
    let indices = 0;
    let above = 0;
    for (const scale of vector) {
      if (scale > 1) {
        indices += Math.round(scale / step);
        above += 1;
      }
    }
    return step * indices - above;
  };
  const feasible = (vector: number[]): boolean => {
    const largest = Math.max(...vector);
    const smallest = Math.min(...vector);
    if (ratio !== null && largest / smallest > ratio * (1 + 1e-12)) return false;
    if (budget !== null && assistanceOf(vector) > budget + 1e-9 * step) return false;
    const lift = ratio === null ? -Infinity : Math.ceil(largest / ratio / step - 1e-9) * step;
    return vector.every((scale, index) => scale <= Math.max(ceilings[index] as number, lift) * (1 + 1e-12));
  };
  /** > 0 when a is better than b under the definition's order, compared exactly: leximin, then assistance, then ids. */
  const compare = (a: number[], b: number[]): number => {
    const left = objectiveOf(a);
    const right = objectiveOf(b);
    for (let index = 0; index < count; index += 1) if (left[index] !== right[index]) return (left[index] as number) - (right[index] as number);
    const cost = assistanceOf(b) - assistanceOf(a);
    if (cost !== 0) return cost;
    for (const index of idOrder) if (a[index] !== b[index]) return (a[index] as number) - (b[index] as number);
    return 0;
  };
  const tiesWith = (a: number[], b: number[]): boolean => {
    const left = objectiveOf(a);
    const right = objectiveOf(b);
    for (let index = 0; index < count; index += 1) if (Math.abs((left[index] as number) - (right[index] as number)) > 1e-12) return false;
    return Math.abs(assistanceOf(a) - assistanceOf(b)) <= 1e-9;
  };
  let best: number[] | null = null;
  const candidates: number[][] = [];
  const vector = new Array<number>(count).fill(0);
  const visit = (player: number) => {
    if (player === count) {
      if (!feasible(vector)) return;
      candidates.push(vector.slice());
      if (best === null || compare(vector, best) > 0) best = vector.slice();
      return;
    }
    for (const value of allowed[player] as number[]) {
      vector[player] = value;
      visit(player + 1);
    }
  };
  visit(0);
  if (best === null) return { feasible: false, scales: [], objective: [], assistance: 0, optimal: 0, ties: [] };
  const winner: number[] = best;
  const ties = candidates.filter((candidate) => tiesWith(candidate, winner));
  return { feasible: true, scales: winner, objective: objectiveOf(winner), assistance: assistanceOf(winner), optimal: ties.length, ties };
}
