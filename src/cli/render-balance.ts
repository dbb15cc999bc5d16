/** The balance result as tables for people. */
import Table from 'cli-table3';
import type { BalanceResult } from '../solver/balance-lobby.js';
import { fixed } from './output.js';

const PLAIN = { head: [] as string[], border: [] as string[] };
/** Box lines without a rule between body rows. */
export const COMPACT_CHARS = { mid: '', 'left-mid': '', 'mid-mid': '', 'right-mid': '' };

export const CAUTION =
  'Caution: compensation changes competitive outcomes. Disclose it to the players, measure latency on the server (never trust the client), and defer to the league\'s own rules and officials.';

export function renderBalance(result: BalanceResult): string {
  if (result.status === 'rejected') {
    return `${result.match_id}: rejected\n${result.issues.map((issue) => `  ${issue.location}: ${issue.message}`).join('\n')}`;
  }
  const table = new Table({
    head: ['player', 'team', 'latency ms', 'scale', 'P(hit) before', 'P(hit) after', 'gap to target', 'held by'],
    style: PLAIN,
    chars: COMPACT_CHARS,
    colAligns: ['left', 'left', 'right', 'right', 'right', 'right', 'right', 'left'],
  });
  for (const player of result.players) {
    table.push([
      player.id,
      player.team ?? '-',
      player.latency_estimate_ms.toFixed(1),
      player.eligible ? player.scale.toFixed(3) : '-',
      fixed(player.expected_before),
      player.eligible ? fixed(player.expected_after) : '-',
      player.eligible ? fixed(player.gap_to_target) : '-',
      player.binding,
    ]);
  }
  const summary = result.summary;
  const lines = [
    `${result.match_id} (${result.attribute}, difficulty ${String(result.difficulty)}): ${result.status}`,
    table.toString(),
    `target P(hit) ${fixed(result.target)}; largest gap ${fixed(summary.largest_gap_before)} -> ${fixed(summary.largest_gap_after)}; Jain's index ${fixed(summary.jain_before, 4)} -> ${fixed(summary.jain_after, 4)}` +
      (summary.team_gap_before === null ? '' : `; team gap ${fixed(summary.team_gap_before)} -> ${fixed(summary.team_gap_after)}`),
  ];
  return lines.join('\n');
}
