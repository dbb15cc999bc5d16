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
 * Collapsing uses an open-addressing hash table on the raw covariate bits
 * (Knuth, TAOCP vol. 3, §6.4, linear probing), grown with the number of
 * distinct points, so it costs O(rows) time and O(groups) memory, and never an
 * object or a string per row.
 */
import type { Trials } from '../formats/trials-csv.js';

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
 * Cost: O(rows) expected time; memory a 4-byte group index per source row,
 * a table of 4/3 to 8/3 slots of 8 bytes per group and the collapsed columns.
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
  // Pass 1: open addressing on (group + 1, 32-bit hash) pairs, kept at most
  // three-quarters full and doubled as groups appear, so its size follows the groups;
  // a row takes the group whose stored hash equals its own, and a new group
  // appends its key to `records`. Pass 2 checks every row's key against its
  // group's exactly and adds its counts there: one record per group holds
  // the key and the counts side by side, so a row touches one record. The
  // rare row whose hash collided with another point's is grouped by its exact
  // key in a map instead.
  const hasWeight = weights !== null;
  const hasPlayer = playerCodes !== null;
  // Record: latency, scale, difficulty, successes, attempts[, weight][, player].
  const stride = 5 + (hasWeight ? 1 : 0) + (hasPlayer ? 1 : 0);
  const weightAt = 5;
  const playerAt = hasWeight ? 6 : 5;
  let capacity = 1 << 12;
  let table: Int32Array<ArrayBufferLike> = new Int32Array(capacity * 2);
  let groupOf = new Int32Array(rows);
  const latencies = trials.latency;
  const scales = trials.scale;
  // The hashes first, in a loop of their own (held in `groupOf` until pass 1 replaces them by groups).
  for (let i = 0; i < rows; i += 1) {
    let hash = 0x811c9dc5;
    hash = mix(hash, latencies[i] as number);
    hash = mix(hash, scales[i] as number);
    hash = mix(hash, difficulty[i] as number);
    if (weights !== null) hash = mix(hash, weights[i] as number);
    if (playerCodes !== null) hash = Math.imul(hash ^ (playerCodes[i] as number), 0x01000193);
    groupOf[i] = finalise(hash) | 0;
  }
  // Pass 1 keeps only each group's first row; the key records are filled once the number of groups is known.
  let representative = new Int32Array(1 << 12);
  let groups = 0;
  for (let i = 0; i < rows; i += 1) {
    const full = groupOf[i] as number;
    let slot = full & (capacity - 1);
    for (;;) {
      const stored = table[2 * slot] as number;
      if (stored === 0) {
        if (4 * (groups + 1) > 3 * capacity) {
          table = rehash(table, capacity);
          capacity *= 2;
          slot = full & (capacity - 1);
          while (table[2 * slot] !== 0) slot = (slot + 1) & (capacity - 1);
        }
        table[2 * slot] = groups + 1;
        table[2 * slot + 1] = full;
        if (groups === representative.length) {
          const grown = new Int32Array(groups * 2);
          grown.set(representative);
          representative = grown;
        }
        representative[groups] = i;
        groupOf[i] = groups;
        groups += 1;
        break;
      }
      if (table[2 * slot + 1] === full) {
        groupOf[i] = stored - 1;
        break;
      }
      slot = (slot + 1) & (capacity - 1);
    }
  }
  table = new Int32Array(0);
  let records: Float64Array<ArrayBufferLike> = new Float64Array(groups * stride);
  const fill = (group: number, i: number): void => {
    const base = group * stride;
    records[base] = latencies[i] as number;
    records[base + 1] = scales[i] as number;
    records[base + 2] = difficulty[i] as number;
    if (weights !== null) records[base + weightAt] = weights[i] as number;
    if (playerCodes !== null) records[base + playerAt] = playerCodes[i] as number;
  };
  for (let group = 0; group < groups; group += 1) fill(group, representative[group] as number);
  representative = new Int32Array(0);
  const append = (i: number): number => {
    if ((groups + 1) * stride > records.length) records = grow(records, (groups + 1) * stride);
    fill(groups, i);
    groups += 1;
    return groups - 1;
  };
  let collided: Map<string, number> | null = null;
  for (let i = 0; i < rows; i += 1) {
    let base = (groupOf[i] as number) * stride;
    if (
      records[base] !== latencies[i] ||
      records[base + 1] !== scales[i] ||
      records[base + 2] !== difficulty[i] ||
      (weights !== null && records[base + weightAt] !== weights[i]) ||
      (playerCodes !== null && records[base + playerAt] !== playerCodes[i])
    ) {
      collided ??= new Map();
      const key = `${latencies[i]} ${scales[i]} ${difficulty[i]} ${weights?.[i] ?? 1} ${playerCodes?.[i] ?? 0}`;
      let group = collided.get(key);
      if (group === undefined) {
        group = append(i);
        collided.set(key, group);
      }
      base = group * stride;
    }
    records[base + 3] = (records[base + 3] as number) + (trials.successes[i] as number);
    records[base + 4] = (records[base + 4] as number) + (trials.attempts[i] as number);
  }
  groupOf = new Int32Array(0);
  const column = (offset: number): Float64Array => {
    const target = new Float64Array(groups);
    for (let g = 0; g < groups; g += 1) target[g] = records[g * stride + offset] as number;
    return target;
  };
  const player = new Int32Array(hasPlayer ? groups : 0);
  for (let g = 0; g < player.length; g += 1) player[g] = records[g * stride + playerAt] as number;
  return {
    rows: groups,
    latency: column(0),
    scale: column(1),
    difficulty: column(2),
    player: hasPlayer ? player : null,
    successes: column(3),
    attempts: column(4),
    weight: hasWeight ? column(weightAt) : new Float64Array(groups).fill(1),
    sourceRows: rows,
  };
}

function grow(values: Float64Array<ArrayBufferLike>, atLeast: number): Float64Array<ArrayBufferLike> {
  const next = new Float64Array(Math.max(atLeast, values.length * 2));
  next.set(values);
  return next;
}

/** The (group + 1, hash) table doubled, every entry re-inserted by its stored hash. */
function rehash(table: Int32Array<ArrayBufferLike>, capacity: number): Int32Array<ArrayBufferLike> {
  const next = new Int32Array(capacity * 4);
  const mask = capacity * 2 - 1;
  for (let old = 0; old < capacity; old += 1) {
    const entry = table[2 * old] as number;
    if (entry === 0) continue;
    const entryHash = table[2 * old + 1] as number;
    let position = entryHash & mask;
    while (next[2 * position] !== 0) position = (position + 1) & mask;
    next[2 * position] = entry;
    next[2 * position + 1] = entryHash;
  }
  return next;
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
