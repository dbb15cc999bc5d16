/**
 * The report's lobbies: the rules in full, then each lobby with the audit's
 * verdict (within or outside rules, every reason) when rules were given, its
 * figures (gaps, Jain's index, team gap, duel and exploit figures, each with
 * the limit it is judged against), a chart on a y-axis shared by every lobby,
 * and the per-player table. Without rules the lobbies are balanced under the
 * defaults and get no verdict.
 */
import type { TopLevelSpec } from 'vega-lite';
import { auditLobby, worstGap } from '../audit/audit-lobbies.js';
import type { LobbyAudit } from '../audit/audit-types.js';
import { rulesFileSchema } from '../formats/rules-file.js';
import type { LobbyFile } from '../formats/lobby-types.js';
import type { Issue } from '../issues.js';
import type { CompiledModel } from '../model/compile.js';
import type { CompiledRules } from '../solver/rules.js';
import { lobbySpec } from './charts.js';
import { escapeHtml, formatGeneral, formatNumber, htmlTable } from './html.js';

export interface ReportLobby {
  /** Shown as the lobby's source, e.g. its file name. */
  readonly name: string;
  readonly lobby: LobbyFile;
}

/** Bindings that hold a player below the target: marked in the lobby charts. */
const HOLDING_BINDINGS = new Set(['cap', 'soft_cap', 'ratio', 'budget']);

/** A rule's value as people read it. */
function ruleValue(value: unknown): string {
  if (value === null) return 'none';
  if (typeof value === 'number') return formatGeneral(value);
  if (typeof value === 'string') return value;
  if (typeof value === 'object') {
    return Object.entries(value as Record<string, unknown>)
      .map(([key, inner]) => `${key} ${ruleValue(inner)}`)
      .join(', ');
  }
  return String(value);
}

/** Every rule with its value and its meaning (the rules schema's own descriptions). */
export function rulesTable(rules: CompiledRules, name: string): string {
  const shape = rulesFileSchema.shape as Record<string, { description?: string }>;
  const rows = Object.entries(rules)
    .filter(([key]) => key !== 'format')
    .map(([key, value]) => [key, ruleValue(value), shape[key]?.description ?? '']);
  return htmlTable(['rule', 'value', 'meaning'], rows, { caption: `The rules every lobby below is judged by (${name}), in full, defaults filled in.` });
}

interface LobbyOutcome {
  readonly name: string;
  readonly audit: LobbyAudit;
}

export interface LobbiesSection {
  readonly html: string;
  readonly lobbies: number;
  /** Null without rules (no verdicts). */
  readonly withinRules: number | null;
  readonly worst: { readonly gap: number; readonly matchId: string } | null;
  readonly warnings: readonly Issue[];
}

/** Without rules, a lobby's balance in the audit's shape, with no verdict. */
function balanceOnly(lobby: LobbyFile, model: CompiledModel, rules: CompiledRules, source: string): LobbyAudit {
  const audit = auditLobby(lobby, model, rules, source);
  return { ...audit, reasons: audit.reasons.filter((reason) => reason.rule === 'solvable') };
}

/** The players' table, `players` in the order of the chart (latency estimate, lowest first). */
function playerTable(players: readonly LobbyAudit['players'][number][], judged: boolean): string {
  const rows = players.map((player) => [
    player.id,
    player.team ?? '–',
    formatNumber(player.latency_estimate_ms, 1),
    player.eligible ? formatNumber(player.scale, 3) : 'not scaled',
    formatNumber(player.expected_before),
    player.eligible ? formatNumber(player.expected_after) : '–',
    player.eligible ? formatNumber(player.gap_to_target) : '–',
    player.binding,
    ...(judged ? [player.spike_gain === null ? '–' : formatNumber(player.spike_gain)] : []),
  ]);
  return htmlTable(['player', 'team', 'latency ms', 'scale', 'P(hit) before', 'P(hit) after', 'gap to target', 'held by', ...(judged ? ['gain from faked spikes'] : [])], rows, { numeric: judged ? [2, 3, 4, 5, 6, 8] : [2, 3, 4, 5, 6] });
}

function figuresText(audit: LobbyAudit, rules: CompiledRules, judged: boolean): string {
  const figures = audit.figures;
  if (figures === null) return '';
  const limit = (value: number) => (judged ? ` (accepted up to ${formatNumber(value)})` : '');
  return [
    `Target P(hit) ${formatNumber(audit.target)}`,
    `largest gap ${formatNumber(figures.largest_gap_before)} → ${formatNumber(figures.largest_gap_after)}`,
    `Jain's index ${formatNumber(figures.jain_before, 4)} → ${formatNumber(figures.jain_after, 4)}`,
    figures.team_gap_before === null ? null : `team gap ${formatNumber(figures.team_gap_before)} → ${formatNumber(figures.team_gap_after)}${limit(rules.accepted_team_gap)}`,
    `worst equal-skill duel off even odds ${formatNumber(figures.worst_duel_deviation_before)} → ${formatNumber(figures.worst_duel_deviation_after)}${limit(rules.accepted_duel_deviation)}`,
    `gain from faked lag spikes ${formatNumber(figures.worst_spike_gain)}${limit(rules.accepted_exploit_gain)}`,
    `from delaying every packet ${formatNumber(figures.worst_shift_gain)} (not judged: only measuring on the server bounds it)`,
  ]
    .filter((part) => part !== null)
    .join('; ');
}

