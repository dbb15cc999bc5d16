/**
 * `balanceLobby(lobby, model, rules, options?)`: per-player scales for one match.
 *
 * Pure and synchronous. The model and rules are compiled once
 * (`compileModel`, `compileRules`); the lobby is a value of the lobby format
 * (validate untrusted payloads with `safeParseLobby` first). Returns a result
 * tagged with `status`:
 * - `balanced`: every eligible player within the accepted gap of the target;
 * - `capped`: some player is held below the target by more than the accepted gap;
 * - `rejected`: the lobby cannot be solved with this model and rules (issues say why).
 *
 * The views (ordering, duel, exploit, uncertainty) are for reports and are
 * off by default: a matchmaker's hot path solves the scales and the summary
 * only.
 */
import { checkBalanceOptions, compiledInputIssues, matchIdOf, parsedLobby } from './entry-checks.js';
import { type Issue, show, warning } from '../issues.js';
import type { LobbyFile } from '../formats/lobby-types.js';
import type { CompiledModel } from '../model/compile.js';
import type { CompiledRules } from './rules.js';
import { type LobbySolve, ineligiblePrediction, solveLobby } from './solve-lobby.js';
import { BINDINGS, type Binding, type ScaleForm } from './solve-scales.js';
import { type DuelView, duelView } from './views/duel-view.js';
import { type ExploitView, exploitView } from './views/exploit-view.js';
import { type OrderingFigures, orderingFigures } from './ordering.js';
import { type UncertaintyOptions, type UncertaintyView, uncertaintyView } from './views/uncertainty-view.js';
import { SolveWorkspace, unitSums } from './workspace.js';

export interface PlayerBalance {
  readonly id: string;
  readonly team: string | null;
  readonly eligible: boolean;
  /** The latency the rules' estimator takes from the player's value or samples (for `all_samples`: their mean). */
  readonly latency_estimate_ms: number;
  /** The scale to apply; 1 for an ineligible player (reported, never scaled). */
  readonly scale: number;
  /** Expected hit probability at scale 1. */
  readonly expected_before: number;
  /** Expected hit probability at `scale`. */
  readonly expected_after: number;
  /** Target minus `expected_after` (positive: still short of the target). */
  readonly gap_to_target: number;
  readonly binding: Binding;
}

export interface TeamFigures {
  readonly team: string;
  readonly players: number;
  readonly mean_before: number;
  readonly mean_after: number;
}

export interface LobbySummary {
  /** Largest minus smallest expected hit probability among eligible players. */
  readonly largest_gap_before: number;
  readonly largest_gap_after: number;
  /** Jain's fairness index of the eligible players' expected hit probabilities (1 = all equal). */
  readonly jain_before: number;
  readonly jain_after: number;
  /** Per team (eligible players with a team), by team name. */
  readonly teams: readonly TeamFigures[];
  /** Largest minus smallest team mean of expected hit probability; null with fewer than two teams. */
  readonly team_gap_before: number | null;
  readonly team_gap_after: number | null;
  readonly assistance: number;
  readonly eligible_players: number;
  /** Players above the latency limit: reported at scale 1, never scaled. A script can act on this count: `status` says how the eligible players fared. */
  readonly ineligible_players: number;
  /** The lowest scale the ratio forces on every eligible player (the floor without a ratio). */
  readonly lift: number;
}

/** The report views, present when asked for in `BalanceOptions.views`. */
export interface LobbyViews {
  /** Whether the answer keeps the players in order (ordering.ts): the largest overtake and the one-step bound. */
  readonly ordering?: OrderingFigures;
  readonly duel?: DuelView;
  readonly exploit?: ExploitView;
  readonly uncertainty?: UncertaintyView;
}

export interface BalanceOptions {
  /** Report views; all off by default (the matchmaker's hot path). */
  readonly views?: {
    /** The ordering figures: largest_overtake and step_gain (a sort of the players; the audit uses them). */
    readonly ordering?: boolean;
    readonly duel?: boolean;
    readonly exploit?: boolean;
    /** `true` for 200 draws with the fixed default seed, or the draws and seed. */
    readonly uncertainty?: boolean | UncertaintyOptions;
  };
}

