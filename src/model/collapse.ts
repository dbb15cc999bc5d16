/**
 * Trials collapsed into binomial counts at distinct covariate points, the
 * rows a fit iterates over, and trials grouped so (`GroupedTrials`) with what
 * a fit needs to know of their source.
 *
 * Collapsing is exact for the Bernoulli likelihood: k attempts at one
 * covariate point (one prior weight, and one player when clustering by
 * player) contribute sum_i w [y_i log mu + (1 - y_i) log(1 - mu)] =
 * w [s log mu + (k - s) log(1 - mu)], the binomial kernel of s successes of k
 * (McCullagh & Nelder 1989, §4.2), so coefficients, standard errors, score
 * sums per cluster, and the Bernoulli log-likelihood are unchanged while the
 * IRLS works on far fewer rows. Per-round rows are kept as recorded: their
 * grouped deviance is defined against the rounds, which merging would change.
 *
 * The grouping itself is {@link GroupAccumulator} (`group-accumulator.ts`:
 * an open-addressing hash table, and a direct index for large files without
 * weights or players); the collapsed rows' types are in
 * `collapsed-trials.ts`.
 */
import type { Trials } from '../formats/trials-types.js';
import { type CollapsedTrials, type GroupedTrials, gatherCollapsed } from './collapsed-trials.js';
import { GroupAccumulator } from './group-accumulator.js';

/** Options of {@link collapseTrials}. */
export interface CollapseOptions {
  /** Keep players apart (needed for player clusters and player-wise folds). Default true when there is a player column. */
  readonly byPlayer?: boolean;
  /** Merge identical rows. Default true for per-attempt files, false for per-round files (see the module note). */
  readonly merge?: boolean;
}

/**
 * Collapse trials into binomial counts at distinct (latency, scale,
 * difficulty, prior weight[, player]) points, in order of first appearance
 * (see {@link GroupAccumulator} for the one exception), in batches of
 * `COLLAPSE_BATCH_ROWS` rows as a file reader feeding an accumulator
 * does, so that both give the same groups in the same order.
 *
 * @example
 * const collapsed = collapseTrials(trials); // 1,000,000 attempts at 20 conditions -> 20 rows
 */
export function collapseTrials(trials: Trials, options: CollapseOptions = {}): CollapsedTrials {
  const rows = trials.rows;
  const byPlayer = (options.byPlayer ?? true) && trials.player !== null;
  const merge = options.merge ?? trials.shape === 'per_attempt';
  const difficulty = trials.difficulty.kind === 'numeric' ? trials.difficulty.values : trials.difficulty.codes;
  const playerCodes = byPlayer ? (trials.player?.codes ?? null) : null;
  const weights = trials.weight;
  if (!merge) {
    return {
      rows,
      latency: trials.latency,
      scale: trials.scale,
      difficulty: Float64Array.from(difficulty),
      player: playerCodes,
      successes: trials.successes,
      attempts: trials.attempts,
      weight: weights ?? new Float64Array(rows).fill(1),
      sourceRows: rows,
    };
  }
  const accumulator = new GroupAccumulator({ weight: weights !== null, player: playerCodes !== null, merge: true, expectedRows: rows });
  const { latency, scale, successes, attempts } = trials;
  accumulator.addRows({ latency, scale, difficulty, weight: weights, player: playerCodes, successes, attempts }, rows);
  return accumulator.finish();
}

/**
 * Trials grouped as a fit needs them.
 *
 * @example
 * const grouped = groupTrials(trials); // the per-row columns can now be dropped
 * const report = fitModel(grouped);
 */
export function groupTrials(trials: Trials): GroupedTrials {
  return {
    file: trials.file,
    shape: trials.shape,
    difficulty: trials.difficulty.kind === 'numeric' ? { kind: 'numeric' } : { kind: 'levels', levels: trials.difficulty.levels },
    players: trials.player === null ? null : trials.player.ids,
    groups: collapseTrials(trials, { byPlayer: trials.player !== null }),
  };
}

/**
 * Merge groups that share a key: after level codes are replaced by their
 * numbers, two level names with one value (`1` and `1.0`) are one point.
 */
export function mergeGroups(data: CollapsedTrials): CollapsedTrials {
  const accumulator = new GroupAccumulator({ weight: true, player: data.player !== null, merge: true, expectedRows: data.rows });
  accumulator.addGroups(data);
  return accumulator.finish();
}

/** Which covariates a term list reads (`terms.ts`, `termFactors`). */
export interface UsedCovariates {
  readonly latency: boolean;
  readonly scale: boolean;
  readonly difficulty: boolean;
}

/** Every covariate kept: {@link collapseOver} then merges over the players alone. */
export const EVERY_COVARIATE: UsedCovariates = { latency: true, scale: true, difficulty: true };

