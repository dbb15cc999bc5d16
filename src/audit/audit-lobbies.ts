/**
 * The organiser's audit: judge a rule set against lobbies before a match.
 *
 * Each lobby is balanced with the duel and exploit views on, then judged
 * against the rules' accepted limits; the verdict is `pass`, or `fail` with
 * every rule that broke and the number that broke it. The summary counts the
 * passes, lists the lobbies worst first and says which constraint binds most.
 */
import { matchIdOf, parsedLobby } from '../solver/entry-checks.js';
import { readSafely } from '../validated.js';
import type { Issue } from '../issues.js';
import { show, unwrap } from '../issues.js';
import type { LobbyFile } from '../formats/lobby-types.js';
import type { CompiledModel } from '../model/compile.js';
import { type CompiledRules, compileRules } from '../solver/rules.js';
import { balanceLobby } from '../solver/balance-lobby.js';
import {
  AUDIT_BINDINGS as BINDINGS,
  AUDIT_FORMAT,
  AUDIT_RULES,
  type AuditBinding as Binding,
  type AuditPlayer,
  type AuditReason,
  type AuditReport,
  type AuditRule,
  type AuditSummary,
  type LobbyAudit,
} from './audit-types.js';

/** The caution every audit carries. */
export const AUDIT_CAUTION =
  'Compensation changes competitive outcomes: disclose it to the players; the league\'s own rules and officials decide.';

const three = (value: number) => value.toFixed(3);

function describeBinding(binding: Binding, rules: CompiledRules): string {
  switch (binding) {
    case 'cap':
      return `held by the cap ${rules.scale_cap.toFixed(2)}`;
    case 'soft_cap':
      return `held by the soft cap above ${rules.soft_cap?.above.toFixed(2) ?? '?'} (fraction ${rules.soft_cap?.fraction ?? '?'})`;
    case 'ratio':
      return `held by the scale ratio limit ${rules.max_scale_ratio ?? '?'}`;
    case 'budget':
      return `held by the assistance budget ${rules.assistance_budget ?? '?'}`;
    case 'quantisation':
      return `held by the quantisation step ${rules.quantisation_step ?? '?'}`;
    default:
      return `binding: ${binding}`;
  }
}

function reason(rule: AuditRule, value: number | null, limit: number | null, player: string | null, binding: Binding | null, message: string): AuditReason {
  return { rule, value, limit, player, binding, message };
}

