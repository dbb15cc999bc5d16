/**
 * `rankLobbies(pool, candidates, model, rules)`: a matchmaker's choice among
 * candidate groupings of queued players. Each candidate (a list of ids from
 * the pool) is balanced under the rules, and the candidates are ranked by the
 * unfairness compensation cannot remove:
 *
 * 1. the residual gaps, max(0, T - E_i(s_i)) for every player of the
 *    candidate (an ineligible player, never scaled, counts with their gap at
 *    scale 1), sorted from the largest and compared lexicographically, the
 *    smaller first (leximin of the residual gaps: the worst-off player's gap
 *    first, then the next);
 * 2. Jain's index of the players' expected performance after compensation
 *    (Jain, Chiu and Hawe 1984), the larger first;
 * 3. the mean latency estimate, the lower first;
 * 4. the candidate's position in the list.
 * A candidate the model cannot solve (`rejected`, with its issues) ranks last.
 *
 * Only figures are built per candidate: the solver runs in a shared
 * workspace and no per-player result is made, and under a robust estimator
 * each pool player's samples are reduced to their latency once, not once per
 * candidate. The full `balanceLobby` result
 * is built for the best candidate alone (`best`).
 *
 * Cost: one lobby solve per candidate (see balance-lobby.ts), plus a sort of
 * each candidate's gaps; `npm run bench:rank` measures player-evaluations per
 * second.
 */
import { checkBalanceOptions, compiledInputIssues, parsedLobby } from './entry-checks.js';
import { type Issue, error, show } from '../issues.js';
import type { LobbyFile, LobbyPlayer } from '../formats/lobby-types.js';
import type { CompiledModel } from '../model/compile.js';
import type { CompiledRules } from './rules.js';
import { type BalanceOptions, type BalanceResult, balanceLobby } from './balance-lobby.js';
import { ineligiblePrediction, solveLobby, withEstimate } from './solve-lobby.js';
import { SolveWorkspace, unitSums } from './workspace.js';
import { readSafely } from '../validated.js';

export interface CandidateFigures {
  /** The candidate's index in the list given. */
  readonly candidate: number;
  readonly status: 'solved' | 'rejected';
  /** The target of the solved lobby; null when rejected. */
  readonly target: number | null;
  /** Residual gaps of every player, largest first (empty when rejected). */
  readonly gaps: readonly number[];
  /** The largest residual gap (the first of `gaps`); null when rejected. */
  readonly worst_gap: number | null;
  /** Jain's index of expected performance after compensation, every player counted; null when rejected. */
  readonly jain: number | null;
  /** Mean latency estimate of the candidate's players (the rules' estimator). */
  readonly mean_latency_ms: number | null;
  /** Players above the latency limit (never scaled). */
  readonly ineligible: readonly string[];
  /** Why the candidate was rejected. */
  readonly issues: readonly Issue[];
}

export type RankResult =
  | {
      readonly status: 'ranked';
      /** Every candidate, best first. */
      readonly ranked: readonly CandidateFigures[];
      /** The full balance of the best candidate (its players, scales and summary). */
      readonly best: BalanceResult;
    }
  | { readonly status: 'rejected'; readonly issues: readonly Issue[] };

/** Scratch shared by the calls: a workspace and the figures' arrays. */
const workspace = new SolveWorkspace();
let scratch = new Float64Array(64);
const sums = { sum: 0, squares: 0, count: 0 };

/** Lexicographic comparison of gap vectors (largest first), then the tie-breaks; < 0 when `left` is fairer. */
export function compareCandidates(left: CandidateFigures, right: CandidateFigures): number {
  if (left.status !== right.status) return left.status === 'solved' ? -1 : 1;
  const length = Math.max(left.gaps.length, right.gaps.length);
  for (let index = 0; index < length; index += 1) {
    const a = left.gaps[index] ?? 0;
    const b = right.gaps[index] ?? 0;
    if (a !== b) return a - b;
  }
  if (left.jain !== right.jain) return (right.jain ?? 0) - (left.jain ?? 0);
  if (left.mean_latency_ms !== right.mean_latency_ms) return (left.mean_latency_ms ?? Infinity) - (right.mean_latency_ms ?? Infinity);
  return left.candidate - right.candidate;
}

/**
 * Rank candidate lobbies drawn from `pool` (a lobby document holding every
 * queued player; its `match_id`, `attribute` and `difficulty` apply to every
 * candidate). Validate the pool with `safeParseLobby` first.
 *
 * @returns `rejected` with issues when `candidates` is not a list of lists
 *   (or throws when read), a candidate names an id that is not in the pool,
 *   names one twice, or is empty; else every candidate's figures,
 *   best first, and the full balance of the best.
 * @example
 *   const ranking = rankLobbies(pool, [['ash', 'birch'], ['ash', 'cedar']], model, rules);
 *   if (ranking.status === 'ranked') startMatch(ranking.ranked[0].candidate, ranking.best);
 */
