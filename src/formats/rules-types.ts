/**
 * The rules format's types (`lagparity/rules@1`), free of the schema library
 * (see lobby-types.ts). The meaning and default of each field are in
 * rules-file.ts and docs/formats.md.
 */
export const RULES_FORMAT = 'lagparity/rules@1';

export type LatencyEstimator = 'all_samples' | 'median' | { percentile: number };

export type TargetSpec = { kind: 'best_connected' } | { kind: 'reference_latency'; latency_ms: number } | { kind: 'fixed'; probability: number };

/** Rules with every default filled in. */
export interface RulesFile {
  format: 'lagparity/rules@1';
  scale_floor: number;
  scale_cap: number;
  max_scale_ratio: number | null;
  latency_limit_ms: number | null;
  accepted_gap: number;
  quantisation_step: number | null;
  soft_cap: { above: number; fraction: number } | null;
  assistance_budget: number | null;
  target: TargetSpec;
  latency_estimator: LatencyEstimator;
  duel: { hits_to_win: number; volleys: 'simultaneous' | 'alternating' };
  accepted_duel_deviation: number;
  accepted_team_gap: number;
  accepted_exploit_gain: number;
  accepted_step_gain: number;
  spike_fraction: number;
}

/** The rules as written by a person: every field but `format` may be left out. */
export interface RulesInput {
  format: 'lagparity/rules@1';
  scale_floor?: number | undefined;
  scale_cap?: number | undefined;
  max_scale_ratio?: number | null | undefined;
  latency_limit_ms?: number | null | undefined;
  accepted_gap?: number | undefined;
  quantisation_step?: number | null | undefined;
  soft_cap?: { above: number; fraction: number } | null | undefined;
  assistance_budget?: number | null | undefined;
  target?: TargetSpec | undefined;
  latency_estimator?: LatencyEstimator | undefined;
  duel?: { hits_to_win?: number | undefined; volleys?: 'simultaneous' | 'alternating' | undefined } | undefined;
  accepted_duel_deviation?: number | undefined;
  accepted_team_gap?: number | undefined;
  accepted_exploit_gain?: number | undefined;
  accepted_step_gain?: number | undefined;
  spike_fraction?: number | undefined;
}
