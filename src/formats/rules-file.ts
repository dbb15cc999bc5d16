/**
 * The rules (`lagparity/rules@1`): the limits a league sets on compensation.
 * Every field has a documented default, so `{ "format": "lagparity/rules@1" }`
 * is a complete rules file.
 */
import { z } from 'zod';
import { finiteNumber } from './finite-number.js';
import type * as types from './rules-types.js';
import { RULES_FORMAT } from './rules-types.js';
import { MAX_LATENCY_MS } from './limits.js';
import type { Assert, Same } from '../type-equality.js';

export { RULES_FORMAT };

const positive = finiteNumber().positive({ error: 'a number above 0' });

/**
 * Documented limit: a quantisation step divides the scales up to the cap into
 * at most this many steps. The solver names grid points by their index (an
 * integer in a double), so a step of 1e-300 made indices beyond 2^53, where
 * `index + 1 === index`, and the solve never ended; an engine's scale steps
 * are a few hundred at most.
 */
export const MAX_SCALE_STEPS = 1_000_000;

export const rulesFileSchema = z
  .object({
    format: z.literal(RULES_FORMAT, { error: `the format tag "${RULES_FORMAT}" (a string)` }),
    scale_floor: positive.default(1).describe('Smallest scale a player may get. 1 (default): nobody is made worse off than unscaled.'),
    scale_cap: positive.default(1.5).describe('Largest scale a player may get.'),
    max_scale_ratio: positive.nullable().default(null).describe('Largest allowed ratio between the largest and smallest scale in a lobby; null: no limit.'),
    latency_limit_ms: positive.nullable().default(null).describe('Players whose latency estimate is above this are ineligible (reported, never scaled); null: no limit.'),
    accepted_gap: finiteNumber().gt(0, { error: 'a probability above 0 (0 would fail every lobby on rounding alone)' }).max(1, { error: 'a probability above 0 and at most 1' }).default(0.02).describe('Largest residual gap in hit probability to the target an organiser accepts.'),
    quantisation_step: positive.nullable().default(null).describe('Scales are rounded to multiples of this step (for engines with discrete scales); null: continuous.'),
    soft_cap: z
      .object({
        above: positive.describe('Scale above which only a fraction of the further scale is granted.'),
        fraction: z.number().gt(0, { error: 'a fraction strictly between 0 and 1' }).lt(1, { error: 'a fraction strictly between 0 and 1' }),
      })
      .strict()
      .nullable()
      .default(null)
      .describe('Soft cap: a desired scale d above `above` is granted as above + fraction (d - above), then at most `scale_cap`.'),
    assistance_budget: finiteNumber().min(0, { error: 'a number >= 0' }).nullable().default(null).describe('Largest sum over the lobby of (scale - 1) for scales above 1; null: no budget.'),
    target: z
      .discriminatedUnion('kind', [
        z.object({ kind: z.literal('best_connected') }).strict(),
        z.object({ kind: z.literal('reference_latency'), latency_ms: finiteNumber().min(0, { error: `a latency in milliseconds between 0 and ${MAX_LATENCY_MS}` }).max(MAX_LATENCY_MS, { error: `a latency in milliseconds between 0 and ${MAX_LATENCY_MS}` }) }).strict(),
        z.object({ kind: z.literal('fixed'), probability: z.number().gt(0, { error: 'a probability strictly between 0 and 1' }).lt(1, { error: 'a probability strictly between 0 and 1' }) }).strict(),
      ])
      .default({ kind: 'best_connected' })
      .describe('What everyone is brought up to: the best-connected eligible player at scale 1 (default), the prediction at a reference latency, or a fixed hit probability.'),
    latency_estimator: z
      .union([z.literal('all_samples'), z.literal('median'), z.object({ percentile: z.number().min(0, { error: 'a percentile between 0 and 100' }).max(100, { error: 'a percentile between 0 and 100' }) }).strict()])
      .default('all_samples')
      .describe('How samples become a latency: average the prediction over all samples, use their median, or a low percentile (a player can inflate spikes but not the floor of their latency).'),
    duel: z
      .object({
        hits_to_win: z.number().int().min(1).max(1000).default(3),
        volleys: z.enum(['simultaneous', 'alternating']).default('simultaneous'),
      })
      .strict()
      .default({ hits_to_win: 3, volleys: 'simultaneous' }),
    accepted_duel_deviation: z.number().gt(0, { error: 'a probability above 0 (0 would fail every lobby on rounding alone)' }).max(0.5, { error: 'a probability above 0 and at most 0.5 (the largest deviation from even odds)' }).default(0.05).describe('Largest accepted deviation from even odds (1/2) of a duel between opposing players of equal skill, after compensation.'),
    accepted_team_gap: z.number().gt(0, { error: 'a probability above 0 (0 would fail every lobby on rounding alone)' }).max(1, { error: 'a probability above 0 and at most 1' }).default(0.02).describe('Largest accepted gap between team means of expected hit probability, after compensation.'),
    accepted_exploit_gain: z.number().gt(0, { error: 'a probability above 0 (0 would fail every lobby on rounding alone)' }).max(1, { error: 'a probability above 0 and at most 1' }).default(0.01).describe('Largest accepted gain in expected hit probability a player could get from latency spikes (the exploit view).'),
    accepted_step_gain: z
      .number()
      .gt(0, { error: 'a probability above 0 (0 would fail every lobby with a step on rounding alone)' })
      .max(1, { error: 'a probability above 0 and at most 1' })
      .default(0.02)
      .describe("Largest accepted change one quantisation step makes to a player's expected hit probability at their scale: how far a worse-connected player may end above a better-connected one, and the most a player gains from a measured latency just high enough to move them one step up. Judged only with a `quantisation_step`."),
    spike_fraction: z.number().gt(0, { error: 'a fraction in (0, 1]' }).max(1, { error: 'a fraction in (0, 1]' }).default(0.25).describe('Share of a player\'s samples the exploit view makes read at the latency limit.'),
  })
  .strict()
  .superRefine((rules, context) => {
    if (rules.scale_cap < rules.scale_floor) {
      context.addIssue({ code: 'custom', path: ['scale_cap'], message: `a cap >= \`scale_floor\` (${rules.scale_floor}); a cap below the floor leaves no allowed scale`, params: { code: 'contradictory_rules' } });
    }
    if (rules.max_scale_ratio !== null && rules.max_scale_ratio < 1) {
      context.addIssue({ code: 'custom', path: ['max_scale_ratio'], message: 'a ratio >= 1 (largest over smallest scale cannot be below 1)', params: { code: 'contradictory_rules' } });
    }
    if (rules.soft_cap !== null && rules.soft_cap.above >= rules.scale_cap) {
      context.addIssue({ code: 'custom', path: ['soft_cap', 'above'], message: `a soft-cap threshold below \`scale_cap\` (${rules.scale_cap})`, params: { code: 'contradictory_rules' } });
    }
    if (rules.soft_cap !== null && rules.soft_cap.above < rules.scale_floor) {
      context.addIssue({ code: 'custom', path: ['soft_cap', 'above'], message: `a soft-cap threshold >= \`scale_floor\` (${rules.scale_floor})`, params: { code: 'contradictory_rules' } });
    }
    const step = rules.quantisation_step;
    if (step !== null && rules.scale_cap / step > MAX_SCALE_STEPS) {
      context.addIssue({ code: 'custom', path: ['quantisation_step'], message: `a step of at least \`scale_cap\` / ${MAX_SCALE_STEPS} (${rules.scale_cap / MAX_SCALE_STEPS}): at most ${MAX_SCALE_STEPS} steps up to the cap (the documented limit)`, params: { code: 'out_of_range' } });
    } else if (step !== null) {
      const multiple = rules.scale_floor / step;
      if (Math.abs(multiple - Math.round(multiple)) > 1e-9) {
        context.addIssue({ code: 'custom', path: ['quantisation_step'], message: `a step of which \`scale_floor\` (${rules.scale_floor}) is a whole multiple`, params: { code: 'contradictory_rules' } });
      }
    }
  });

export type { RulesFile, RulesInput } from './rules-types.js';

/** The hand-written types of rules-types.ts are the schema's (a compile error otherwise). */
type _RulesTypesAgree = [Assert<Same<z.infer<typeof rulesFileSchema>, types.RulesFile>>, Assert<Same<z.input<typeof rulesFileSchema>, types.RulesInput>>];
