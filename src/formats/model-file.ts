/**
 * The model file (`lagparity/model@1`): a fitted hit-probability model as
 * JSON. Everything the solver needs (link, terms, coefficients, covariance,
 * training ranges) and everything a reviewer needs (fit statistics,
 * provenance of the data) in one document.
 */
import { z } from 'zod';
import { finiteNumber } from './finite-number.js';
import { TERM_NAMES } from '../model/terms.js';

import { MODEL_FORMAT } from './model-format.js';
import type * as types from './model-types.js';
import type { Assert, Same } from '../type-equality.js';

export { MODEL_FORMAT };

const finite = finiteNumber();

const range = z
  .object({ min: finite, max: finite })
  .strict()
  .refine((value) => value.min <= value.max, { error: 'min <= max' });

export const difficultyCodingSchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('numeric') }).strict(),
  z
    .object({
      kind: z.literal('levels'),
      levels: z.array(z.string().min(1)).min(1),
      reference: z.string().min(1),
    })
    .strict()
    .refine((value) => value.levels.includes(value.reference), { error: 'a reference level that is one of `levels`', path: ['reference'] })
    .refine((value) => new Set(value.levels).size === value.levels.length, { error: 'distinct level names', path: ['levels'] }),
]);

export const modelFileSchema = z
  .object({
    format: z.literal(MODEL_FORMAT, { error: `the format tag "${MODEL_FORMAT}" (a string)` }),
    label: z.string().max(500).optional().describe('Free text: what this model is, e.g. "fit of the demo playtest".'),
    attribute: z
      .enum(['hit_area', 'timing_window'])
      .optional()
      .describe('What the scale multiplied in the data the model was fitted on (a lobby\'s `attribute`); the field check refuses live data that scaled the other.'),
    family: z.literal('binomial').describe('The response family. Hit probability models are binomial.'),
    link: z.enum(['logit', 'probit', 'cloglog']),
    terms: z.array(z.enum(TERM_NAMES)).min(1).describe('Terms in coefficient order; see docs/formats.md.'),
    difficulty: difficultyCodingSchema,
    coefficients: z
      .object({
        names: z.array(z.string()).min(1),
        estimates: z.array(finite).min(1),
        covariance: z.array(z.array(finite)).describe('Row-major square matrix, model-based or cluster-robust (see `covariance_kind`).'),
        covariance_kind: z.enum(['model', 'cluster_robust_cr1', 'assumed']).default('model'),
      })
      .strict(),
    training: z
      .object({
        latency_ms: range,
        scale: range,
        difficulty: z.union([range, z.array(z.string())]),
        rows: z.number().int().nonnegative(),
        attempts: z.number().nonnegative(),
        players: z.number().int().nonnegative().optional(),
      })
      .strict()
      .describe('The covariate ranges the model was fitted on; outside them predictions are extrapolation.'),
    fit: z.record(z.string(), z.unknown()).optional().describe('Fit statistics and diagnostics, as written by `lagparity fit`.'),
    provenance: z
      .object({
        file: z.string(),
        rows: z.number().int().nonnegative(),
        sha256: z.string().regex(/^[0-9a-f]{64}$/, { error: 'a hex SHA-256 digest' }),
        created_by: z.string().optional(),
      })
      .strict(),
  })
  .strict();

export type { ModelFile } from './model-types.js';

/** The hand-written type of model-types.ts is the schema's (a compile error otherwise). */
type _ModelTypesAgree = Assert<Same<z.infer<typeof modelFileSchema>, types.ModelFile>>;
