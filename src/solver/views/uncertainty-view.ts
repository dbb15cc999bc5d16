/**
 * The uncertainty view: a 90% interval of each eligible player's scale from
 * the model's parameter uncertainty.
 *
 * Method: parametric simulation (coefficient draws). Draw coefficient
 * vectors b* = b + L z, with z standard normal (`standardNormalDraw` of a
 * seeded source) and L L' the coefficients' covariance, solve the whole lobby
 * again at each draw (target, ratio lift and budget included), and take the
 * 5% and 95% sample quantiles (Hyndman and Fan 1996 type 7) of each player's
 * scale over the draws. This is the approach of King, Tomz and Wittenberg
 * (2000), "Making the most of statistical analyses", American Journal of
 * Political Science 44(2), 347-361; it is chosen over the delta method
 * because the scale is a non-smooth function of the coefficients at a cap,
 * the floor or a grid step.
 *
 * L is a Cholesky factor with pivoting tolerance: a covariance that is only
 * positive semi-definite (singular, or zero: a ground-truth model) gives a
 * zero column wherever a pivot is below 1e-12 of the largest diagonal, so a
 * zero covariance gives every draw the point coefficients and a zero-width
 * interval. A draw under which the lobby cannot be solved (hit probability
 * not increasing with the scale) is counted in `rejected_draws` and left
 * out.
 *
 * Cost: `draws` lobby solves.
 */
import { semiDefiniteCholesky } from '../../numeric/semidefinite-cholesky.js';
import type { LobbyFile } from '../../formats/lobby-types.js';
import { type CompiledModel, predictorLine } from '../../model/compile.js';
import { type RandomSource, createRandomSource, standardNormalDraw } from '../../random.js';
import { quantileSorted } from '../../stats/quantile.js';
import type { CompiledRules } from '../rules.js';
import { type LobbySolve, solveLobby, withEstimate } from '../solve-lobby.js';
import { SolveWorkspace } from '../workspace.js';

/** Default number of coefficient draws. */
export const DEFAULT_UNCERTAINTY_DRAWS = 200;
/** At most this many draws (each is a lobby solve). */
export const MAX_UNCERTAINTY_DRAWS = 100_000;
/** Default seed of the draws, fixed so that a report is reproducible. */
export const DEFAULT_UNCERTAINTY_SEED = 20_240_401;

export interface UncertaintyOptions {
  /** Number of coefficient draws; default 200. */
  readonly draws?: number;
  /** Seed of the random source; default `DEFAULT_UNCERTAINTY_SEED`. */
  readonly seed?: number;
  /** A random source to use instead of one seeded from `seed`. */
  readonly random?: RandomSource;
}

export interface PlayerScaleInterval {
  readonly id: string;
  readonly scale: number;
  /** 5% and 95% quantiles of the scale over the draws; null if every draw was rejected. */
  readonly scale_low: number | null;
  readonly scale_high: number | null;
}

export interface UncertaintyView {
  readonly method: 'coefficient_draws';
  readonly level: 0.9;
  readonly draws: number;
  readonly seed: number | null;
  readonly rejected_draws: number;
  readonly players: readonly PlayerScaleInterval[];
}

/** The uncertainty view of a solved lobby (`base`, from `solveLobby` at the model's own coefficients). */
export function uncertaintyView(lobby: LobbyFile, model: CompiledModel, rules: CompiledRules, base: LobbySolve, options: UncertaintyOptions = {}): UncertaintyView {
  const draws = options.draws ?? DEFAULT_UNCERTAINTY_DRAWS;
  if (!(Number.isSafeInteger(draws) && draws >= 1 && draws <= MAX_UNCERTAINTY_DRAWS)) throw new RangeError(`\`views.uncertainty.draws\` requires a whole number from 1 to ${MAX_UNCERTAINTY_DRAWS}, got ${String(draws)}`);
  const seed = options.random === undefined ? (options.seed ?? DEFAULT_UNCERTAINTY_SEED) : null;
  const random = options.random ?? createRandomSource(seed as number);
  const size = model.coefficients.length;
  const { lower } = semiDefiniteCholesky(model.covariance, size);
  const eligibleCount = base.solution.count;
  // Scales by player, then draw: player p's draws at [p * draws, (p + 1) * draws).
  const scales = new Float64Array(eligibleCount * draws);
  const normal = new Float64Array(size);
  const coefficients = new Float64Array(size);
  let accepted = 0;
  const workspace = new SolveWorkspace();
  // Every draw solves the same players: under a robust estimator their estimates are taken once.
  const reduced: LobbyFile = { ...lobby, players: lobby.players.map((player) => withEstimate(player, rules)) };
  for (let draw = 0; draw < draws; draw += 1) {
    for (let index = 0; index < size; index += 1) normal[index] = standardNormalDraw(random);
    for (let row = 0; row < size; row += 1) {
      let value = model.coefficients[row] as number;
      for (let column = 0; column <= row; column += 1) value += (lower[row * size + column] as number) * (normal[column] as number);
      coefficients[row] = value;
    }
    const line = predictorLine(model.columns, coefficients, model.difficulty, lobby.difficulty);
    if (!line.ok) continue;
    const solved = solveLobby(reduced, model, line.value, rules, workspace);
    if (!solved.ok) continue;
    for (let slot = 0; slot < eligibleCount; slot += 1) scales[slot * draws + accepted] = solved.value.solution.scales[slot] as number;
    accepted += 1;
  }
  const players: PlayerScaleInterval[] = [];
  for (let slot = 0; slot < eligibleCount; slot += 1) {
    const index = base.eligible[slot] as number;
    const id = (lobby.players[index] as LobbyFile['players'][number]).id;
    const scale = base.solution.scales[slot] as number;
    if (accepted === 0) {
      players.push({ id, scale, scale_low: null, scale_high: null });
      continue;
    }
    const sorted = scales.subarray(slot * draws, slot * draws + accepted).sort();
    players.push({ id, scale, scale_low: quantileSorted(sorted, 0.05, 7), scale_high: quantileSorted(sorted, 0.95, 7) });
  }
  return { method: 'coefficient_draws', level: 0.9, draws, seed, rejected_draws: draws - accepted, players };
}
