/**
 * Why each player's scale is what it is: the label read from the answer
 * (docs/method.md, section 3, "Labels"), in this order of precedence:
 *
 * 1. `ineligible`: above the latency limit, never scaled (set by the caller);
 * 2. at or above the target (E_i >= T - 1e-9):
 *    - within 1e-9 of T: `none`;
 *    - above it and raised above their own ceiling u_i: `ratio` (lifted to
 *      the lowest scale the ratio forces);
 *    - above it at the floor: `floor` (unscaled already beats the target);
 * 3. below the target, held below their own ceiling u_i (the scale they
 *    would get alone):
 *    - at the largest scale the ratio allows in this answer: `ratio`;
 *    - otherwise: `budget` (nothing else holds a player below u_i);
 * 4. below the target at their own ceiling:
 *    - the scale they need is above what the caps allow them: `soft_cap` if
 *      the soft cap cut their grant below the hard cap, else `cap`;
 *    - otherwise the grid is why (the next multiple of the step would put
 *      them above the target): `quantisation`.
 * Without a step, `quantisation` never appears.
 */
import type { CompiledRules } from './rules.js';
import type { ScaleGrid } from './scale-grid.js';

/** Why a player's scale is what it is: the constraint that holds it, or `none`. */
export const BINDINGS = ['none', 'floor', 'cap', 'soft_cap', 'ratio', 'budget', 'quantisation', 'ineligible'] as const;
export type Binding = (typeof BINDINGS)[number];

const NONE = 0;
const FLOOR = 1;
const CAP = 2;
const SOFT_CAP = 3;
const RATIO = 4;
const BUDGET = 5;
const QUANTISATION = 6;
/** Index of `ineligible` in BINDINGS. */
export const INELIGIBLE = 7;

/** Probability tolerance under which a player counts as at the target. */
export const AT_TARGET_TOLERANCE = 1e-9;
/** Relative tolerance for comparing scales with a limit (without a step). */
const SCALE_TOLERANCE = 1e-12;

export interface LabelInput {
  readonly count: number;
  readonly target: number;
  readonly rules: CompiledRules;
  readonly grid: ScaleGrid | null;
  readonly scales: Float64Array;
  readonly after: Float64Array;
  readonly need: Float64Array;
  readonly upper: Float64Array;
  /** u_i: grid indices with a step, scales without. */
  readonly ceiling: Float64Array;
  /** The players' grid indices (with a step). */
  readonly index: Float64Array;
  /** The largest scale the ratio allowed in the answer: a grid index with a step, a scale without; Infinity without a ratio. */
  readonly ratioCeiling: number;
}

/** Write each player's label (an index into BINDINGS) into `out`. */
export function labelPlayers(input: LabelInput, out: Uint8Array): void {
  const { count, target, rules, grid, scales, after, need, upper, ceiling, index, ratioCeiling } = input;
  const floor = rules.scale_floor;
  for (let player = 0; player < count; player += 1) {
    const performance = after[player] as number;
    const scale = scales[player] as number;
    const own = ceiling[player] as number;
    const at = grid === null ? scale : (index[player] as number);
    const aboveOwn = grid === null ? scale > own * (1 + SCALE_TOLERANCE) : at > own;
    const belowOwn = grid === null ? scale < own * (1 - SCALE_TOLERANCE) : at < own;
    let label: number;
    // Differences of close numbers are exact (Sterbenz), so these compare the gap a reader computes.
    if (target - performance <= AT_TARGET_TOLERANCE) {
      if (performance - target <= AT_TARGET_TOLERANCE) label = NONE;
      else if (aboveOwn) label = RATIO;
      else if (scale <= floor * (1 + SCALE_TOLERANCE)) label = FLOOR;
      else label = NONE;
    } else if (belowOwn) {
      const atRatioCeiling = grid === null ? scale >= ratioCeiling * (1 - SCALE_TOLERANCE) : at >= ratioCeiling;
      label = rules.max_scale_ratio !== null && atRatioCeiling ? RATIO : BUDGET;
    } else if ((need[player] as number) > (upper[player] as number) * (1 + SCALE_TOLERANCE)) {
      label = (upper[player] as number) < rules.scale_cap * (1 - SCALE_TOLERANCE) ? SOFT_CAP : CAP;
    } else label = grid === null ? NONE : QUANTISATION;
    out[player] = label;
  }
}
