/**
 * The audit output's types (`lagparity/audit-result@1` and
 * `lagparity/audit-sweep@1`) and constants, free of the schema library (see
 * formats/lobby-types.ts); audit-schema.ts holds the schemas, the field
 * descriptions and the compile-time check that the two agree.
 */
export const AUDIT_FORMAT = 'lagparity/audit-result@1';

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
  verdict: 'pass' | 'fail';
  reasons: AuditReason[];
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
  passed: number;
  failed: number;
  worst_first: { match_id: string; verdict: 'pass' | 'fail'; worst_gap: number | null; reasons: number }[];
  binding_counts: Record<AuditBinding, number>;
  failing_rules: Record<AuditRule, number>;
  most_binding: AuditBinding | null;
}

export interface AuditReport {
  format: 'lagparity/audit-result@1';
  caution: string;
  lobbies: LobbyAudit[];
  summary: AuditSummary;
}

export interface SweepReport {
  format: 'lagparity/audit-sweep@1';
  rule: string;
  rows: {
    value: number;
    valid: boolean;
    issues: string[];
    lobbies: number;
    passed: number;
    share_passing: number | null;
    worst_gap: number | null;
  }[];
}
