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

/** The verdict in words: "within rules" or "outside rules (2 reasons)", with any excluded players. */
export function verdictText(audit: Pick<LobbyAudit, 'verdict' | 'reasons' | 'excluded_players'>): string {
  const words = audit.verdict === 'within_rules' ? 'within rules' : `outside rules (${audit.reasons.length} reason${audit.reasons.length === 1 ? '' : 's'})`;
  return audit.excluded_players === 0 ? words : `${words}; ${audit.excluded_players} player${audit.excluded_players === 1 ? '' : 's'} excluded (above the latency limit)`;
}

function renderLobby(audit: LobbyAudit, style: Style, rules: AuditRulesView): string {
  const heading = style === 'markdown' ? `### ${audit.match_id} — ${verdictText(audit)}` : `${audit.match_id} (${audit.source}): ${verdictText(audit)}`;
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
        `gain from faked lag spikes ${fixed(figures.worst_spike_gain)} (accepted up to ${fixed(rules.accepted_exploit_gain)})`,
        `from delaying every packet ${fixed(figures.worst_shift_gain)} (not judged: only measuring on the server bounds it)`,
        figures.worst_gap_without_step === null ? null : `rounding: one step moves a player up to ${fixed(figures.step_gain)}, largest overtake ${fixed(figures.largest_overtake)}, worst gap without the step ${fixed(figures.worst_gap_without_step)}`,
      ]
        .filter((part) => part !== null)
        .join('; '),
    );
  }
  if (audit.reasons.length > 0) parts.push(audit.reasons.map((entry) => `${style === 'markdown' ? '-' : '  outside rules:'} ${entry.message}`).join('\n'));
  return parts.join(style === 'markdown' ? '\n\n' : '\n');
}

/** The rules the lines of an audit are judged against. */
export interface AuditRulesView {
  readonly accepted_exploit_gain: number;
}

export function renderAudit(report: AuditReport, style: Style, rules: AuditRulesView): string {
  const summary = report.summary;
  const ranking = grid(
    ['lobby', 'verdict', 'worst gap', 'reasons'],
    summary.worst_first.map((entry) => [entry.match_id, entry.verdict === 'within_rules' ? 'within rules' : 'outside rules', fixed(entry.worst_gap), String(entry.reasons)]),
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
    `${summary.within_rules} of ${summary.lobbies} lobbies within rules, ${summary.outside_rules} outside${summary.excluded_players === 0 ? '' : `; ${summary.excluded_players} player(s) excluded above the latency limit`}.`,
    ranking,
    `Binding constraints (players): ${binding === '' ? 'none' : binding}; binds most often: ${summary.most_binding ?? 'none'}.`,
    `Failing rules (lobbies): ${failing === '' ? 'none' : failing}.`,
    `Caution: ${report.caution}`,
  ].join(style === 'markdown' ? '\n\n' : '\n');
  const lobbies = report.lobbies.map((audit) => renderLobby(audit, style, rules)).join('\n\n');
  return `${style === 'markdown' ? '# Audit\n\n' : ''}${lobbies}\n\n${summaryText}`;
}

export function renderSweep(report: SweepReport, style: Style): string {
  const rows = report.rows.map((row) => {
    const failing = Object.entries(row.failing_rules)
      .sort((left, right) => right[1] - left[1])
      .map(([rule, count]) => `${rule} ${count}`)
      .join(', ');
    return [
      `${String(row.value)}${row.value === report.smallest_value_within_rules ? ' *' : ''}`,
      row.valid ? `${row.within_rules}/${row.lobbies}` : 'refused',
      fixed(row.worst_gap),
      row.valid ? (failing === '' ? '-' : failing) : '-',
      row.valid ? (row.most_binding ?? '-') : '-',
      row.valid ? String(row.excluded_players) : '-',
      row.issues.join('; '),
    ];
  });
  const table = grid([report.rule, 'within rules', 'worst gap', 'failing rules (lobbies)', 'binds most', 'excluded', 'note'], rows, style, ['right', 'right', 'right', 'left', 'left', 'right', 'left']);
  const smallest = report.smallest_value_within_rules === null ? `No swept value of ${report.rule} puts every lobby within rules.` : `* the smallest value of ${report.rule} at which every lobby is within rules: ${report.smallest_value_within_rules}.`;
  return `Sweep of ${report.rule}\n${table}\n${smallest}\nRefused values contradict another rule (the note says which); "binds most" names what holds players back; "excluded" counts players above the latency limit, whom no scale helps.`;
}
