/**
 * `balanceLobby(lobby, model, rules)`: per-player scales for one match.
 *
 * Pure and synchronous. The model and rules are compiled once
 * (`compileModel`, `compileRules`); the lobby is a value of the lobby format
 * (validate untrusted payloads with `safeParseLobby` first). Returns a result
 * tagged with `status`:
 * - `balanced`: every eligible player within the accepted gap of the target;
 * - `capped`: some player is held below the target by more than the accepted gap;
 * - `rejected`: the lobby cannot be solved with this model (issues say why).
 */
import { type Issue, error, show, warning } from '../issues.js';
import type { LobbyFile } from '../formats/lobby-file.js';
import type { CompiledModel, PredictorLine } from '../model/compile.js';
import { scaleTermValue } from '../model/terms.js';
import { jainIndex } from '../stats/jain-index.js';
import { quantileSorted } from '../stats/quantile.js';
import type { CompiledRules } from './rules.js';
import { type PlayerCurve, expectedAtTerm, playerCurve, smallestSlope } from './player-curve.js';
import { type Binding, type ScaleSolution, solveScales } from './solve-scales.js';

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
  readonly teams: readonly TeamFigures[];
  /** Largest minus smallest team mean of expected hit probability; null with fewer than two teams. */
  readonly team_gap_before: number | null;
  readonly team_gap_after: number | null;
  readonly assistance: number;
  readonly eligible_players: number;
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
      readonly warnings: readonly Issue[];
    }
  | { readonly status: 'rejected'; readonly match_id: string; readonly issues: readonly Issue[]; readonly warnings: readonly Issue[] };

/** A player reduced to what the solver needs. */
export interface PreparedPlayer {
  readonly id: string;
  readonly team: string | null;
  readonly latencyEstimate: number;
  readonly eligible: boolean;
  readonly curve: PlayerCurve;
}

/** The latency the estimator takes from one or more samples, and the latencies the curve averages over. */
export function estimateLatency(latency: number | readonly number[], rules: CompiledRules): { estimate: number; points: ArrayLike<number> } {
  if (typeof latency === 'number') return { estimate: latency, points: [latency] };
  const estimator = rules.latency_estimator;
  if (estimator === 'all_samples') {
    let sum = 0;
    for (const value of latency) sum += value;
    return { estimate: sum / latency.length, points: latency };
  }
  const sorted = Float64Array.from(latency).sort();
  const value = quantileSorted(sorted, estimator === 'median' ? 0.5 : estimator.percentile / 100, 7);
  return { estimate: value, points: [value] };
}

/** Prepare the players of a lobby at a predictor line. Pure; shared with the exploit and uncertainty views. */
export function preparePlayers(lobby: LobbyFile, line: PredictorLine, rules: CompiledRules): PreparedPlayer[] {
  return lobby.players.map((player) => {
    const { estimate, points } = estimateLatency(player.latency_ms, rules);
    const eligible = rules.latency_limit_ms === null || estimate <= rules.latency_limit_ms;
    return { id: player.id, team: player.team ?? null, latencyEstimate: estimate, eligible, curve: playerCurve(line, points) };
  });
}

function targetOf(prepared: readonly PreparedPlayer[], model: CompiledModel, line: PredictorLine, rules: CompiledRules): number {
  const unitTerm = scaleTermValue(model.scaleForm, 1);
  const spec = rules.target;
  if (spec.kind === 'fixed') return spec.probability;
  if (spec.kind === 'reference_latency') return expectedAtTerm(playerCurve(line, [spec.latency_ms]), model.link, unitTerm);
  let best = -Infinity;
  for (const player of prepared) if (player.eligible) best = Math.max(best, expectedAtTerm(player.curve, model.link, unitTerm));
  return best;
}

/** Eligible players from best-connected to worst: highest unscaled performance first, ties by id. */
function performanceOrder(curves: readonly PlayerCurve[], ids: readonly string[], before: (curve: PlayerCurve) => number): number[] {
  const values = curves.map(before);
  return curves
    .map((_, index) => index)
    .sort((left, right) => (values[right] ?? 0) - (values[left] ?? 0) || ((ids[left] ?? '') < (ids[right] ?? '') ? -1 : (ids[left] ?? '') > (ids[right] ?? '') ? 1 : 0));
}

/** Solve prepared players; returns the solution over the eligible players, or issues. */
export function solvePrepared(
  prepared: readonly PreparedPlayer[],
  model: CompiledModel,
  line: PredictorLine,
  rules: CompiledRules,
): { solution: ScaleSolution; eligibleIndex: number[] } | { issues: Issue[] } {
  if (model.scaleForm === 'none') {
    return { issues: [error('no_scale_term', 'model.terms', 'compensation requires a model with a scale term (scale or log_scale), got none')] };
  }
  const eligibleIndex: number[] = [];
  prepared.forEach((player, index) => {
    if (player.eligible) eligibleIndex.push(index);
  });
  if (eligibleIndex.length === 0) {
    return { issues: [error('no_eligible_player', 'players', `a lobby requires at least one player within the latency limit (${rules.latency_limit_ms} ms), got none`)] };
  }
  const issues: Issue[] = [];
  for (const index of eligibleIndex) {
    const player = prepared[index] as PreparedPlayer;
    if (!(smallestSlope(player.curve) > 0)) {
      issues.push(error('scale_not_increasing', `players[${index}]`, `compensation requires hit probability to increase with the scale, but under this model it does not for player ${show(player.id)} at ${player.latencyEstimate.toFixed(1)} ms (the scale term's coefficient there is ${smallestSlope(player.curve).toPrecision(3)})`));
    }
  }
  if (issues.length > 0) return { issues };
  const form = model.scaleForm;
  const curves = eligibleIndex.map((index) => (prepared[index] as PreparedPlayer).curve);
  const ids = eligibleIndex.map((index) => (prepared[index] as PreparedPlayer).id);
  const target = targetOf(prepared, model, line, rules);
  const unitTerm = scaleTermValue(form, 1);
  const order = performanceOrder(curves, ids, (curve) => expectedAtTerm(curve, model.link, unitTerm));
  return { solution: solveScales(curves, target, order, model.link, form, rules), eligibleIndex };
}

