/**
 * Trials collapsed into binomial counts at distinct covariate points
 * (`CollapsedTrials`, the rows a fit iterates over; made by `collapse.ts`
 * through `group-accumulator.ts`), the same with what a fit needs to know of
 * their source (`GroupedTrials`), and the subset of collapsed rows a
 * cross-validation fold fits.
 */
import type { Trials } from '../formats/trials-types.js';

/** Trials reduced to distinct covariate points (and players, when kept apart). */
export interface CollapsedTrials {
  /** Number of collapsed rows. */
  readonly rows: number;
  readonly latency: Float64Array;
  readonly scale: Float64Array;
  /** Numeric difficulty, or the level code (index into the trials' level list). */
  readonly difficulty: Float64Array;
  /** Player code per collapsed row, or null when players were not kept apart (or there is no player column). */
  readonly player: Int32Array | null;
  readonly successes: Float64Array;
  readonly attempts: Float64Array;
  readonly weight: Float64Array;
  /** Rows of the source before collapsing. */
  readonly sourceRows: number;
}

/**
 * Collapsed trials with what a fit needs to know of their source: the file,
 * its shape, the difficulty levels and the player ids. `fitModel` takes these
 * (or plain trials, which it groups first); grouping once lets a caller drop
 * the per-row columns before fitting, and fit several candidates from one
 * grouping.
 */
export interface GroupedTrials {
  readonly file: string;
  readonly shape: Trials['shape'];
  /** Numeric difficulty, or the level names the collapsed codes index. */
  readonly difficulty: { readonly kind: 'numeric' } | { readonly kind: 'levels'; readonly levels: readonly string[] };
  /** Player ids the collapsed codes index, or null without a player column. */
  readonly players: readonly string[] | null;
  /** Players are kept apart whenever there are players (clusters and player-wise folds need it). */
  readonly groups: CollapsedTrials;
}

/** The rows `indices` of a collapsed set, in that order (a fold's training or held-out rows). */
export function gatherCollapsed(data: CollapsedTrials, indices: Int32Array): CollapsedTrials {
  const count = indices.length;
  return {
    rows: count,
    latency: gatherFloats(data.latency, indices),
    scale: gatherFloats(data.scale, indices),
    difficulty: gatherFloats(data.difficulty, indices),
    player: data.player === null ? null : gatherIntegers(data.player, indices),
    successes: gatherFloats(data.successes, indices),
    attempts: gatherFloats(data.attempts, indices),
    weight: gatherFloats(data.weight, indices),
    sourceRows: count,
  };
}

// One function per array type: a gather shared by both would run on polymorphic element access,
// which measured several times slower on a million rows.
function gatherFloats(source: Float64Array, indices: Int32Array): Float64Array {
  const target = new Float64Array(indices.length);
  for (let r = 0; r < indices.length; r += 1) target[r] = source[indices[r] as number] as number;
  return target;
}

function gatherIntegers(source: Int32Array, indices: Int32Array): Int32Array {
  const target = new Int32Array(indices.length);
  for (let r = 0; r < indices.length; r += 1) target[r] = source[indices[r] as number] as number;
  return target;
}