/** Rows merged over the players, and each row's merged row, per rows object of this thread (see {@link mergedOverPlayers}). */
interface MergedEntry {
  readonly merged: CollapsedTrials;
  /** Each row's merged row (what `mergedWithout` needs), or null when not asked for. */
  readonly rowGroups: Int32Array | null;
  /** Whether every row's successes and attempts are whole numbers (then sums and differences of them are exact). */
  readonly wholeCounts: boolean;
}
const mergedRows = new WeakMap<CollapsedTrials, MergedEntry>();

function mergedEntry(data: CollapsedTrials, withRowGroups: boolean): MergedEntry {
  let entry = mergedRows.get(data);
  if (entry === undefined || (withRowGroups && entry.rowGroups === null)) {
    const rowGroups = withRowGroups ? new Int32Array(data.rows) : null;
    let wholeCounts = true;
    for (let i = 0; i < data.rows && wholeCounts; i += 1) wholeCounts = Number.isInteger(data.successes[i]) && Number.isInteger(data.attempts[i]);
    entry = { merged: collapseOver(data, EVERY_COVARIATE, rowGroups), rowGroups, wholeCounts };
    mergedRows.set(data, entry);
  }
  return entry;
}

/**
 * `collapseOver(data, EVERY_COVARIATE)`, computed once for `data` on this thread: the full fit,
 * the least-squares baseline, the reduced models and the folds of one report all start from it.
 * With `rowGroups` (the default) it also keeps each row's merged row (4 bytes a row), which the
 * folds need ({@link mergedWithout}); a fit without folds leaves them out.
 */
export function mergedOverPlayers(data: CollapsedTrials, { rowGroups = true }: { readonly rowGroups?: boolean } = {}): CollapsedTrials {
  return mergedEntry(data, rowGroups).merged;
}

/**
 * The rows of `data` but `heldOut` (row indices) merged over the players: the groups of
 * {@link mergedOverPlayers} less the held-out rows' counts, those left without attempts dropped,
 * in that order (a fold's training rows). The same groups and counts as
 * `collapseOver(gatherCollapsed(data, training), EVERY_COVARIATE)`, perhaps in another order; one
 * pass over the held-out rows instead of a grouping of the training rows. Null when some count is
 * not a whole number (the subtraction would not be exact: the caller groups the training rows).
 */
export function mergedWithout(data: CollapsedTrials, heldOut: Int32Array): CollapsedTrials | null {
  const { merged, rowGroups, wholeCounts } = mergedEntry(data, true);
  if (!wholeCounts || rowGroups === null) return null;
  const successes = Float64Array.from(merged.successes);
  const attempts = Float64Array.from(merged.attempts);
  for (let r = 0; r < heldOut.length; r += 1) {
    const i = heldOut[r] as number;
    const group = rowGroups[i] as number;
    successes[group] = (successes[group] as number) - (data.successes[i] as number);
    attempts[group] = (attempts[group] as number) - (data.attempts[i] as number);
  }
  let kept = 0;
  for (let g = 0; g < merged.rows; g += 1) if ((attempts[g] as number) > 0) kept += 1;
  const left = new Int32Array(kept);
  for (let g = 0, r = 0; g < merged.rows; g += 1) if ((attempts[g] as number) > 0) left[r++] = g;
  const gathered = gatherCollapsed({ ...merged, successes, attempts }, left);
  return { ...gathered, sourceRows: data.rows - heldOut.length };
}

/**
 * The rows merged over players and over the covariates `used` leaves out:
 * the rows of a model that reads only `used` and does not cluster (a
 * likelihood-ratio refit). Exact for the Bernoulli kernel, as any collapsing
 * (see the module note): the estimates and the Bernoulli log-likelihood are
 * those of `data`, on as many rows as distinct points of the covariates kept
 * (on the 1M-row bench file, 15 once latency is dropped; 63,472 once the
 * scale is). Per-round rows are merged too: the grouped deviance of the
 * result is not that of the rounds, so a caller compares Bernoulli
 * log-likelihoods. A covariate left out reads as a constant (latency 0,
 * scale 1, difficulty 0), which the model does not read. `rowGroups`, when
 * given, receives each row's merged row.
 */
export function collapseOver(data: CollapsedTrials, used: UsedCovariates, rowGroups: Int32Array | null = null): CollapsedTrials {
  const constant = (value: number) => new Float64Array(data.rows).fill(value);
  let unitWeights = true;
  for (let i = 0; i < data.rows && unitWeights; i += 1) unitWeights = data.weight[i] === 1;
  const accumulator = new GroupAccumulator({ weight: !unitWeights, player: false, merge: true, expectedRows: data.rows });
  accumulator.addRows(
    {
      latency: used.latency ? data.latency : constant(0),
      scale: used.scale ? data.scale : constant(1),
      difficulty: used.difficulty ? data.difficulty : constant(0),
      weight: unitWeights ? null : data.weight,
      player: null,
      successes: data.successes,
      attempts: data.attempts,
    },
    data.rows,
    rowGroups,
  );
  return { ...accumulator.finish(), sourceRows: data.sourceRows };
}