function spread(values: readonly number[]): number {
  return values.length === 0 ? 0 : Math.max(...values) - Math.min(...values);
}

function trainingWarnings(prepared: readonly PreparedPlayer[], model: CompiledModel, scales: readonly number[]): Issue[] {
  const warnings: Issue[] = [];
  const { latency_ms: latencyRange, scale: scaleRange } = model.training;
  prepared.forEach((player, index) => {
    if (!player.eligible) return;
    if (player.latencyEstimate < latencyRange.min || player.latencyEstimate > latencyRange.max) {
      warnings.push(warning('outside_training_range', `players[${index}].latency_ms`, `player ${show(player.id)} at ${player.latencyEstimate.toFixed(1)} ms is outside the model's training latencies ${latencyRange.min}-${latencyRange.max} ms: the prediction is an extrapolation`));
    }
    const scale = scales[index] ?? 1;
    if (scale > scaleRange.max + 1e-12 || scale < scaleRange.min - 1e-12) {
      warnings.push(warning('outside_training_range', `players[${index}].scale`, `the scale ${scale.toFixed(3)} for player ${show(player.id)} is outside the model's training scales ${scaleRange.min}-${scaleRange.max}: the prediction is an extrapolation`));
    }
  });
  return warnings;
}

/** Balance one lobby. See the module comment for the result's meaning. */
export function balanceLobby(lobby: LobbyFile, model: CompiledModel, rules: CompiledRules): BalanceResult {
  const lineResult = model.lineAt(lobby.difficulty);
  if (!lineResult.ok) return { status: 'rejected', match_id: lobby.match_id, issues: lineResult.issues, warnings: [] };
  const line = lineResult.value;
  const prepared = preparePlayers(lobby, line, rules);
  const solved = solvePrepared(prepared, model, line, rules);
  if ('issues' in solved) return { status: 'rejected', match_id: lobby.match_id, issues: solved.issues, warnings: [] };
  const { solution, eligibleIndex } = solved;
  const position = new Map<number, number>();
  eligibleIndex.forEach((playerIndex, slot) => position.set(playerIndex, slot));
  const unitTerm = scaleTermValue(model.scaleForm, 1);
  const players: PlayerBalance[] = prepared.map((player, index) => {
    const slot = position.get(index);
    if (slot === undefined) {
      const before = expectedAtTerm(player.curve, model.link, unitTerm);
      return { id: player.id, team: player.team, eligible: false, latency_estimate_ms: player.latencyEstimate, scale: 1, expected_before: before, expected_after: before, gap_to_target: solution.target - before, binding: 'ineligible' };
    }
    const after = solution.after[slot] ?? 0;
    return {
      id: player.id,
      team: player.team,
      eligible: true,
      latency_estimate_ms: player.latencyEstimate,
      scale: solution.scales[slot] ?? 1,
      expected_before: solution.before[slot] ?? 0,
      expected_after: after,
      gap_to_target: solution.target - after,
      binding: solution.binding[slot] ?? 'none',
    };
  });
  const eligible = players.filter((player) => player.eligible);
  const beforeValues = eligible.map((player) => player.expected_before);
  const afterValues = eligible.map((player) => player.expected_after);
  const teamNames = [...new Set(eligible.map((player) => player.team).filter((team): team is string => team !== null))].sort();
  const teams: TeamFigures[] = teamNames.map((team) => {
    const members = eligible.filter((player) => player.team === team);
    const mean = (values: number[]) => values.reduce((sum, value) => sum + value, 0) / values.length;
    return { team, players: members.length, mean_before: mean(members.map((player) => player.expected_before)), mean_after: mean(members.map((player) => player.expected_after)) };
  });
  const summary: LobbySummary = {
    largest_gap_before: spread(beforeValues),
    largest_gap_after: spread(afterValues),
    jain_before: jainIndex(beforeValues),
    jain_after: jainIndex(afterValues),
    teams,
    team_gap_before: teams.length < 2 ? null : spread(teams.map((team) => team.mean_before)),
    team_gap_after: teams.length < 2 ? null : spread(teams.map((team) => team.mean_after)),
    assistance: solution.assistance,
    eligible_players: eligible.length,
  };
  const worstGap = Math.max(...eligible.map((player) => player.gap_to_target));
  return {
    status: worstGap > rules.accepted_gap ? 'capped' : 'balanced',
    match_id: lobby.match_id,
    attribute: lobby.attribute,
    difficulty: lobby.difficulty,
    target: solution.target,
    level: solution.level,
    players,
    summary,
    warnings: trainingWarnings(prepared, model, players.map((player) => player.scale)),
  };
}