export type BalanceResult =
  | {
      readonly status: 'balanced' | 'capped';
      readonly match_id: string;
      readonly attribute: LobbyFile['attribute'];
      readonly difficulty: number | string;
      readonly target: number;
      readonly level: number;
      readonly players: readonly PlayerBalance[];
      readonly summary: LobbySummary;
      readonly views?: LobbyViews;
      readonly warnings: readonly Issue[];
    }
  | { readonly status: 'rejected'; readonly match_id: string; readonly issues: readonly Issue[]; readonly warnings: readonly Issue[] };

/**
 * Jain's fairness index J = (sum x)^2 / (n sum x^2) (Jain, Chiu and Hawe 1984;
 * as `jainIndex` in src/stats/jain-index.ts, 1 for all-zero shares), with
 * order-free sums so that it does not depend on the players' order.
 */
function jainOf(values: Float64Array, count: number): number {
  // Shares divided by the largest first, as jainIndex does: J is unchanged, and equal shares give exactly 1.
  let largest = 0;
  for (let index = 0; index < count; index += 1) if ((values[index] as number) > largest) largest = values[index] as number;
  if (largest === 0) return 1;
  unitSums(values, count, largest, null, 0, sums);
  return Math.min(1, (sums.sum * sums.sum) / (count * sums.squares));
}

/** Scratch for `unitSums`. */
const sums = { sum: 0, squares: 0, count: 0 };

/** Per team (eligible players with a team), by team name: order-free means of the solution's before and after. */
function teamFigures(lobby: LobbyFile, solved: LobbySolve, workspace: SolveWorkspace): TeamFigures[] {
  const { solution, eligible } = solved;
  const count = solution.count;
  const teamOf = workspace.rank;
  let names: string[] | null = null;
  for (let slot = 0; slot < count; slot += 1) {
    const team = (lobby.players[eligible[slot] as number] as LobbyFile['players'][number]).team;
    if (team === undefined) {
      teamOf[slot] = -1;
      continue;
    }
    names ??= [];
    let number = names.indexOf(team);
    if (number < 0) {
      number = names.length;
      names.push(team);
    }
    teamOf[slot] = number;
  }
  if (names === null) return [];
  const named = names;
  return [...named]
    .sort()
    .map((team) => {
      const number = named.indexOf(team);
      unitSums(solution.before, count, 1, teamOf, number, sums);
      const players = sums.count;
      const meanBefore = sums.sum / players;
      unitSums(solution.after, count, 1, teamOf, number, sums);
      return { team, players, mean_before: meanBefore, mean_after: sums.sum / players };
    });
}

function spread(values: readonly TeamFigures[], pick: (team: TeamFigures) => number): number {
  let smallest = Infinity;
  let largest = -Infinity;
  for (const value of values) {
    const figure = pick(value);
    if (figure < smallest) smallest = figure;
    if (figure > largest) largest = figure;
  }
  return largest - smallest;
}

/**
 * A numeric difficulty and a reference latency are predictions' inputs too: outside the training
 * range they extrapolate. Known before the solve, so a lobby the solve rejects (a difficulty of
 * 1e308 makes every prediction 0 or 1) still says why its numbers are out of reach.
 */
function inputWarnings(lobby: LobbyFile, model: CompiledModel, rules: CompiledRules): Issue[] {
  const warnings: Issue[] = [];
  const { latency_ms: latencyRange, difficulty: difficultyRange } = model.training;
  if (typeof lobby.difficulty === 'number' && !Array.isArray(difficultyRange) && (lobby.difficulty < difficultyRange.min || lobby.difficulty > difficultyRange.max)) {
    warnings.push(warning('outside_training_range', 'difficulty', `the difficulty ${show(lobby.difficulty)} is outside the model's training difficulties ${difficultyRange.min}-${difficultyRange.max}: every prediction is an extrapolation`));
  }
  const reference = rules.target.kind === 'reference_latency' ? rules.target.latency_ms : null;
  if (reference !== null && (reference < latencyRange.min || reference > latencyRange.max)) {
    warnings.push(warning('outside_training_range', 'rules.target.latency_ms', `the target's reference latency ${show(reference)} ms is outside the model's training latencies ${latencyRange.min}-${latencyRange.max} ms: the target is an extrapolation`));
  }
  return warnings;
}