export async function lobbiesSection(
  entries: readonly ReportLobby[],
  model: CompiledModel,
  rules: CompiledRules,
  rulesName: string | null,
  addChart: (id: string, title: string, spec: TopLevelSpec) => Promise<string>,
  figure: (svg: string, id: string, caption: string) => string,
): Promise<LobbiesSection> {
  const judged = rulesName !== null;
  const outcomes: LobbyOutcome[] = entries.map(({ name, lobby }) => ({ name, audit: judged ? auditLobby(lobby, model, rules, name) : balanceOnly(lobby, model, rules, name) }));
  const warnings: Issue[] = outcomes.flatMap(({ name, audit }) => audit.warnings.map((issue) => ({ ...issue, location: `${name}:${issue.location}` })));
  // One y-axis for every lobby, so that the same gap looks the same size everywhere.
  let low = Infinity;
  let high = -Infinity;
  for (const { audit } of outcomes) {
    for (const player of audit.players) {
      low = Math.min(low, player.expected_before, player.expected_after);
      high = Math.max(high, player.expected_before, player.expected_after);
    }
    if (audit.target !== null) high = Math.max(high, audit.target);
  }
  const pad = Number.isFinite(high - low) ? Math.max(0.02, 0.05 * (high - low)) : 0;
  const domain: [number, number] = Number.isFinite(low) ? [Math.max(0, low - pad), Math.min(1, high + pad)] : [0, 1];
  const sections: string[] = [];
  let worst: { gap: number; matchId: string } | null = null;
  for (const [index, { name, audit }] of outcomes.entries()) {
    const gap = worstGap(audit);
    if (gap !== null && (worst === null || gap > worst.gap)) worst = { gap, matchId: audit.match_id };
    const verdict = judged ? (audit.verdict === 'within_rules' ? '<span class="within">within rules</span>' : `<span class="outside">outside rules</span> (${audit.reasons.length} reason${audit.reasons.length === 1 ? '' : 's'})`) : '';
    const excluded = audit.excluded_players === 0 ? '' : `; ${audit.excluded_players} player${audit.excluded_players === 1 ? '' : 's'} excluded (above the latency limit, never scaled)`;
    const heading = `<h3 id="lobby-${index + 1}">${escapeHtml(audit.match_id)} <span class="note">(${escapeHtml(name)})</span>${judged ? ` — ${verdict}` : ''}${excluded}</h3>`;
    if (audit.figures === null) {
      sections.push(`${heading}<p class="warn">The model cannot balance this lobby:</p><ul>${audit.reasons.map((reason) => `<li>${escapeHtml(reason.message)}</li>`).join('')}</ul>`);
      continue;
    }
    const players = [...audit.players].sort((left, right) => left.latency_estimate_ms - right.latency_estimate_ms || (left.id < right.id ? -1 : 1));
    const points = players.map((player) => ({
      player: player.id,
      before: player.expected_before,
      after: player.expected_after,
      scale_label: player.eligible ? `×${player.scale.toFixed(2)}` : 'not scaled',
      held_by: HOLDING_BINDINGS.has(player.binding) ? player.binding : null,
      eligible: player.eligible,
    }));
    const title = `${audit.match_id}: expected hit probability before and after compensation${judged ? ` (${audit.verdict === 'within_rules' ? 'within rules' : 'outside rules'})` : ''}`;
    const svg = await addChart(`lobby-${index + 1}`, title, lobbySpec(title, points, audit.target ?? 0, domain));
    const held = players.filter((player) => HOLDING_BINDINGS.has(player.binding));
    sections.push(
      [
        heading,
        `<p>${figuresText(audit, rules, judged)}.</p>`,
        judged && audit.reasons.length > 0 ? `<div class="outside-box"><strong>Outside rules:</strong><ul>${audit.reasons.map((reason) => `<li>${escapeHtml(reason.message)}</li>`).join('')}</ul></div>` : '',
        held.length > 0 ? `<p class="warn">Held back by a rule, still short of the target: ${held.map((player) => `${escapeHtml(player.id)} (${escapeHtml(player.binding.replace('_', ' '))}, gap ${formatNumber(player.gap_to_target)})`).join(', ')}. Do not present this lobby as equal.</p>` : '',
        figure(
          svg,
          `figure-lobby-${index + 1}`,
          'Orange circles: expected hit probability at scale 1; blue diamonds: with the scale printed above the player; vermillion open triangles and dashed lines: players a rule holds below the target (the legend names the rule) and the gap it leaves; black dashed line: the target. The y-axis is the same in every lobby of this report.',
        ),
        playerTable(players, judged),
        audit.warnings.length > 0 ? `<div class="note">Warnings:<ul>${audit.warnings.map((issue) => `<li><code>${escapeHtml(issue.location)}</code> ${escapeHtml(issue.code)}: ${escapeHtml(issue.message)}</li>`).join('')}</ul></div>` : '',
      ].join('\n'),
    );
  }
  const within = judged ? outcomes.filter(({ audit }) => audit.verdict === 'within_rules').length : null;
  const intro = judged
    ? `${rulesTable(rules, rulesName)}<p><strong>${within} of ${outcomes.length} lobbies within rules</strong>, ${outcomes.length - (within ?? 0)} outside. A lobby is within rules when every rule above holds: every eligible player within the accepted gap of the target, no player above the latency limit, the duel, team and exploit figures within their limits.</p>`
    : `<p class="note">No rules were given (<code>--rules</code>): the lobbies are balanced under the default rules (floor 1, cap 1.5, no other limit) and get no verdict.</p>${rulesTable(rules, 'the defaults')}`;
  return { html: `${intro}\n${sections.join('\n')}`, lobbies: outcomes.length, withinRules: within, worst, warnings };
}
