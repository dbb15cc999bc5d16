/**
 * The groups a `GroupAccumulator` (`group-accumulator.ts`) collected, handed
 * out as the columns of a {@link CollapsedTrials}: from its records (one
 * record per group: latency, scale, difficulty, successes, attempts[, prior
 * weight][, player]) or, with the direct index (`direct-index.ts`), from its
 * key columns as they are, the counts from the index's compact counts plus,
 * for the groups the hash table found, their records.
 */
import { filled } from '../formats/row-buffer.js';
import type { CollapsedTrials } from './collapsed-trials.js';

/** Where a record holds what: doubles per record, and the offsets of the prior weight and the player (-1: not held). */
export interface RecordLayout {
  readonly stride: number;
  readonly weightAt: number;
  readonly playerAt: number;
}

/** The key columns of the direct index's groups. */
export interface KeyColumns {
  readonly latency: Float64Array;
  readonly scale: Float64Array;
  readonly difficulty: Float64Array;
}

/** The first `groups` records as columns, in order; `difficultyValue` maps a stored difficulty (a level code) to the value to report. */
export function columnsFromRecords(records: Float64Array, groups: number, layout: RecordLayout, sourceRows: number, difficultyValue?: (stored: number) => number): CollapsedTrials {
  const { stride, weightAt, playerAt } = layout;
  const column = (offset: number): Float64Array => {
    const target = new Float64Array(groups);
    for (let g = 0; g < groups; g += 1) target[g] = records[g * stride + offset] as number;
    return target;
  };
  const difficulty = column(2);
  if (difficultyValue !== undefined) for (let g = 0; g < groups; g += 1) difficulty[g] = difficultyValue(difficulty[g] as number);
  let player: Int32Array | null = null;
  if (playerAt >= 0) {
    player = new Int32Array(groups);
    for (let g = 0; g < groups; g += 1) player[g] = records[g * stride + playerAt] as number;
  }
  const collapsed: CollapsedTrials = {
    rows: groups,
    latency: column(0),
    scale: column(1),
    difficulty,
    player,
    successes: column(3),
    attempts: column(4),
    weight: weightAt >= 0 ? column(weightAt) : new Float64Array(groups).fill(1),
    sourceRows,
  };
  return collapsed;
}

/** Rows kept as they came (`GroupAccumulator` with merging off, every row its own group), in the columns handed out. */
export interface KeptColumns {
  readonly latency: Float64Array;
  readonly scale: Float64Array;
  readonly difficulty: Float64Array;
  readonly successes: Float64Array;
  readonly attempts: Float64Array;
  readonly weight: Float64Array | null;
  readonly player: Int32Array | null;
}

/**
 * The groups as columns when rows were kept as they came: the columns they were written to, each
 * cut to `groups` (`filled`: a view, or a trimmed copy of a column far from full); the same columns as {@link columnsFromRecords} would give had each
 * row a record.
 */
export function columnsFromKept(kept: KeptColumns, groups: number, sourceRows: number, difficultyValue?: (stored: number) => number): CollapsedTrials {
  const difficulty = filled(kept.difficulty, groups);
  if (difficultyValue !== undefined) for (let g = 0; g < groups; g += 1) difficulty[g] = difficultyValue(difficulty[g] as number);
  const attempts = filled(kept.attempts, groups);
  return {
    rows: groups,
    latency: filled(kept.latency, groups),
    scale: filled(kept.scale, groups),
    difficulty,
    player: kept.player === null ? null : filled(kept.player, groups),
    successes: filled(kept.successes, groups),
    attempts,
    weight: kept.weight === null ? unitWeights(attempts) : filled(kept.weight, groups),
    sourceRows,
  };
}

/**
 * Prior weights of 1 for every group: the attempts column itself when it is all ones too (attempts
 * kept as they came, none merged; 8 bytes a row less for as long as the groups live), else a column
 * of ones. Nothing writes into a collapsed set's columns (the fits and folds copy what they change).
 */
function unitWeights(attempts: Float64Array): Float64Array {
  for (let g = 0; g < attempts.length; g += 1) if (attempts[g] !== 1) return new Float64Array(attempts.length).fill(1);
  return attempts;
}

/**
 * With the direct index: the key columns as they are (no copy), the counts
 * from `gridCounts` (two doubles a group) and, for the groups the hash table
 * found (`hashedGroups`), from their records (successes and attempts at
 * offsets 3 and 4 of a record of `stride` doubles). Rows on this path carry
 * neither prior weights nor players.
 */
export function columnsFromKeys(
  keys: KeyColumns,
  groups: number,
  gridCounts: Float64Array,
  hashedGroups: readonly number[],
  records: Float64Array,
  stride: number,
  sourceRows: number,
  difficultyValue?: (stored: number) => number,
): CollapsedTrials {
  const successes = new Float64Array(groups);
  const attempts = new Float64Array(groups);
  const counted = Math.min(groups, gridCounts.length >> 1);
  for (let g = 0; g < counted; g += 1) {
    successes[g] = gridCounts[2 * g] as number;
    attempts[g] = gridCounts[2 * g + 1] as number;
  }
  for (const g of hashedGroups) {
    successes[g] = (successes[g] as number) + (records[g * stride + 3] as number);
    attempts[g] = (attempts[g] as number) + (records[g * stride + 4] as number);
  }
  const difficulty = keys.difficulty.subarray(0, groups);
  if (difficultyValue !== undefined) for (let g = 0; g < groups; g += 1) difficulty[g] = difficultyValue(difficulty[g] as number);
  return {
    rows: groups,
    latency: keys.latency.subarray(0, groups),
    scale: keys.scale.subarray(0, groups),
    difficulty,
    player: null,
    successes,
    attempts,
    weight: new Float64Array(groups).fill(1),
    sourceRows,
  };
}