export function rankLobbies(input: LobbyFile, candidates: readonly (readonly string[])[], model: CompiledModel, rules: CompiledRules, options: BalanceOptions = {}): RankResult {
  checkBalanceOptions(options);
  const uncompiled = compiledInputIssues(model, rules);
  const parsed = parsedLobby(input);
  if (uncompiled.length > 0 || !parsed.ok) return { status: 'rejected', issues: [...uncompiled, ...(parsed.ok ? [] : parsed.issues.map((issue) => ({ ...issue, location: `pool.${issue.location}` })))] };
  const pool = parsed.value;
  // Under a robust estimator a player's samples become one latency, the same in every candidate: take it once.
  const byId = new Map<string, LobbyPlayer>();
  const original = new Map<string, LobbyPlayer>();
  for (const player of pool.players) {
    original.set(player.id, player);
    byId.set(player.id, withEstimate(player, rules));
  }
  // Candidates are data from the caller: a list that is not one, or that throws when read, is a rejection.
  const { lobbies, issues } = readSafely(
    candidates,
    () => candidateLobbies(candidates, pool, byId),
    (message) => ({ lobbies: [], issues: [error('unreadable_input', 'candidates', `\`candidates\` requires plain data (lists of player ids), got a value that throws when read: ${JSON.stringify(message)}`)] }),
  );
  if (issues.length > 0) return { status: 'rejected', issues };
  const ranked = lobbies.map((lobby, index) => candidateFigures(lobby, index, model, rules)).sort(compareCandidates);
  const chosen = lobbies[(ranked[0] as CandidateFigures).candidate] as LobbyFile;
  const best = balanceLobby({ ...chosen, players: chosen.players.map((player) => original.get(player.id) as LobbyPlayer) }, model, rules, options);
  return { status: 'ranked', ranked, best };
}

/** Each candidate as a lobby of the pool's players, and the issues of candidates that are not lists of the pool's ids. */
function candidateLobbies(candidates: unknown, pool: LobbyFile, byId: ReadonlyMap<string, LobbyPlayer>): { lobbies: LobbyFile[]; issues: Issue[] } {
  const issues: Issue[] = [];
  if (!Array.isArray(candidates)) return { lobbies: [], issues: [error('invalid_candidates', 'candidates', `\`candidates\` requires a list of lists of player ids, got ${show(candidates)}`)] };
  const lobbies: LobbyFile[] = candidates.map((ids: unknown, index) => {
    const seen = new Set<string>();
    const players: LobbyPlayer[] = [];
    if (!Array.isArray(ids)) {
      issues.push(error('invalid_candidate', `candidates[${index}]`, `a candidate requires a list of player ids, got ${show(ids)}`));
      return { ...pool, players };
    }
    if (ids.length === 0) issues.push(error('empty_candidate', `candidates[${index}]`, 'a candidate requires at least one player id, got none'));
    ids.forEach((id: unknown, position) => {
      const player = typeof id === 'string' ? byId.get(id) : undefined;
      if (player === undefined) issues.push(error('unknown_player', `candidates[${index}][${position}]`, `a candidate requires ids of the pool's players, got ${show(id)}`));
      else if (seen.has(id as string)) issues.push(error('duplicate_player', `candidates[${index}][${position}]`, `a player id used once in a candidate, got ${show(id)} again`));
      else {
        seen.add(id as string);
        players.push(player);
      }
    });
    return { ...pool, players };
  });
  if (candidates.length === 0) issues.push(error('no_candidates', 'candidates', 'ranking requires at least one candidate lobby, got none'));
  return { lobbies, issues };
}

/** The figures of one candidate, from a solve in the shared workspace. */
export function candidateFigures(lobby: LobbyFile, candidate: number, model: CompiledModel, rules: CompiledRules): CandidateFigures {
  const line = model.lineAt(lobby.difficulty);
  const solved = line.ok ? solveLobby(lobby, model, line.value, rules, workspace) : line;
  if (!solved.ok) return { candidate, status: 'rejected', target: null, gaps: [], worst_gap: null, jain: null, mean_latency_ms: null, ineligible: [], issues: solved.issues };
  const { solution, slots, estimates } = solved.value;
  const target = solution.target;
  const total = lobby.players.length;
  if (scratch.length < total) scratch = new Float64Array(Math.max(total, 2 * scratch.length));
  const gaps = new Array<number>(total);
  const ineligible: string[] = [];
  let latencySum = 0;
  let largest = 0;
  for (let index = 0; index < total; index += 1) {
    const slot = slots[index] as number;
    const after = slot >= 0 ? (solution.after[slot] as number) : ineligiblePrediction(model, solved.value.line, (lobby.players[index] as LobbyPlayer).latency_ms, estimates[index] as number, rules);
    if (slot < 0) ineligible.push((lobby.players[index] as LobbyPlayer).id);
    scratch[index] = after;
    if (after > largest) largest = after;
    gaps[index] = target - after > 0 ? target - after : 0;
    latencySum += estimates[index] as number;
  }
  gaps.sort((left, right) => right - left);
  let jain = 1;
  if (largest > 0) {
    unitSums(scratch, total, largest, null, 0, sums);
    jain = Math.min(1, (sums.sum * sums.sum) / (total * sums.squares));
  }
  return { candidate, status: 'solved', target, gaps, worst_gap: gaps[0] ?? 0, jain, mean_latency_ms: latencySum / total, ineligible, issues: [] };
}
