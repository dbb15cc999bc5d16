/**
 * The rules a sweep can vary (re-exported by `sweep.ts`), in a module of
 * their own so that the audit command's help text names them without
 * loading the sweep, the audit and the rules schema.
 */

/** The rules a sweep can vary: every numeric field. */
export const SWEEPABLE_RULES = [
  'scale_floor',
  'scale_cap',
  'max_scale_ratio',
  'latency_limit_ms',
  'accepted_gap',
  'quantisation_step',
  'assistance_budget',
  'accepted_duel_deviation',
  'accepted_team_gap',
  'accepted_exploit_gain',
  'accepted_step_gain',
  'spike_fraction',
] as const;

export type SweepableRule = (typeof SWEEPABLE_RULES)[number];