/** Audit one lobby. `source` names the file it came from. Pure. */
export function auditLobby(input: LobbyFile, model: CompiledModel, rules: CompiledRules, source = ''): LobbyAudit {
  // A lobby that did not come from safeParseLobby is validated here, once, and the audit reads the validated copy.
  const parsed = parsedLobby(input);
  const lobby = parsed.ok ? parsed.value : input;
  const result = parsed.ok ? balanceLobby(lobby, model, rules, { views: { ordering: true, duel: true, exploit: true } }) : { status: 'rejected' as const, issues: parsed.issues, warnings: [] };
  if (result.status === 'rejected') {
    return {
      match_id: matchIdOf(input),
      source,
      verdict: 'outside_rules',
      reasons: result.issues.map((issue: Issue) => reason('solvable', null, null, null, null, `the lobby cannot be solved: ${issue.message}`)),
      excluded_players: 0,
      target: null,
      players: [],
      figures: null,
      warnings: [...result.warnings, ...result.issues],
    };
  }
  const reasons: AuditReason[] = [];
  const exploit = result.views?.exploit;
  const duel = result.views?.duel;
  // The exploit view gives no spike gain for a single latency value (its manipulation is the
  // uniform shift, reported as `worst_shift_gain` and bounded only by server-side measurement).
  const spikeGain = new Map<string, number | null>();
  for (const entry of exploit?.players ?? []) spikeGain.set(entry.id, entry.spike_gain);
  // The duel view holds eligible players only (an ineligible player fails the lobby on eligibility).
  const deviation = (value: number) => Math.abs(value - 0.5);
  let worstPair = duel?.pairs[0];
  for (const pair of duel?.pairs ?? []) if (worstPair === undefined || deviation(pair.a_wins_after) > deviation(worstPair.a_wins_after)) worstPair = pair;
  const worstDuel = duel?.worst_deviation_after ?? 0;

  for (const player of result.players) {
    if (!player.eligible) {
      reasons.push(reason('latency_limit_ms', player.latency_estimate_ms, rules.latency_limit_ms, player.id, 'ineligible', `player ${show(player.id)} at ${player.latency_estimate_ms.toFixed(1)} ms is above the eligibility limit ${rules.latency_limit_ms ?? '?'} ms`));
    }
  }
  // With a step, the same lobby solved without it: what the rounding costs, player by player and for the lobby.
  const step = rules.quantisation_step;
  const withoutStep = step === null ? null : balanceLobby(lobby, model, unwrap(compileRules({ ...rules, quantisation_step: null })));
  const gapWithoutStep = new Map<string, number>();
  if (withoutStep !== null && withoutStep.status !== 'rejected') for (const player of withoutStep.players) if (player.eligible) gapWithoutStep.set(player.id, player.gap_to_target);
  for (const player of result.players) {
    if (player.eligible && player.gap_to_target > rules.accepted_gap) {
      const unrounded = gapWithoutStep.get(player.id);
      const rounding = player.binding === 'quantisation' && unrounded !== undefined ? ` (without the step ${step ?? '?'}: ${three(Math.max(0, unrounded))})` : '';
      reasons.push(reason('accepted_gap', player.gap_to_target, rules.accepted_gap, player.id, player.binding, `residual gap ${three(player.gap_to_target)} above the accepted ${three(rules.accepted_gap)} for player ${show(player.id)}, ${describeBinding(player.binding, rules)}${rounding}`));
    }
  }
  const worstWith = largestGap(result.players);
  const worstWithout = gapWithoutStep.size === 0 ? null : Math.max(0, ...gapWithoutStep.values());
  if (step !== null && worstWithout !== null && worstWith - worstWithout > rules.accepted_gap) {
    reasons.push(reason('quantisation_step', worstWith - worstWithout, rules.accepted_gap, null, 'quantisation', `the quantisation step ${step} costs this lobby ${three(worstWith - worstWithout)} of hit probability: the worst residual gap is ${three(worstWith)} with it and ${three(worstWithout)} without it, a difference above the accepted gap ${three(rules.accepted_gap)}; a finer step closes it`));
  }
  const ordering = result.views?.ordering;
  if (step !== null && ordering !== undefined && ordering.step_gain > rules.accepted_step_gain) {
    reasons.push(reason('accepted_step_gain', ordering.step_gain, rules.accepted_step_gain, null, null, `one quantisation step (${step}) changes a player's expected hit probability by up to ${three(ordering.step_gain)}: a worse-connected player can end that far above a better-connected one (largest here ${three(ordering.largest_overtake)}), and a player measured just high enough to move up a step gains that much; above the accepted ${three(rules.accepted_step_gain)}`));
  }
  if (duel !== undefined && worstPair !== undefined && worstDuel > rules.accepted_duel_deviation) {
    reasons.push(reason('accepted_duel_deviation', worstDuel, rules.accepted_duel_deviation, worstPair.a, null, `an equal-skill duel of ${show(worstPair.a)} against ${show(worstPair.b)} (first to ${duel.hits_to_win} hits, ${duel.volleys} volleys) is won ${three(worstPair.a_wins_after)} of the time: ${three(worstDuel)} from even odds, above the accepted ${three(rules.accepted_duel_deviation)}`));
  }
  const summary = result.summary;
  if (summary.team_gap_after !== null && summary.team_gap_after > rules.accepted_team_gap) {
    const ordered = [...summary.teams].sort((left, right) => right.mean_after - left.mean_after);
    reasons.push(reason('accepted_team_gap', summary.team_gap_after, rules.accepted_team_gap, null, null, `team gap ${three(summary.team_gap_after)} between ${show(ordered[0]?.team)} and ${show(ordered[ordered.length - 1]?.team)} above the accepted ${three(rules.accepted_team_gap)}`));
  }
  for (const entry of exploit?.players ?? []) {
    if (entry.spike_gain !== null && entry.spike_gain > rules.accepted_exploit_gain) {
      reasons.push(reason('accepted_exploit_gain', entry.spike_gain, rules.accepted_exploit_gain, entry.id, null, `player ${show(entry.id)} could gain ${three(entry.spike_gain)} in hit probability by spiking ${entry.spiked_samples} sample(s) to ${exploit?.read_at_ms ?? '?'} ms under the ${exploit?.estimator ?? '?'} estimator, above the accepted ${three(rules.accepted_exploit_gain)}`));
    }
  }
  const players: AuditPlayer[] = result.players.map((player) => ({
    id: player.id,
    team: player.team,
    eligible: player.eligible,
    latency_estimate_ms: player.latency_estimate_ms,
    scale: player.scale,
    expected_before: player.expected_before,
    expected_after: player.expected_after,
    gap_to_target: player.gap_to_target,
    binding: player.binding,
    spike_gain: spikeGain.get(player.id) ?? null,
  }));
  return {
    match_id: lobby.match_id,
    source,
    verdict: reasons.length === 0 ? 'within_rules' : 'outside_rules',
    reasons,
    excluded_players: result.players.filter((player) => !player.eligible).length,
    target: result.target,
    players,
    figures: {
      largest_gap_before: summary.largest_gap_before,
      largest_gap_after: summary.largest_gap_after,
      jain_before: summary.jain_before,
      jain_after: summary.jain_after,
      team_gap_before: summary.team_gap_before,
      team_gap_after: summary.team_gap_after,
      worst_duel_deviation_before: duel?.worst_deviation_before ?? 0,
      worst_duel_deviation_after: worstDuel,
      worst_spike_gain: exploit?.worst_spike_gain ?? 0,
      worst_shift_gain: exploit?.worst_shift_gain ?? 0,
      step_gain: ordering?.step_gain ?? 0,
      largest_overtake: ordering?.largest_overtake ?? 0,
      worst_gap_without_step: worstWithout,
    },
    warnings: [...result.warnings],
  };
}

