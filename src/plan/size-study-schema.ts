/**
 * The shape of a size study's result (`lagparity/playtest-size@1`) as a zod
 * schema: `lagparity report --size-study` checks its input against it, and
 * docs/schemas/playtest-size.schema.json is generated from it. The check
 * that turns its failures into issues is `parse-size-study.ts` (kept apart so
 * that `formats/schema-files.ts` can list this schema without importing the
 * issue translation, which imports the schema list: no import circle).
 */
import { z } from 'zod';
import type * as types from './size-study-types.js';
import { SIZE_STUDY_FORMAT } from './size-study-types.js';
import { LINK_NAMES } from '../model/links.js';
import { TERM_NAMES } from '../model/terms.js';
import type { Assert, Same } from '../type-equality.js';

export { SIZE_STUDY_FORMAT };

const share = z.object({ estimate: z.number().min(0).max(1), mc_se: z.number().min(0) }).strict();
const width = z
  .object({
    estimate: z.number().min(0).nullable().describe('null: the quantile falls on studies without an interval (unbounded).'),
    mc_low: z.number().min(0).nullable(),
    mc_high: z.number().min(0).nullable(),
  })
  .strict();
const count = z.number().int().min(0);

const sizeRowSchema = z
  .object({
    participants: z.number().int().min(1),
    repetitions: z.number().int().min(1),
    rounds_per_participant: z.number().int().min(1),
    session_minutes: z.number().min(0),
    studies: z.number().int().min(1),
    latency_power: share,
    scale_power: share,
    unusable: share.describe('Share of studies whose fitted model cannot be used for compensation.'),
    unusable_reasons: z.object({ separation: count, iteration_limit: count, rank_deficient: count, scale_not_increasing: count, no_scale_at_latency: count }).strict(),
    width_median: width,
    width_p90: width,
    coverage: share.nullable().describe('Share of usable studies whose 90% interval covers the assumed scale.'),
    median_scale: z.number().nullable(),
    meets_goal: z.boolean(),
  })
  .strict();

const issueSchema = z.object({ code: z.string(), severity: z.enum(['error', 'warning']), location: z.string(), message: z.string() }).strict();

export const sizeStudySchema = z
  .object({
    format: z.literal(SIZE_STUDY_FORMAT, { error: `the format tag "${SIZE_STUDY_FORMAT}" (a string)` }),
    label: z.string().nullable(),
    seed: z.number().int(),
    studies: z.number().int().min(1),
    status: z.enum(['goal_met', 'goal_not_met']),
    assumptions: z
      .object({
        source: z.enum(['pilot_model', 'entered_effects']),
        pilot_model: z.string().nullable(),
        link: z.enum(LINK_NAMES as readonly ['logit', 'probit', 'cloglog']),
        fitted_terms: z.array(z.enum(TERM_NAMES)),
        player_sd: z.number().min(0),
        player_sd_source: z.enum(['plan', 'pilot_trials', 'default']),
        reference_latency_ms: z.number(),
        at_latency_ms: z.number(),
        at_difficulty: z.union([z.number(), z.string()]),
        true_scale: z.number().positive(),
        attempts_per_round: z.number().int().min(1),
        latency_ms: z.array(z.number()),
        scale: z.array(z.number()),
        difficulty: z.union([z.array(z.number()), z.array(z.string())]),
      })
      .strict(),
    goal: z
      .object({
        interval_width: z.number().positive().nullable(),
        width_statistic: z.enum(['median', 'p90']),
        latency_power: z.number().nullable(),
        alpha: z.number(),
      })
      .strict(),
    rows: z.array(sizeRowSchema).min(1),
    recommendations: z.array(z.object({ repetitions: z.number().int().min(1), participants: z.number().int().min(1).nullable(), borderline: z.boolean(), note: z.string() }).strict()),
    recommended: z.object({ participants: z.number().int().min(1), repetitions: z.number().int().min(1) }).strict().nullable(),
    closest: z.object({ participants: z.number().int().min(1), repetitions: z.number().int().min(1), message: z.string() }).strict().nullable(),
    warnings: z.array(issueSchema),
  })
  .strict();

/** The hand-written types of size-study-types.ts are the schema's (a compile error otherwise). */
type _SizeStudyTypesAgree = Assert<Same<z.infer<typeof sizeStudySchema>, types.SizeStudy>>;
