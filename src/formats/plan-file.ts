/**
 * The playtest plan (`lagparity/playtest-plan@1`): the conditions a playtest
 * crosses (latency, compensation scale, difficulty), how often each
 * participant meets each, how long a round is, the seed of the schedule, and
 * optionally what a size study assumes and aims for. `lagparity plan
 * schedule` and `lagparity plan size` read it (or the same fields as
 * options); docs/formats.md documents every field.
 */
import { z } from 'zod';
import { MAX_LATENCY_MS } from './limits.js';
import type * as types from './plan-types.js';
import { DEFAULT_SESSION_LIMIT_MINUTES, PLAN_FORMAT, PLAN_LIMITS } from './plan-types.js';
import { TERM_NAMES } from '../model/terms.js';
import { parseDecimal } from './plain-decimal.js';
import type { Assert, Same } from '../type-equality.js';

export { PLAN_FORMAT };

const finite = z.number({ error: 'a finite number' });
const whole = (minimum: number, maximum: number, what: string) =>
  z
    .number({ error: `${what} (a whole number)` })
    .int({ error: `${what} (a whole number)` })
    .min(minimum, { error: `${what}, a whole number from ${minimum} to ${maximum}` })
    .max(maximum, { error: `${what}, a whole number from ${minimum} to ${maximum}` });
const probability = finite.gt(0, { error: 'a probability strictly between 0 and 1' }).lt(1, { error: 'a probability strictly between 0 and 1' });

/** A list of levels: 1 to 64 entries. */
const levels = <T extends z.ZodType>(level: T) =>
  z
    .array(level)
    .min(1, { error: 'at least one level' })
    .max(PLAN_LIMITS.levels, { error: `at most ${PLAN_LIMITS.levels} levels` });

const latencyLevel = finite.min(0, { error: `a latency in ms from 0 to ${MAX_LATENCY_MS}` }).max(MAX_LATENCY_MS, { error: `a latency in ms from 0 to ${MAX_LATENCY_MS}` });
const scaleLevel = finite.gt(0, { error: 'a scale above 0 (1 = unscaled)' }).max(1000, { error: 'a scale of at most 1000' });
const difficultyLevels = z.union([levels(finite), levels(z.string().min(1).max(128))], { error: 'a list of numeric difficulties or a list of level names' });

const enteredEffectsSchema = z
  .object({
    hit_rate: z.union([probability, z.array(probability).min(1).max(PLAN_LIMITS.levels)], { error: 'a probability, or one per difficulty level' }).describe('Hit probability at the lowest latency level and scale 1: one for every difficulty, or one per difficulty level in order.'),
    change_per_100ms: finite.gt(-1, { error: 'a change of probability between -1 and 1' }).lt(1, { error: 'a change of probability between -1 and 1' }).describe('Change of that hit probability (first difficulty level) from the lowest latency level to 100 ms above it, e.g. -0.12.'),
    scale_hit_rate: z
      .object({ scale: scaleLevel, hit_rate: probability })
      .strict()
      .describe('Hit probability at the lowest latency level, the first difficulty level and this scale: the scale\'s effect.'),
    latency_x_log_scale: finite.default(0).describe('Change of the log-scale coefficient per ms of latency, on the logit scale; default 0 (the scale works the same at every latency).'),
  })
  .strict();

const sizeStudySchema = z
  .object({
    effects: enteredEffectsSchema.nullable().default(null).describe('Entered effects; null when a pilot model (`--pilot-model`) gives the coefficients.'),
    player_sd: finite.min(0, { error: 'a standard deviation >= 0' }).max(10, { error: 'a standard deviation of at most 10 (logit scale)' }).nullable().default(null).describe("Standard deviation of the players' skill offsets on the link scale; null: estimated from a pilot's trials (`--pilot-trials`), else the documented default."),
    players: z
      .object({ from: whole(2, PLAN_LIMITS.participants, 'a participant count'), to: whole(2, PLAN_LIMITS.participants, 'a participant count'), step: whole(1, PLAN_LIMITS.participants, 'a step') })
      .strict()
      .default({ from: 8, to: 48, step: 8 })
      .describe('Participant counts to try: from, to (inclusive) and step.'),
    try_repetitions: z.array(whole(1, PLAN_LIMITS.repetitions, 'a repetition count')).min(1).max(10).nullable().default(null).describe("Repetitions per condition to compare; null: the plan's `repetitions` alone."),
    studies: whole(100, PLAN_LIMITS.studies, 'a number of simulated studies').default(1000),
    at_latency_ms: latencyLevel.describe('Latency at which the compensation scale and its 90% interval are judged, e.g. 125.'),
    at_difficulty: z.union([finite, z.string().min(1).max(128)]).nullable().default(null).describe('Difficulty at which the compensation scale is judged; null: the first level.'),
    goal: z
      .object({
        interval_width: finite.gt(0, { error: 'a width above 0' }).nullable().default(null).describe("Largest acceptable width of the compensation scale's 90% interval."),
        width_statistic: z.enum(['median', 'p90']).default('p90').describe('Which width must meet it: the median over simulated studies, or the 90th percentile (met in 9 studies of 10).'),
        latency_power: probability.nullable().default(null).describe('Smallest acceptable power to detect the latency effect.'),
      })
      .strict()
      .prefault({})
      .describe('What the study must reach; at least one of `interval_width` and `latency_power`.'),
    alpha: probability.max(0.5, { error: 'a significance level above 0 and at most 0.5' }).default(0.05).describe('Significance level of the two-sided Wald tests.'),
    terms: z.array(z.enum(TERM_NAMES)).min(1).nullable().default(null).describe("Terms each simulated study is fitted with; null: the pilot model's, else the default terms."),
  })
  .strict()
  .superRefine((study, context) => {
    if (study.players.to < study.players.from) {
      context.addIssue({ code: 'custom', path: ['players', 'to'], message: `a last count >= \`players.from\` (${study.players.from})`, params: { code: 'contradictory_plan' } });
    } else if (Math.floor((study.players.to - study.players.from) / study.players.step) + 1 > PLAN_LIMITS.sizes) {
      context.addIssue({ code: 'custom', path: ['players', 'step'], message: `a step that tries at most ${PLAN_LIMITS.sizes} participant counts`, params: { code: 'out_of_range' } });
    }
    if (study.goal.interval_width === null && study.goal.latency_power === null) {
      context.addIssue({ code: 'custom', path: ['goal'], message: 'at least one of `interval_width` and `latency_power`', params: { code: 'missing_field' } });
    }
  });

