/**
 * The row grammar of a trials file as a zod schema, for the docs and the
 * JSON Schema; `trials-builder.ts` applies the same rules by hand (a test checks
 * the two agree).
 */
import { z } from 'zod';
import { finiteNumber } from './finite-number.js';
import { MAX_LATENCY_MS } from './limits.js';

const finite = finiteNumber();

/** One row of a trials file, after its fields are read as numbers (for docs and JSON Schema). */
export const trialRowSchema = z
  .object({
    latency_ms: finite.min(0).max(MAX_LATENCY_MS),
    scale: finite.positive(),
    difficulty: z.union([finite, z.string().min(1)]),
    player: z.string().min(1).optional(),
    hit: z.union([z.literal(0), z.literal(1)]).optional(),
    hits: z.number().int().nonnegative().optional(),
    attempts: z.number().int().positive().optional(),
    weight: finite.min(0).optional(),
  })
  .refine((row) => (row.hit !== undefined) !== (row.hits !== undefined && row.attempts !== undefined), {
    error: 'either `hit`, or both `hits` and `attempts`',
  })
  .refine((row) => row.hits === undefined || row.attempts === undefined || row.hits <= row.attempts, {
    error: '`hits` <= `attempts`',
  });

export type TrialRow = z.infer<typeof trialRowSchema>;
