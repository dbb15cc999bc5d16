/**
 * The direct index of `GroupAccumulator` (`group-accumulator.ts`): its shape,
 * the codes it gives scales, and its one-pass loops over a batch.
 *
 * When rows carry neither weights nor players and many rows are expected, a row whose latency is a whole number k of hundredths
 * of a millisecond (k / 100 is exactly the latency read, 0 <= k < 131,072),
 * whose scale is one of the first eight distinct scales and whose difficulty
 * code is below eight takes its group from a cell of a flat table indexed
 * by (scale code, difficulty code, k), and adds its counts to the group with
 * no hash and no key check: the cell is the key. With the direct index, the
 * keys of all groups go to key columns that `finish` hands out as they are
 * (no copy), and the counts of its groups to a compact array of two doubles
 * a group (`gridCounts`); the records then hold only the groups the hash
 * table found. A key either always qualifies or never does (the scale codes
 * only grow, and stop at eight), so rows that do not qualify go through the
 * accumulator's hash table and no point is ever in both. About twice as fast as
 * the hash table on a million rows of 300,000 points, mostly fewer cache
 * misses.
 */
import { loadBits, scratchWords } from './covariate-hash.js';

/**
 * The direct index of a `GroupAccumulator`: a cell per latency on a
 * grid of 0.01 ms from 0 up to (not including) 1,310.72 ms, per scale code
 * (the first {@link GRID_SCALES} distinct scales) and per difficulty code
 * below {@link GRID_LEVELS}. 4 bytes a cell, 32 MiB of address space in all,
 * of which only the pages of cells in use are ever touched (zero pages until
 * written): a file at 5-230 ms touches about 1.4 MiB.
 */
export const GRID_STEPS = 1 << 17;
export const GRID_SCALES = 8;
export const GRID_LEVELS = 8;

/** Slots of the table that gives a scale its code in the direct index (a power of two, well above {@link GRID_SCALES}). */
export const SCALE_SLOTS = 64;

/**
 * A scale's slot: a multiplicative hash of both words of its bits, -0 as 0 (the same covariate). A lookup by
 * slot, rather than a search of the codes, has no branch that depends on which scale a row has.
 */
export function scaleSlot(value: number): number {
  loadBits(value);
  return Math.imul((scratchWords[1] as number) ^ Math.imul(scratchWords[0] as number, 0x85ebca6b), 0x9e3779b1) >>> 26;
}

/** Each row's group from its cell of the direct index (-1 for an empty cell or a row outside it). */
export function readCells(grid: Int32Array, cells: Int32Array, groupOf: Int32Array, count: number): void {
  for (let i = 0; i < count; i += 1) {
    const cell = cells[i] as number;
    groupOf[i] = cell < 0 ? -1 : (grid[cell] as number) - 1;
  }
}

/** The direct index's counts: row i's to group `groupOf[i]` (two doubles a group), rows marked -1 skipped (a loop without unpredictable branches). */
export function addGroupCounts(counts: Float64Array, groupOf: Int32Array, successes: Float64Array, attempts: Float64Array, count: number): void {
  for (let i = 0; i < count; i += 1) {
    const group = groupOf[i] as number;
    if (group < 0) continue;
    counts[2 * group] = (counts[2 * group] as number) + (successes[i] as number);
    counts[2 * group + 1] = (counts[2 * group + 1] as number) + (attempts[i] as number);
  }
}

/**
 * The scales that have a code in the direct index: a table of
 * {@link SCALE_SLOTS} slots by their bits (see {@link scaleSlot}), each holding
 * a scale and its code (-1 for an empty slot). Codes go to the first
 * {@link GRID_SCALES} distinct scales in the order rows bring them.
 */
export class ScaleCodes {
  readonly values = new Float64Array(SCALE_SLOTS);
  readonly codes = new Int32Array(SCALE_SLOTS).fill(-1);
  private count = 0;

  /**
   * The code of a scale whose slot does not hold it: a new code in an empty slot while codes remain, else -1 (the
   * scale never qualifies: a slot, once taken, keeps its scale, and codes are never freed, so the answer for a
   * scale never changes).
   */
  newCode(rowScale: number, slot: number): number {
    if ((this.codes[slot] as number) >= 0 || this.count === GRID_SCALES || Number.isNaN(rowScale)) return -1;
    const code = this.count;
    this.codes[slot] = code;
    this.values[slot] = rowScale;
    this.count = code + 1;
    return code;
  }
}

/**
 * Each row's cell of the direct index into `cells` (the first `count` rows of
 * the key columns), or -1 for a row that does not qualify: a latency off the
 * 0.01 ms grid or beyond it, a scale without a code, a difficulty code
 * outside 0 to {@link GRID_LEVELS} - 1. Returns how many do not qualify.
 */
export function gridCells(columns: { readonly latency: Float64Array; readonly scale: Float64Array; readonly difficulty: Float64Array | Int32Array }, count: number, cells: Int32Array, scaleCodes: ScaleCodes): number {
  const { latency, scale, difficulty } = columns;
  const slotValues = scaleCodes.values;
  const slotCodes = scaleCodes.codes;
  let outside = 0;
  for (let i = 0; i < count; i += 1) {
    const value = latency[i] as number;
    const steps = Math.round(value * 100);
    const level = difficulty[i] as number;
    const rowScale = scale[i] as number;
    const slot = scaleSlot(rowScale);
    let code = slotCodes[slot] as number;
    if (code < 0 || slotValues[slot] !== rowScale) code = scaleCodes.newCode(rowScale, slot);
    if (steps / 100 === value && steps >= 0 && steps < GRID_STEPS && code >= 0 && level >= 0 && level < GRID_LEVELS && (level | 0) === level) {
      cells[i] = ((code * GRID_LEVELS + level) * GRID_STEPS + steps) | 0;
    } else {
      cells[i] = -1;
      outside += 1;
    }
  }
  return outside;
}

/** Scratch columns for the rows of a batch that the direct index does not take (they go through the hash table). */
export interface OffGridRows {
  readonly latency: Float64Array;
  readonly scale: Float64Array;
  readonly difficulty: Float64Array;
  readonly successes: Float64Array;
  readonly attempts: Float64Array;
}

/** {@link OffGridRows} with room for `size` rows. */
export function offGridColumns(size: number): OffGridRows {
  return { latency: new Float64Array(size), scale: new Float64Array(size), difficulty: new Float64Array(size), successes: new Float64Array(size), attempts: new Float64Array(size) };
}

/**
 * The rows {@link gridCells} marked -1 (still -1 in `groupOf` after
 * {@link readCells}), in order, copied into `gathered` (weights and players
 * are never on this path); returns `gathered`.
 */
export function gatherOffGrid(
  columns: { readonly latency: Float64Array; readonly scale: Float64Array; readonly difficulty: Float64Array | Int32Array; readonly successes: Float64Array; readonly attempts: Float64Array },
  count: number,
  groupOf: Int32Array,
  gathered: OffGridRows,
): OffGridRows {
  let r = 0;
  for (let i = 0; i < count; i += 1) {
    if ((groupOf[i] as number) >= 0) continue;
    gathered.latency[r] = columns.latency[i] as number;
    gathered.scale[r] = columns.scale[i] as number;
    gathered.difficulty[r] = columns.difficulty[i] as number;
    gathered.successes[r] = columns.successes[i] as number;
    gathered.attempts[r] = columns.attempts[i] as number;
    r += 1;
  }
  return gathered;
}