/** The largest residual gap among eligible players (0 if none is short of the target). */
function largestGap(players: readonly { eligible: boolean; gap_to_target: number }[]): number {
  let worst = 0;
  for (const player of players) if (player.eligible) worst = Math.max(worst, player.gap_to_target);
  return worst;
}

/** The largest residual gap among a lobby's eligible players; null if it was not solved. */
export function worstGap(audit: LobbyAudit): number | null {
  return audit.figures === null ? null : largestGap(audit.players);
}

function summarise(audits: readonly LobbyAudit[]): AuditSummary {
  const bindingCounts = Object.fromEntries(BINDINGS.map((binding) => [binding, 0])) as Record<Binding, number>;
  const failingRules = Object.fromEntries(AUDIT_RULES.map((rule) => [rule, 0])) as Record<AuditRule, number>;
  for (const audit of audits) {
    for (const player of audit.players) bindingCounts[player.binding] += 1;
    for (const rule of new Set(audit.reasons.map((entry) => entry.rule))) failingRules[rule] += 1;
  }
  let mostBinding: Binding | null = null;
  for (const binding of BINDINGS) {
    if (binding === 'none') continue;
    if (bindingCounts[binding] > 0 && (mostBinding === null || bindingCounts[binding] > bindingCounts[mostBinding])) mostBinding = binding;
  }
  const ranked = audits
    .map((audit) => ({ match_id: audit.match_id, verdict: audit.verdict, worst_gap: worstGap(audit), reasons: audit.reasons.length }))
    .sort((left, right) => {
      if (left.verdict !== right.verdict) return left.verdict === 'outside_rules' ? -1 : 1;
      const gap = (right.worst_gap ?? Infinity) - (left.worst_gap ?? Infinity);
      if (gap !== 0 && !Number.isNaN(gap)) return gap;
      return left.match_id < right.match_id ? -1 : left.match_id > right.match_id ? 1 : 0;
    });
  const within = audits.filter((audit) => audit.verdict === 'within_rules').length;
  const excluded = audits.reduce((sum, audit) => sum + audit.excluded_players, 0);
  return { lobbies: audits.length, within_rules: within, outside_rules: audits.length - within, excluded_players: excluded, worst_first: ranked, binding_counts: bindingCounts, failing_rules: failingRules, most_binding: mostBinding };
}

/** A value that throws `message` on every read, for an entry that could not be read. */
function throwing(message: string): LobbyFile {
  const fail = (): never => {
    throw new Error(message);
  };
  return new Proxy({} as LobbyFile, { get: fail, ownKeys: fail, getPrototypeOf: fail, has: fail, getOwnPropertyDescriptor: fail });
}

export interface AuditEntry {
  readonly lobby: LobbyFile;
  readonly source: string;
}

/** Audit lobbies under one model and rule set. Pure. */
export function auditLobbies(entries: readonly AuditEntry[], model: CompiledModel, rules: CompiledRules): AuditReport {
  if (!Array.isArray(entries as unknown)) throw new TypeError(`\`entries\` requires a list of { lobby, source }, got ${show(entries)}`);
  const lobbies = entries.map((entry) => {
    // An entry that throws when read is audited as a lobby that throws when read: rejected, unreadable_input.
    const read = readSafely(entry, () => ({ lobby: entry.lobby, source: entry.source }), (message) => ({ lobby: throwing(message), source: '' }));
    return auditLobby(read.lobby, model, rules, typeof read.source === 'string' ? read.source : '');
  });
  return { format: AUDIT_FORMAT, caution: AUDIT_CAUTION, lobbies, summary: summarise(lobbies) };
}
