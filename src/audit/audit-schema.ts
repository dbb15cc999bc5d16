/**
 * The shape of an audit (`lagparity/audit-result@2`, and a sweep's, `lagparity/audit-sweep@2`), as zod schemas: the
 * TypeScript types derive from them and docs/schemas/audit-result.schema.json
 * is generated from them, so a script in any language can rely on it.
 */
import { z } from 'zod';

import type * as types from './audit-types.js';
import { AUDIT_BINDINGS as BINDINGS, AUDIT_FORMAT, AUDIT_RULES, SWEEP_FORMAT, VERDICTS } from './audit-types.js';
import type { Assert, Same } from '../type-equality.js';

export { AUDIT_FORMAT, AUDIT_RULES, BINDINGS, SWEEP_FORMAT, VERDICTS };

const probability = z.number().min(0).max(1);

export const auditReasonSchema = z
  .object({
    rule: z.enum(AUDIT_RULES).describe('The rule that broke (`solvable`: the model cannot solve the lobby; `quantisation_step`: the step costs the lobby more than the accepted gap).'),
    value: z.number().nullable().describe('The number that broke it.'),
    limit: z.number().nullable().describe('What the rules accept.'),
    player: z.string().nullable(),
    binding: z.enum(BINDINGS).nullable().describe('The constraint that holds the player back, when that is why.'),
    message: z.string(),
  })
  .strict();

export const auditPlayerSchema = z
  .object({
    id: z.string(),
    team: z.string().nullable(),
    eligible: z.boolean(),
    latency_estimate_ms: z.number(),
    scale: z.number().describe('1 for an ineligible player (reported, never scaled).'),
    expected_before: probability,
    expected_after: probability,
    gap_to_target: z.number(),
    binding: z.enum(BINDINGS),
    spike_gain: z.number().nullable().describe('Expected hit probability the player could gain from latency spikes; null when not computed.'),
  })
  .strict();

export const lobbyAuditSchema = z
  .object({
    match_id: z.string(),
    source: z.string().describe('The file the lobby came from (`stdin` for standard input).'),
    verdict: z.enum(VERDICTS).describe('within_rules: every rule holds; outside_rules: at least one is broken (see reasons).'),
    reasons: z.array(auditReasonSchema).describe('Every rule that broke; empty when within rules.'),
    excluded_players: z.number().int().describe('Players above the latency limit: reported, never scaled (each is also a reason).'),
    target: probability.nullable(),
    players: z.array(auditPlayerSchema),
    figures: z
      .object({
        largest_gap_before: z.number(),
        largest_gap_after: z.number(),
        jain_before: z.number(),
        jain_after: z.number(),
        team_gap_before: z.number().nullable(),
        team_gap_after: z.number().nullable(),
        worst_duel_deviation_before: z.number(),
        worst_duel_deviation_after: z.number(),
        worst_spike_gain: z.number(),
        worst_shift_gain: z.number(),
        step_gain: z.number().describe("The largest change one quantisation step makes to an eligible player's expected hit probability at their scale (0 without a step); judged against `accepted_step_gain`."),
        largest_overtake: z.number().describe('The largest amount by which an eligible player ends above a player with a higher expected hit probability before.'),
        worst_gap_without_step: z.number().nullable().describe('With a quantisation step: the worst residual gap the same lobby would have without it; null without a step.'),
      })
      .strict()
      .nullable()
      .describe('null when the lobby could not be solved.'),
    warnings: z.array(z.object({ code: z.string(), severity: z.enum(['error', 'warning']), location: z.string(), message: z.string() }).strict()),
  })
  .strict();

export const auditSummarySchema = z
  .object({
    lobbies: z.number().int(),
    within_rules: z.number().int(),
    outside_rules: z.number().int(),
    excluded_players: z.number().int().describe('Players above the latency limit, over all lobbies.'),
    worst_first: z.array(z.object({ match_id: z.string(), verdict: z.enum(VERDICTS), worst_gap: z.number().nullable(), reasons: z.number().int() }).strict()),
    binding_counts: z.record(z.enum(BINDINGS), z.number().int()).describe('How many players each constraint binds, over all lobbies.'),
    failing_rules: z.record(z.enum(AUDIT_RULES), z.number().int()).describe('How many lobbies each rule fails.'),
    most_binding: z.enum(BINDINGS).nullable().describe('The constraint (other than none) that binds most often; null if none binds.'),
  })
  .strict();

export const auditReportSchema = z
  .object({
    format: z.literal(AUDIT_FORMAT),
    caution: z.string(),
    lobbies: z.array(lobbyAuditSchema),
    summary: auditSummarySchema,
  })
  .strict();

export const sweepReportSchema = z
  .object({
    format: z.literal(SWEEP_FORMAT),
    rule: z.string(),
    rows: z.array(
      z
        .object({
          value: z.number(),
          valid: z.boolean().describe('false when the rules with this value contradict themselves (issues say how)'),
          issues: z.array(z.string()),
          lobbies: z.number().int(),
          within_rules: z.number().int(),
          share_within_rules: z.number().min(0).max(1).nullable(),
          worst_gap: z.number().nullable(),
          failing_rules: z.partialRecord(z.enum(AUDIT_RULES), z.number().int()).describe('How many lobbies each broken rule fails at this value (rules that hold are left out).'),
          most_binding: z.enum(BINDINGS).nullable().describe('The constraint (other than none) that holds players back most often at this value.'),
          excluded_players: z.number().int().describe('Players above the latency limit at this value: a looser gap bought by excluding players shows here.'),
        })
        .strict(),
    ),
    smallest_value_within_rules: z.number().nullable().describe('The smallest swept value at which every lobby is within rules; null if none.'),
  })
  .strict();

export type { AuditPlayer, AuditReason, AuditReport, AuditSummary, LobbyAudit, SweepReport } from './audit-types.js';

/** The hand-written types of audit-types.ts are the schemas' (a compile error otherwise). */
type _AuditTypesAgree = [
  Assert<Same<z.infer<typeof auditReasonSchema>, types.AuditReason>>,
  Assert<Same<z.infer<typeof auditPlayerSchema>, types.AuditPlayer>>,
  Assert<Same<z.infer<typeof lobbyAuditSchema>, types.LobbyAudit>>,
  Assert<Same<z.infer<typeof auditSummarySchema>, types.AuditSummary>>,
  Assert<Same<z.infer<typeof auditReportSchema>, types.AuditReport>>,
  Assert<Same<z.infer<typeof sweepReportSchema>, types.SweepReport>>,
];
export type { AuditRule } from './audit-types.js';
