/**
 * The shape of a field check (`lagparity/field-check@1`) as zod schemas:
 * docs/schemas/field-check.schema.json is generated from them, and the
 * hand-written types of field-types.ts are checked against them at compile
 * time. Loaded only for the JSON Schemas (a matchmaker's import never loads it).
 */
import { z } from 'zod';
import type * as types from './field-types.js';
import { FIELD_CHECK_FORMAT, FIELD_VERDICTS } from './field-types.js';
import type { Assert, Same } from '../type-equality.js';

const range = z.object({ min: z.number(), max: z.number() }).strict();

const estimate = z
  .object({
    estimate: z.number(),
    std_error: z.number(),
    lower: z.number(),
    upper: z.number(),
    level: z.number().describe('The interval\'s level, e.g. 0.95, or 1 - 2 alpha for the two one-sided tests.'),
  })
  .strict();

const calibrationEstimate = estimate.extend({ model_std_error: z.number().describe('The model-based error; `std_error` is cluster-robust (CR1 by player).') }).strict();

const band = z
  .object({
    index: z.number().int(),
    label: z.string(),
    lower_ms: z.number(),
    upper_ms: z.number().nullable().describe('null for the open band at the top.'),
    eligible: z.boolean().describe("false above the rules' latency limit (never scaled, not compared)."),
    rounds: z.number().int().nullable().describe('Rows of a per-round file; null for a per-attempt file.'),
    attempts: z.number(),
    players: z.number().int(),
    control_players: z.number().int().describe('Players in the band who never had a scale above 1.'),
    mean_scale: z.number().nullable(),
    predicted_before: z.number().nullable().describe("The model's hit probability at scale 1 for the band's rows."),
    predicted: z.number().nullable().describe("The model's hit probability at the applied scales."),
    predicted_lower: z.number().nullable(),
    predicted_upper: z.number().nullable(),
    observed: z.number().nullable().describe('Hits / attempts, as played.'),
    observed_lower: z.number().nullable(),
    observed_upper: z.number().nullable(),
    gap: z
      .object({ estimate: z.number(), lower: z.number(), upper: z.number() })
      .strict()
      .nullable()
      .describe("The band minus the reference at the file's difficulty mix, with the two one-sided tests' interval; null for the reference band itself."),
  })
  .strict();

const compensation = z
  .object({
    verdict: z.enum(FIELD_VERDICTS),
    reference_band: z.number().int().nullable(),
    worst_band: z.number().int().nullable(),
    gap: estimate.nullable(),
    predicted_gap: z.number().nullable().describe('The same gap as the model predicted it at the scales applied.'),
    tost: z
      .object({ lower_margin: z.number(), upper_margin: z.number(), z_lower: z.number(), p_lower: z.number(), z_upper: z.number(), p_upper: z.number(), p: z.number() })
      .strict()
      .nullable(),
    residual_latency_per_100ms: estimate.nullable().describe('Log-odds per 100 ms beyond the model at the applied scales.'),
    data_needed: z
      .object({
        factor: z.number(),
        players: z.number(),
        rows: z.number(),
        rows_are: z.enum(['rounds', 'attempts']),
        power: z.number(),
        to_show: z.enum(['equivalence', 'beyond_margin']),
      })
      .strict()
      .nullable(),
    message: z.string(),
  })
  .strict();

const likelihoodRatio = z.discriminatedUnion('status', [
  z
    .object({
      status: z.literal('tested'),
      statistic: z.number(),
      df: z.number(),
      p_value: z.number(),
      adjusted: z
        .object({ statistic: z.number(), df: z.number(), p_value: z.number(), mean_design_effect: z.number(), a_squared: z.number() })
        .strict()
        .nullable()
        .describe('Rao and Scott (1984) second-order adjustment for clustering by player.'),
      held_at_model: z.array(z.string()).describe('Columns the live data cannot estimate, held at the model\'s values.'),
    })
    .strict(),
  z.object({ status: z.literal('not_tested'), reason: z.string() }).strict(),
]);

const calibration = z
  .object({
    in_the_large: calibrationEstimate.nullable(),
    slope: calibrationEstimate.nullable(),
    likelihood_ratio: likelihoodRatio,
    coefficients: z.array(z.object({ name: z.string(), model: z.number(), refit: z.number().nullable(), robust_std_error: z.number().nullable() }).strict()),
    recommendation: z.enum(['keep', 'refit']),
    reason: z.string(),
    commands: z.object({ new_data: z.string(), combined: z.string().nullable(), note: z.string() }).strict().nullable(),
  })
  .strict();

const attribute = z.enum(['hit_area', 'timing_window']).nullable();

export const fieldCheckReportSchema = z
  .object({
    format: z.literal(FIELD_CHECK_FORMAT),
    verdict: z.enum(FIELD_VERDICTS),
    recommendation: z.enum(['keep', 'refit']),
    passed: z.boolean().describe('Compensation holds and the model is kept (the CLI exits 0).'),
    summary: z.array(z.string()),
    data: z
      .object({
        file: z.string(),
        sha256: z.string().nullable(),
        shape: z.enum(['per_attempt', 'per_round']),
        rows: z.number().int(),
        attempts: z.number(),
        players: z.number().int(),
        control: z.object({ players: z.number().int(), attempts: z.number() }).strict(),
        compensated: z.object({ players: z.number().int(), attempts: z.number() }).strict(),
        latency_ms: range,
        scale: range,
      })
      .strict(),
    model: z
      .object({
        file: z.string().nullable(),
        label: z.string().nullable(),
        attribute,
        link: z.enum(['logit', 'probit', 'cloglog']),
        terms: z.array(z.string()),
        training_latency_ms: range,
        training_scale: range,
        provenance_file: z.string(),
      })
      .strict(),
    settings: z
      .object({
        margin: z.number(),
        alpha: z.number(),
        band_cuts_ms: z.array(z.number()),
        target: z.discriminatedUnion('kind', [
          z.object({ kind: z.literal('best_connected') }).strict(),
          z.object({ kind: z.literal('reference_latency'), latency_ms: z.number() }).strict(),
          z.object({ kind: z.literal('fixed'), probability: z.number() }).strict(),
        ]),
        latency_limit_ms: z.number().nullable(),
        attribute,
      })
      .strict(),
    bands: z.array(band),
    compensation,
    calibration,
    warnings: z.array(z.object({ code: z.string(), severity: z.enum(['error', 'warning']), location: z.string(), message: z.string() }).strict()),
    caution: z.string(),
  })
  .strict();

/** The hand-written type of field-types.ts is the schema's (a compile error otherwise). */
type _FieldTypesAgree = Assert<Same<z.infer<typeof fieldCheckReportSchema>, types.FieldCheckReport>>;
