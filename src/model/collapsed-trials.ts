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

/** The rows of a collapsed set where `keep[i]` is non-zero (for cross-validation folds). */
export function selectCollapsed(data: CollapsedTrials, keep: Uint8Array): CollapsedTrials {
  let count = 0;
  for (let i = 0; i < data.rows; i += 1) if (keep[i] !== 0) count += 1;
  const take = <T extends Float64Array | Int32Array>(source: T, target: T): T => {
    for (let i = 0, r = 0; i < data.rows; i += 1) if (keep[i] !== 0) target[r++] = source[i] as number;
    return target;
  };
  return {
    rows: count,
    latency: take(data.latency, new Float64Array(count)),
    scale: take(data.scale, new Float64Array(count)),
    difficulty: take(data.difficulty, new Float64Array(count)),
    player: data.player === null ? null : take(data.player, new Int32Array(count)),
    successes: take(data.successes, new Float64Array(count)),
    attempts: take(data.attempts, new Float64Array(count)),
    weight: take(data.weight, new Float64Array(count)),
    sourceRows: count,
  };
}
