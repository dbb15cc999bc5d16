/**
 * From columnar trials to the arrays a fit iterates over: rows with identical
 * covariates collapsed into binomial counts, a difficulty coding, and the
 * design matrix of a term list.
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
 * Collapsing uses an open-addressing hash table on the raw covariate bits
 * (Knuth, TAOCP vol. 3, §6.4, linear probing), so it costs O(rows) time and
 * O(rows) 4-byte slots, and never an object or a string per row.
 */
import type { Trials } from '../formats/trials-csv.js';
import type { DesignMatrix } from '../numeric/design-matrix.js';
import { type DesignColumn, type DifficultyCoding, type TermName, designColumns, scaleForm, scaleTermValue } from './terms.js';

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

/** Options of {@link collapseTrials}. */
export interface CollapseOptions {
  /** Keep players apart (needed for player clusters and player-wise folds). Default true when there is a player column. */
  readonly byPlayer?: boolean;
  /** Merge identical rows. Default true for per-attempt files, false for per-round files (see the module note). */
  readonly merge?: boolean;
}

const scratch = new Float64Array(1);
const scratchWords = new Uint32Array(scratch.buffer);

/** Mix one double's bits into a 32-bit hash (FNV-1a over two words, then a murmur finaliser). */
function mix(hash: number, value: number): number {
  scratch[0] = value === 0 ? 0 : value; // -0 and 0 are the same covariate
  let h = Math.imul(hash ^ (scratchWords[0] as number), 0x01000193);
  h = Math.imul(h ^ (scratchWords[1] as number), 0x01000193);
  return h;
}

function finalise(hash: number): number {
  let h = hash ^ (hash >>> 16);
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  return (h ^ (h >>> 16)) >>> 0;
}

/**
 * Collapse trials into binomial counts at distinct (latency, scale,
 * difficulty, prior weight[, player]) points, in order of first appearance.
 *
 * Cost: O(rows) expected time; memory a 4-byte group index per source row
 * plus a table of at most 2 rows slots, released on return.
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
  let capacity = 16;
  while (capacity < rows * 2) capacity *= 2;
  const mask = capacity - 1;
  const table = new Int32Array(capacity).fill(-1);
  // First source row of each group, and the group of each source row.
  const representative = new Int32Array(rows);
  const groupOf = new Int32Array(rows);
  let groups = 0;
  for (let i = 0; i < rows; i += 1) {
    const latency = trials.latency[i] as number;
    const scale = trials.scale[i] as number;
    const level = difficulty[i] as number;
    const weight = weights === null ? 1 : (weights[i] as number);
    const player = playerCodes === null ? 0 : (playerCodes[i] as number);
    let hash = 0x811c9dc5;
    hash = mix(hash, latency);
    hash = mix(hash, scale);
    hash = mix(hash, level);
    hash = mix(hash, weight);
    hash = Math.imul(hash ^ player, 0x01000193);
    let slot = finalise(hash) & mask;
    for (;;) {
      const group = table[slot] as number;
      if (group < 0) {
        table[slot] = groups;
        representative[groups] = i;
        groupOf[i] = groups;
        groups += 1;
        break;
      }
      const r = representative[group] as number;
      if (
        trials.latency[r] === latency &&
        trials.scale[r] === scale &&
        difficulty[r] === level &&
        (weights === null || weights[r] === weight) &&
        (playerCodes === null || playerCodes[r] === player)
      ) {
        groupOf[i] = group;
        break;
      }
      slot = (slot + 1) & mask;
    }
  }
  const successes = new Float64Array(groups);
  const attempts = new Float64Array(groups);
  for (let i = 0; i < rows; i += 1) {
    const group = groupOf[i] as number;
    successes[group] = (successes[group] as number) + (trials.successes[i] as number);
    attempts[group] = (attempts[group] as number) + (trials.attempts[i] as number);
  }
  const pick = <T extends Float64Array | Int32Array>(source: ArrayLike<number>, target: T): T => {
    for (let g = 0; g < groups; g += 1) target[g] = source[representative[g] as number] as number;
    return target;
  };
  return {
    rows: groups,
    latency: pick(trials.latency, new Float64Array(groups)),
    scale: pick(trials.scale, new Float64Array(groups)),
    difficulty: pick(difficulty, new Float64Array(groups)),
    player: playerCodes === null ? null : pick(playerCodes, new Int32Array(groups)),
    successes,
    attempts,
    weight: weights === null ? new Float64Array(groups).fill(1) : pick(weights, new Float64Array(groups)),
    sourceRows: rows,
  };
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

/**
 * The difficulty coding of trials: numeric, or the levels in order of first
 * appearance against `reference` (default: the first level).
 */
export function difficultyCodingOf(trials: Trials, reference?: string): DifficultyCoding {
  if (trials.difficulty.kind === 'numeric') return { kind: 'numeric' };
  const levels = trials.difficulty.levels;
  return { kind: 'levels', levels, reference: reference ?? (levels[0] as string) };
}

/** A design matrix with the term structure that produced it. */
export interface TermDesign {
  readonly matrix: DesignMatrix;
  readonly columns: readonly DesignColumn[];
}

/**
 * The design matrix of `terms` over collapsed rows: one column per
 * {@link designColumns} entry, each the product of its covariate factors
 * (latency in ms, the scale raw or as its logarithm, the numeric difficulty
 * or a level indicator).
 *
 * Cost: O(rows * columns) time and 8 bytes per entry.
 */
export function buildDesign(
  data: CollapsedTrials,
  terms: readonly TermName[],
  coding: DifficultyCoding,
): TermDesign {
  const columns = designColumns(terms, coding);
  const form = scaleForm(terms);
  const n = data.rows;
  const values = new Float64Array(n * columns.length);
  const scaleTerm = new Float64Array(n);
  for (let i = 0; i < n; i += 1) scaleTerm[i] = scaleTermValue(form, data.scale[i] as number);
  columns.forEach((column, j) => {
    const offset = j * n;
    const levelCode =
      column.difficulty !== null && column.difficulty !== 'value' && coding.kind === 'levels'
        ? coding.levels.indexOf(column.difficulty.level)
        : -1;
    for (let i = 0; i < n; i += 1) {
      let value = 1;
      if (column.latency) value *= data.latency[i] as number;
      if (column.scale) value *= scaleTerm[i] as number;
      if (column.difficulty === 'value') value *= data.difficulty[i] as number;
      else if (column.difficulty !== null) value = data.difficulty[i] === levelCode ? value : 0;
      values[offset + i] = value;
    }
  });
  return { matrix: { rows: n, columns: columns.length, names: columns.map((column) => column.name), values }, columns };
}
