/**
 * The size study's result (`lagparity/playtest-size@1`), free of the schema
 * library (the report's published declarations use it; see
 * formats/lobby-types.ts). The schema and each field's meaning are in
 * size-study-schema.ts and docs/formats.md.
 */
import type { LinkName } from '../model/links.js';
import type { TermName } from '../model/terms.js';

export const SIZE_STUDY_FORMAT = 'lagparity/playtest-size@1';

/** A share of the simulated studies with its Monte Carlo standard error, sqrt(p (1 - p) / studies). */
export interface ShareEstimate {
  estimate: number;
  mc_se: number;
}

/** A quantile of the interval widths over the simulated studies; null where it falls on studies without an interval (unbounded). */
export interface WidthEstimate {
  estimate: number | null;
  /** Distribution-free 95% Monte Carlo interval of the quantile from order statistics. */
  mc_low: number | null;
  mc_high: number | null;
}

export interface UnusableCounts {
  separation: number;
  iteration_limit: number;
  rank_deficient: number;
  scale_not_increasing: number;
  no_scale_at_latency: number;
}

export interface SizeRow {
  participants: number;
  repetitions: number;
  rounds_per_participant: number;
  session_minutes: number;
  studies: number;
  latency_power: ShareEstimate;
  scale_power: ShareEstimate;
  /** Share of studies whose fitted model cannot be used for compensation. */
  unusable: ShareEstimate;
  unusable_reasons: UnusableCounts;
  width_median: WidthEstimate;
  width_p90: WidthEstimate;
  /** Share of usable studies whose 90% interval covers the assumed scale; null without usable studies. */
  coverage: ShareEstimate | null;
  /** Median estimated scale among usable studies; null without any. */
  median_scale: number | null;
  meets_goal: boolean;
}

export interface SizeRecommendation {
  repetitions: number;
  /** The smallest number of participants that meets the goal; null when none in the range does. */
  participants: number | null;
  /** True when the goal lies within the Monte Carlo error at that size or at the size below it: another seed could move the answer by one step. */
  borderline: boolean;
  note: string;
}

export interface SizeStudy {
  format: 'lagparity/playtest-size@1';
  label: string | null;
  seed: number;
  studies: number;
  status: 'goal_met' | 'goal_not_met';
  assumptions: {
    source: 'pilot_model' | 'entered_effects';
    pilot_model: string | null;
    link: LinkName;
    fitted_terms: TermName[];
    player_sd: number;
    player_sd_source: 'plan' | 'pilot_trials' | 'default';
    reference_latency_ms: number;
    at_latency_ms: number;
    at_difficulty: number | string;
    true_scale: number;
    attempts_per_round: number;
    latency_ms: number[];
    scale: number[];
    difficulty: number[] | string[];
  };
  goal: {
    interval_width: number | null;
    width_statistic: 'median' | 'p90';
    latency_power: number | null;
    alpha: number;
  };
  rows: SizeRow[];
  recommendations: SizeRecommendation[];
  /** The fewest participants meeting the goal (fewer repetitions on a tie); null when none does. */
  recommended: { participants: number; repetitions: number } | null;
  /** When no size meets the goal: the size that came closest and by how much. */
  closest: { participants: number; repetitions: number; message: string } | null;
  warnings: { code: string; severity: 'error' | 'warning'; location: string; message: string }[];
}
