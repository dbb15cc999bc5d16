/**
 * The playtest plan's types (`lagparity/playtest-plan@1`), free of the schema
 * library (see lobby-types.ts); plan-file.ts holds the schema and
 * docs/formats.md the meaning of each field.
 */
import type { TermName } from '../model/terms.js';

export const PLAN_FORMAT = 'lagparity/playtest-plan@1';

/** The session length above which a plan is warned about, when the plan sets none (minutes). */
export const DEFAULT_SESSION_LIMIT_MINUTES = 45;

/** Documented limits of a plan, checked while it is read. */
export const PLAN_LIMITS = {
  /** Levels of any one factor. */
  levels: 64,
  participants: 10_000,
  repetitions: 100,
  /** Rounds over all participants, practice included (the schedule's rows). */
  rows: 1_000_000,
  /** Participant counts one size study may try. */
  sizes: 200,
  /** Simulated studies at one size. */
  studies: 100_000,
} as const;

/** What the size study assumes when a plan enters effects instead of naming a pilot model. */
export interface EnteredEffects {
  /** Hit probability at the lowest latency level and scale 1: one number, or one per difficulty level in order. */
  hit_rate: number | number[];
  /** Change of that hit probability (at the first difficulty level) from the lowest latency level to 100 ms above it. */
  change_per_100ms: number;
  /** Hit probability at the lowest latency level, the first difficulty level and this scale. */
  scale_hit_rate: { scale: number; hit_rate: number };
  /** Change of the log-scale coefficient per ms of latency (logit scale); default 0. */
  latency_x_log_scale: number;
}

export type WidthStatistic = 'median' | 'p90';

export interface SizeStudyGoal {
  /** Largest acceptable width of the compensation scale's 90% interval at `at_latency_ms`. */
  interval_width: number | null;
  /** Which width must meet it: the median over studies, or the 90th percentile (met in 9 studies of 10). */
  width_statistic: WidthStatistic;
  /** Smallest acceptable power to detect the latency effect. */
  latency_power: number | null;
}

export interface SizeStudySettings {
  effects: EnteredEffects | null;
  /** Standard deviation of the players' skill offsets on the link scale; null: from a pilot's trials or the default. */
  player_sd: number | null;
  players: { from: number; to: number; step: number };
  /** Repetitions per condition to compare; null: the plan's `repetitions` alone. */
  try_repetitions: number[] | null;
  studies: number;
  at_latency_ms: number;
  /** Difficulty at which the compensation scale is judged; null: the first level. */
  at_difficulty: number | string | null;
  goal: SizeStudyGoal;
  alpha: number;
  /** Terms each simulated study is fitted with; null: the pilot model's, else the default terms. */
  terms: TermName[] | null;
}

/** A plan with every default filled in. */
export interface PlanFile {
  format: 'lagparity/playtest-plan@1';
  label: string | null;
  latency_ms: number[];
  scale: number[];
  difficulty: number[] | string[];
  repetitions: number;
  participants: number;
  practice_rounds: number;
  round_seconds: number;
  pause_seconds: number;
  attempts_per_round: number | null;
  session_limit_minutes: number;
  seed: number;
  size_study: SizeStudySettings | null;
}
