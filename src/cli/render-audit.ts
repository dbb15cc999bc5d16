/** The audit as tables (for people) or Markdown (for a report or a ticket). */
import type { AuditReport, LobbyAudit, SweepReport } from '../audit/audit-schema.js';
import { PLAYER_ALIGN, PLAYER_HEAD, playerCells } from './render-balance.js';
import { compactTable } from './table.js';
import { fixed } from './output.js';

type Style = 'table' | 'markdown';

function grid(head: string[], rows: string[][], style: Style, align: ('left' | 'right')[]): string {
  if (style === 'markdown') {
    const line = (cells: string[]) => `| ${cells.map((cell) => cell.replace(/\|/g, '\\|')).join(' | ')} |`;
    return [line(head), `|${align.map((side) => (side === 'right' ? '---:' : ':---')).join('|')}|`, ...rows.map(line)].join('\n');
  }
  const table = compactTable(head, align);
  table.push(...rows);
  return table.toString();
}

function playerRows(audit: LobbyAudit): string[][] {
  return audit.players.map((player) => [...playerCells(player), player.spike_gain === null ? '-' : fixed(player.spike_gain)]);
}

function renderLobby(audit: LobbyAudit, style: Style): string {
  const heading = style === 'markdown' ? `### ${audit.match_id} — ${audit.verdict.toUpperCase()}` : `${audit.match_id} (${audit.source}): ${audit.verdict.toUpperCase()}`;
  const parts = [heading];
  if (audit.figures !== null) {
    parts.push(grid([...PLAYER_HEAD, 'spike gain'], playerRows(audit), style, [...PLAYER_ALIGN, 'right']));
    const figures = audit.figures;
    parts.push(
      [
        `target P(hit) ${fixed(audit.target)}`,
        `largest gap ${fixed(figures.largest_gap_before)} -> ${fixed(figures.largest_gap_after)}`,
        `Jain's index ${fixed(figures.jain_before, 4)} -> ${fixed(figures.jain_after, 4)}`,
        figures.team_gap_before === null ? null : `team gap ${fixed(figures.team_gap_before)} -> ${fixed(figures.team_gap_after)}`,
        `worst equal-skill duel off even odds ${fixed(figures.worst_duel_deviation_before)} -> ${fixed(figures.worst_duel_deviation_after)}`,
        `exploit gain: spikes ${fixed(figures.worst_spike_gain)}, uniform shift ${fixed(figures.worst_shift_gain)}`,
        figures.worst_gap_without_step === null ? null : `rounding: one step moves a player up to ${fixed(figures.step_gain)}, largest overtake ${fixed(figures.largest_overtake)}, worst gap without the step ${fixed(figures.worst_gap_without_step)}`,
      ]
        .filter((part) => part !== null)
        .join('; '),
    );
  }
  if (audit.reasons.length > 0) parts.push(audit.reasons.map((entry) => `${style === 'markdown' ? '-' : '  fail:'} ${entry.message}`).join('\n'));
  return parts.join(style === 'markdown' ? '\n\n' : '\n');
}

export function renderAudit(report: AuditReport, style: Style): string {
  const summary = report.summary;
  const ranking = grid(
    ['lobby', 'verdict', 'worst gap', 'reasons'],
    summary.worst_first.map((entry) => [entry.match_id, entry.verdict, fixed(entry.worst_gap), String(entry.reasons)]),
    style,
    ['left', 'left', 'right', 'right'],
  );
  const binding = Object.entries(summary.binding_counts)
    .filter(([name, count]) => name !== 'none' && count > 0)
    .sort((left, right) => right[1] - left[1])
    .map(([name, count]) => `${name} ${count}`)
    .join(', ');
  const failing = Object.entries(summary.failing_rules)
    .filter(([, count]) => count > 0)
    .sort((left, right) => right[1] - left[1])
    .map(([name, count]) => `${name} ${count}`)
    .join(', ');
  const summaryText = [
    style === 'markdown' ? '## Summary' : 'Summary',
    `${summary.passed} of ${summary.lobbies} lobbies pass.`,
    ranking,
    `Binding constraints (players): ${binding === '' ? 'none' : binding}; binds most often: ${summary.most_binding ?? 'none'}.`,
    `Failing rules (lobbies): ${failing === '' ? 'none' : failing}.`,
    `Caution: ${report.caution}`,
  ].join(style === 'markdown' ? '\n\n' : '\n');
  const lobbies = report.lobbies.map((audit) => renderLobby(audit, style)).join('\n\n');
  return `${style === 'markdown' ? '# Audit\n\n' : ''}${lobbies}\n\n${summaryText}`;
}

export function renderSweep(report: SweepReport, style: Style): string {
  const rows = report.rows.map((row) => [
    String(row.value),
    row.valid ? `${row.passed}/${row.lobbies}` : 'refused',
    row.share_passing === null ? '-' : `${(100 * row.share_passing).toFixed(0)}%`,
    fixed(row.worst_gap),
    row.issues.join('; '),
  ]);
  return `Sweep of ${report.rule}\n${grid([report.rule, 'pass', 'share', 'worst gap', 'note'], rows, style, ['right', 'right', 'right', 'right', 'left'])}`;
}