/** Each level above the one before: no repeats, no order the reader must guess. */
function checkIncreasing(values: readonly (number | string)[], field: string, context: z.RefinementCtx): void {
  if (values.every((value) => typeof value === 'number')) {
    values.forEach((value, index) => {
      const previous = values[index - 1];
      if (index > 0 && !((value as number) > (previous as number))) {
        context.addIssue({ code: 'custom', path: [field, index], message: `levels in increasing order without repeats (after ${previous})`, params: { code: 'levels_not_increasing' } });
      }
    });
    return;
  }
  const seen = new Map<number | string, number>();
  values.forEach((value, index) => {
    if (parseDecimal(String(value)) !== undefined) {
      // A trials file reads a column of such names as numbers: the schedule would come back as another difficulty.
      context.addIssue({ code: 'custom', path: [field, index], message: 'a level name that does not read as a number (write the number itself, unquoted, for numeric difficulty)', params: { code: 'ambiguous_level' } });
    }
    const first = seen.get(value);
    if (first !== undefined) context.addIssue({ code: 'custom', path: [field, index], message: `level names used once (also at ${field}[${first}])`, params: { code: 'duplicate_level' } });
    else seen.set(value, index);
  });
}

export const planFileSchema = z
  .object({
    format: z.literal(PLAN_FORMAT, { error: `the format tag "${PLAN_FORMAT}" (a string)` }),
    label: z.string().max(256).nullable().default(null),
    latency_ms: levels(latencyLevel).describe('Latency levels in ms, increasing: the latency each round is played at, as the trials file records it.'),
    scale: levels(scaleLevel).describe('Compensation scale levels, increasing, each above 0 (1 = unscaled).'),
    difficulty: difficultyLevels.describe('Difficulty levels: increasing numbers, or names used once.'),
    repetitions: whole(1, PLAN_LIMITS.repetitions, 'rounds per condition per participant').default(1),
    participants: whole(1, PLAN_LIMITS.participants, 'a number of participants'),
    practice_rounds: whole(0, 1000, 'a number of practice rounds').default(0),
    round_seconds: finite.gt(0, { error: 'a round length above 0 seconds' }).max(3600, { error: 'a round of at most 3600 seconds' }),
    pause_seconds: finite.min(0, { error: 'a pause >= 0 seconds' }).max(3600, { error: 'a pause of at most 3600 seconds' }).default(0).describe('Time between two rounds (loading, a rest), in seconds.'),
    attempts_per_round: whole(1, 10_000, 'attempts per round').nullable().default(null).describe('Attempts (shots, timed inputs) a round is expected to hold; the size study needs it.'),
    session_limit_minutes: finite.gt(0, { error: 'a limit above 0 minutes' }).max(1440, { error: 'a limit of at most 1440 minutes' }).default(DEFAULT_SESSION_LIMIT_MINUTES).describe('A session longer than this is warned about; one longer than this with a single round of each condition is refused.'),
    seed: z.number({ error: 'a safe integer' }).int({ error: 'a safe integer' }).min(Number.MIN_SAFE_INTEGER).max(Number.MAX_SAFE_INTEGER).default(1).describe('Seed of the schedule (and of the size study): the same seed gives the same answer.'),
    size_study: sizeStudySchema.nullable().default(null),
  })
  .strict()
  .superRefine((plan, context) => {
    checkIncreasing(plan.latency_ms, 'latency_ms', context);
    checkIncreasing(plan.scale, 'scale', context);
    checkIncreasing(plan.difficulty, 'difficulty', context);
    const effects = plan.size_study?.effects;
    if (effects !== null && effects !== undefined && Array.isArray(effects.hit_rate) && effects.hit_rate.length !== plan.difficulty.length) {
      context.addIssue({ code: 'custom', path: ['size_study', 'effects', 'hit_rate'], message: `one hit rate per difficulty level (${plan.difficulty.length}), or one number for all`, params: { code: 'contradictory_plan' } });
    }
  });

export type { PlanFile } from './plan-types.js';

/** The hand-written type of plan-types.ts is the schema's (a compile error otherwise). */
type _PlanTypesAgree = Assert<Same<z.infer<typeof planFileSchema>, types.PlanFile>>;
