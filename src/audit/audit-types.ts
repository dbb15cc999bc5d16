/**
 * The audit output's types (`lagparity/audit-result@2` and
 * `lagparity/audit-sweep@2`; version 2 says "within rules" and "outside
 * rules" where version 1 said pass and fail, and counts excluded players) and constants, free of the schema library (see
 * formats/lobby-types.ts); audit-schema.ts holds the schemas, the field
 * descriptions and the compile-time check that the two agree.
 */
export const AUDIT_FORMAT = 'lagparity/audit-result@2';
export const SWEEP_FORMAT = 'lagparity/audit-sweep@2';

/** A lobby's verdict: every rule holds, or at least one is broken (the reasons say which). */
export const VERDICTS = ['within_rules', 'outside_rules'] as const;
export type Verdict = (typeof VERDICTS)[number];

export const AUDIT_BINDINGS = ['none', 'floor', 'cap', 'soft_cap', 'ratio', 'budget', 'quantisation', 'ineligible'] as const;
export type AuditBinding = (typeof AUDIT_BINDINGS)[number];
export const AUDIT_RULES = ['solvable', 'latency_limit_ms', 'accepted_gap', 'quantisation_step', 'accepted_duel_deviation', 'accepted_team_gap', 'accepted_exploit_gain', 'accepted_step_gain'] as const;
export type AuditRule = (typeof AUDIT_RULES)[number];

export interface AuditReason {
  rule: AuditRule;
  value: number | null;
  limit: number | null;
  player: string | null;
  binding: AuditBinding | null;
  message: string;
}

export interface AuditPlayer {
  id: string;
  team: string | null;
  eligible: boolean;
  latency_estimate_ms: number;
  scale: number;
  expected_before: number;
  expected_after: number;
  gap_to_target: number;
  binding: AuditBinding;
  spike_gain: number | null;
}

export interface LobbyAudit {
  match_id: string;
  source: string;
  verdict: Verdict;
  reasons: AuditReason[];
  /** Players above the latency limit: reported, never scaled, and a reason on their own. */
  excluded_players: number;
  target: number | null;
  players: AuditPlayer[];
  figures: {
    largest_gap_before: number;
    largest_gap_after: number;
    jain_before: number;
    jain_after: number;
    team_gap_before: number | null;
    team_gap_after: number | null;
    worst_duel_deviation_before: number;
    worst_duel_deviation_after: number;
    worst_spike_gain: number;
    worst_shift_gain: number;
    step_gain: number;
    largest_overtake: number;
    worst_gap_without_step: number | null;
  } | null;
  warnings: { code: string; severity: 'error' | 'warning'; location: string; message: string }[];
}

export interface AuditSummary {
  lobbies: number;
  within_rules: number;
  outside_rules: number;
  excluded_players: number;
  worst_first: { match_id: string; verdict: Verdict; worst_gap: number | null; reasons: number }[];
  binding_counts: Record<AuditBinding, number>;
  failing_rules: Record<AuditRule, number>;
  most_binding: AuditBinding | null;
}

export interface AuditReport {
  format: 'lagparity/audit-result@2';
  caution: string;
  lobbies: LobbyAudit[];
  summary: AuditSummary;
}

export interface SweepReport {
  format: 'lagparity/audit-sweep@2';
  rule: string;
  rows: {
    value: number;
    valid: boolean;
    issues: string[];
    lobbies: number;
    within_rules: number;
    share_within_rules: number | null;
    worst_gap: number | null;
    failing_rules: Partial<Record<AuditRule, number>>;
    most_binding: AuditBinding | null;
    excluded_players: number;
  }[];
  smallest_value_within_rules: number | null;
}