function trainingWarnings(lobby: LobbyFile, solved: LobbySolve, model: CompiledModel, rules: CompiledRules): Issue[] {
  let warnings: Issue[] | null = null;
  const before = inputWarnings(lobby, model, rules);
  if (before.length > 0) warnings = before;
  const { latency_ms: latencyRange, scale: scaleRange } = model.training;
  const { solution, eligible, estimates } = solved;
  for (let slot = 0; slot < solution.count; slot += 1) {
    const index = eligible[slot] as number;
    const latency = estimates[index] as number;
    const scale = solution.scales[slot] as number;
    if (latency < latencyRange.min || latency > latencyRange.max) {
      const id = (lobby.players[index] as LobbyFile['players'][number]).id;
      (warnings ??= []).push(warning('outside_training_range', `players[${index}].latency_ms`, `player ${show(id)} at ${latency.toFixed(1)} ms is outside the model's training latencies ${latencyRange.min}-${latencyRange.max} ms: the prediction is an extrapolation`));
    }
    if (scale > scaleRange.max + 1e-12 || scale < scaleRange.min - 1e-12) {
      const id = (lobby.players[index] as LobbyFile['players'][number]).id;
      (warnings ??= []).push(warning('outside_training_range', `players[${index}].scale`, `the scale ${scale.toFixed(3)} for player ${show(id)} is outside the model's training scales ${scaleRange.min}-${scaleRange.max}: the prediction is an extrapolation`));
    }
  }
  return warnings ?? [];
}

function playersOf(lobby: LobbyFile, model: CompiledModel, rules: CompiledRules, solved: LobbySolve): PlayerBalance[] {
  const { solution, slots, estimates } = solved;
  const target = solution.target;
  const players: PlayerBalance[] = new Array<PlayerBalance>(lobby.players.length);
  for (let index = 0; index < players.length; index += 1) {
    const player = lobby.players[index] as LobbyFile['players'][number];
    const slot = slots[index] as number;
    if (slot < 0) {
      // Ineligible: reported at scale 1, with the prediction the rules' estimator gives.
      const before = ineligiblePrediction(model, solved.line, player.latency_ms, estimates[index] as number, rules);
      players[index] = { id: player.id, team: player.team ?? null, eligible: false, latency_estimate_ms: estimates[index] as number, scale: 1, expected_before: before, expected_after: before, gap_to_target: target - before, binding: 'ineligible' };
      continue;
    }
    const after = solution.after[slot] as number;
    players[index] = {
      id: player.id,
      team: player.team ?? null,
      eligible: true,
      latency_estimate_ms: estimates[index] as number,
      scale: solution.scales[slot] as number,
      expected_before: solution.before[slot] as number,
      expected_after: after,
      gap_to_target: target - after,
      binding: BINDINGS[solution.binding[slot] as number] as Binding,
    };
  }
  return players;
}

/**
 * The hot path's arrays, reused from call to call: everything is copied into
 * the result before `balanceLobby` returns, and the views solve in workspaces
 * of their own.
 */
const sharedWorkspace = new SolveWorkspace();

/**
 * Balance one lobby. See the module comment for the result's meaning.
 *
 * Cost without views: O(players x samples) for the common case (a closed
 * form per player for point latencies or a robust estimator; a safeguarded
 * Newton solve per player for `all_samples`); with a binding budget about
 * 5-15 water levels of that and O(players log players) heap moves, times
 * about three lifts with a ratio on the grid (see solve-scales.ts). Views:
 * ordering O(players log players), duel O(players^2), exploit
 * O(players^2 x samples), uncertainty O(draws x players x samples).
 *
 * Inputs are checked at run time: a lobby that did not come from
 * safeParseLobby is validated first (its issues make the result `rejected`);
 * a model or rules that did not come from compileModel / compileRules give
 * `rejected` with `uncompiled_model` / `uncompiled_rules`; options that are
 * not as documented throw a RangeError or TypeError (a programming error).
 *
 * @example
 *   const result = balanceLobby(lobby, model, rules);
 *   if (result.status !== 'rejected') for (const player of result.players) engine.setScale(player.id, player.scale);
 */
