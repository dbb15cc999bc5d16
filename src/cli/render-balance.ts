/** The balance result as tables for people. */
import { compactTable } from './table.js';
import type { BalanceResult, PlayerBalance } from '../solver/balance-lobby.js';
import { fixed } from './output.js';


/** The per-player columns every lobby table shows (balance and audit). */
export const PLAYER_HEAD = ['player', 'team', 'latency ms', 'scale', 'P(hit) before', 'P(hit) after', 'gap to target', 'held by'] as const;
export const PLAYER_ALIGN = ['left', 'left', 'right', 'right', 'right', 'right', 'right', 'left'] as const;

/** A player's cells under PLAYER_HEAD; an ineligible player shows no scale or result. */
export function playerCells(player: Pick<PlayerBalance, 'id' | 'team' | 'eligible' | 'latency_estimate_ms' | 'scale' | 'expected_before' | 'expected_after' | 'gap_to_target' | 'binding'>): string[] {
  return [
    player.id,
    player.team ?? '-',
    player.latency_estimate_ms.toFixed(1),
    player.eligible ? player.scale.toFixed(3) : '-',
    fixed(player.expected_before),
    player.eligible ? fixed(player.expected_after) : '-',
    player.eligible ? fixed(player.gap_to_target) : '-',
    player.binding,
  ];
}

export const CAUTION =
  'Caution: compensation changes competitive outcomes. Disclose it to the players, measure latency on the server (never trust the client), and defer to the league\'s own rules and officials.';

export function renderBalance(result: BalanceResult): string {
  if (result.status === 'rejected') {
    return `${result.match_id}: rejected\n${result.issues.map((issue) => `  ${issue.location}: ${issue.message}`).join('\n')}`;
  }
  const table = compactTable(PLAYER_HEAD, PLAYER_ALIGN);
  for (const player of result.players) table.push(playerCells(player));
  const summary = result.summary;
  const ordering = result.views?.ordering;
  const lines = [
    `${result.match_id} (${result.attribute}, difficulty ${String(result.difficulty)}): ${result.status}${result.summary.ineligible_players === 0 ? '' : `, ${result.summary.ineligible_players} player${result.summary.ineligible_players === 1 ? '' : 's'} excluded (above the latency limit, never scaled)`}`,
    table.toString(),
    `target P(hit) ${fixed(result.target)}; largest gap ${fixed(summary.largest_gap_before)} -> ${fixed(summary.largest_gap_after)}; Jain's index ${fixed(summary.jain_before, 4)} -> ${fixed(summary.jain_after, 4)}` +
      (summary.team_gap_before === null ? '' : `; team gap ${fixed(summary.team_gap_before)} -> ${fixed(summary.team_gap_after)}`) +
      (ordering === undefined || ordering.step_gain === 0 ? '' : `; one step moves a player up to ${fixed(ordering.step_gain)}, largest overtake ${fixed(ordering.largest_overtake)}`),
  ];
  return lines.join('\n');
}
