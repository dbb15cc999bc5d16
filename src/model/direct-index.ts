/**
 * The direct index of `GroupAccumulator` (`group-accumulator.ts`, where the
 * class note says when a row qualifies): its shape, the slot that gives a
 * scale its code, and the two one-pass loops over a batch's cells.
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