export function balanceLobby(input: LobbyFile, model: CompiledModel, rules: CompiledRules, options: BalanceOptions = {}): BalanceResult {
  checkBalanceOptions(options);
  const uncompiled = compiledInputIssues(model, rules);
  if (uncompiled.length > 0) return { status: 'rejected', match_id: matchIdOf(input), issues: uncompiled, warnings: [] };
  const parsed = parsedLobby(input);
  if (!parsed.ok) return { status: 'rejected', match_id: matchIdOf(input), issues: parsed.issues, warnings: [] };
  const lobby = parsed.value;
  const lineResult = model.lineAt(lobby.difficulty);
  if (!lineResult.ok) return { status: 'rejected', match_id: lobby.match_id, issues: lineResult.issues, warnings: [] };
  const solvedResult = solveLobby(lobby, model, lineResult.value, rules, sharedWorkspace);
  if (!solvedResult.ok) return { status: 'rejected', match_id: lobby.match_id, issues: solvedResult.issues, warnings: inputWarnings(lobby, model, rules) };
  const solved = solvedResult.value;
  const { solution } = solved;
  const players = playersOf(lobby, model, rules, solved);
  const count = solution.count;
  let worstGap = -Infinity;
  let lowestBefore = Infinity;
  let highestBefore = -Infinity;
  let lowestAfter = Infinity;
  let highestAfter = -Infinity;
  for (let slot = 0; slot < count; slot += 1) {
    const before = solution.before[slot] as number;
    const after = solution.after[slot] as number;
    if (before < lowestBefore) lowestBefore = before;
    if (before > highestBefore) highestBefore = before;
    if (after < lowestAfter) lowestAfter = after;
    if (after > highestAfter) highestAfter = after;
    if (solution.target - after > worstGap) worstGap = solution.target - after;
  }
  const teams = teamFigures(lobby, solved, sharedWorkspace);
  const summary: LobbySummary = {
    largest_gap_before: highestBefore - lowestBefore,
    largest_gap_after: highestAfter - lowestAfter,
    jain_before: jainOf(solution.before, count),
    jain_after: jainOf(solution.after, count),
    teams,
    team_gap_before: teams.length < 2 ? null : spread(teams, (team) => team.mean_before),
    team_gap_after: teams.length < 2 ? null : spread(teams, (team) => team.mean_after),
    assistance: solution.assistance,
    eligible_players: count,
    ineligible_players: lobby.players.length - count,
    lift: solution.lift,
  };
  const result = {
    status: worstGap > rules.accepted_gap ? ('capped' as const) : ('balanced' as const),
    match_id: lobby.match_id,
    attribute: lobby.attribute,
    difficulty: lobby.difficulty,
    target: solution.target,
    level: solution.level,
    players,
    summary,
    warnings: trainingWarnings(lobby, solved, model, rules),
  };
  const asked = options.views;
  if (asked === undefined || !(asked.ordering || asked.duel || asked.exploit || asked.uncertainty)) return result;
  const views: { ordering?: OrderingFigures; duel?: DuelView; exploit?: ExploitView; uncertainty?: UncertaintyView } = {};
  if (asked.ordering) {
    views.ordering = orderingFigures(count, solution.before, solution.after, solution.scales, solution.step, rules.scale_floor, solved.curves, model.link, model.scaleForm as ScaleForm, sharedWorkspace.scratch, sharedWorkspace.objective, sharedWorkspace.heap);
  }
  // Ineligible players are never scaled and are left out of every fairness figure, duels included.
  if (asked.duel) views.duel = duelView(players.filter((player) => player.eligible), rules);
  if (asked.exploit) views.exploit = exploitView(lobby, model, rules, solved);
  if (asked.uncertainty) views.uncertainty = uncertaintyView(lobby, model, rules, solved, asked.uncertainty === true ? {} : asked.uncertainty);
  return { ...result, views };
}
