/**
 * What one solve of the scales works on (solve-scales.ts), in a file of its
 * own so that the lift search (lift-search.ts), which solve-scales.ts drives,
 * can name it without importing its caller.
 */
import type { Link } from '../model/links.js';
import type { CompiledRules } from './rules.js';
import type { CurveSet } from './player-curve.js';
import type { ScaleForm } from './player-ceilings.js';

export interface ScaleProblem {
  readonly curves: CurveSet;
  /** E_i(1) per player (`expectedBefore`). */
  readonly before: Float64Array;
  readonly target: number;
  readonly link: Link;
  readonly form: ScaleForm;
  readonly rules: CompiledRules;
  /** A player's id by slot, for ties between identical curves; null: slot order decides. */
  readonly idOf: ((slot: number) => string) | null;
}
