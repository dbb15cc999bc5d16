/**
 * The duel view: what the per-shot hit probabilities mean for who wins a
 * race to `rules.duel.hits_to_win` hits, before and after compensation. A
 * small accuracy gap becomes a larger win-probability gap, so this is the
 * figure players feel.
 *
 * For each pair of opposing players (on different teams; in a free-for-all,
 * or where either player has no team, every pair), the probability that the
 * first lands `hits_to_win` hits before the second, counting a tie (both in
 * the same simultaneous volley) as half, from `duelWinProbability`
 * (negative-binomial race, Feller 1968, section VI.8). Players are taken to
 * be of equal skill: the only difference is what the latency model predicts.
 *
 * Cost: one duel evaluation per pair and per side of compensation, each
 * O(hits_to_win / p) volleys; O(players^2) pairs.
 */
import { duelWinProbability } from '../../stats/duel.js';
import type { CompiledRules } from '../rules.js';

export interface DuelPlayer {
  readonly id: string;
  readonly team: string | null;
  readonly expected_before: number;
  readonly expected_after: number;
}

export interface DuelPair {
  /** The first player of the pair (lobby order). */
  readonly a: string;
  readonly b: string;
  /** P(a lands `hits_to_win` hits before b), a tie counted as half, before compensation. */
  readonly a_wins_before: number;
  readonly a_wins_after: number;
}

export interface DuelView {
  readonly hits_to_win: number;
  readonly volleys: 'simultaneous' | 'alternating';
  readonly pairs: readonly DuelPair[];
  /** Largest |P(a wins) - 1/2| over the pairs, before and after; 0 with no opposing pair. */
  readonly worst_deviation_before: number;
  readonly worst_deviation_after: number;
}

function opposing(left: DuelPlayer, right: DuelPlayer): boolean {
  return left.team === null || right.team === null || left.team !== right.team;
}

/**
 * The duel view of a balanced lobby's players (`balanceLobby` passes the
 * eligible ones: an ineligible player is never scaled).
 *
 * With `alternating` volleys the first player of a pair shoots first, so even
 * equal hit probabilities do not give even odds; the deviation reported is
 * still from 1/2, and the before/after comparison is what matters.
 *
 * @example
 *   duelView(result.players, rules).worst_deviation_after; // near 0 when balanced
 */
export function duelView(players: readonly DuelPlayer[], rules: CompiledRules): DuelView {
  const { hits_to_win: hitsToWin, volleys } = rules.duel;
  const pairs: DuelPair[] = [];
  let worstBefore = 0;
  let worstAfter = 0;
  for (let first = 0; first < players.length; first += 1) {
    const left = players[first] as DuelPlayer;
    for (let second = first + 1; second < players.length; second += 1) {
      const right = players[second] as DuelPlayer;
      if (!opposing(left, right)) continue;
      const before = duelWinProbability(left.expected_before, right.expected_before, hitsToWin, volleys);
      const after = duelWinProbability(left.expected_after, right.expected_after, hitsToWin, volleys);
      pairs.push({ a: left.id, b: right.id, a_wins_before: before, a_wins_after: after });
      worstBefore = Math.max(worstBefore, Math.abs(before - 0.5));
      worstAfter = Math.max(worstAfter, Math.abs(after - 0.5));
    }
  }
  return { hits_to_win: hitsToWin, volleys, pairs, worst_deviation_before: worstBefore, worst_deviation_after: worstAfter };
}
