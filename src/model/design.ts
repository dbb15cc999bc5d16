/**
 * From grouped trials to the arrays a fit iterates over: a difficulty coding
 * and the design matrix of a term list (collapsing is `collapse.ts`).
 */
import type { Trials } from '../formats/trials-types.js';
import type { DesignMatrix } from '../numeric/design-matrix.js';
import type { CollapsedTrials, GroupedTrials } from './collapsed-trials.js';
import { type DesignColumn, type DifficultyCoding, type TermName, designColumns, scaleForm, scaleTermValue } from './terms.js';

/**
 * The difficulty coding of trials: numeric, or the levels in order of first
 * appearance against `reference` (default: the first level).
 */
export function difficultyCodingOf(trials: Trials | GroupedTrials, reference?: string): DifficultyCoding {
  if (trials.difficulty.kind === 'numeric') return { kind: 'numeric' };
  const levels = trials.difficulty.levels;
  return { kind: 'levels', levels, reference: reference ?? (levels[0] as string) };
}

/** Distinct scales whose model terms {@link buildDesign} keeps while it fills the scale column. */
const KEPT_SCALES = 8;

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
  // Scales repeat (a few settings, in any order), so the terms of the first few distinct ones
  // are kept and found by comparison rather than recomputed (a logarithm per row).
  const keptScales: number[] = [];
  const keptTerms: number[] = [];
  for (let i = 0; i < n; i += 1) {
    const scale = data.scale[i] as number;
    let k = 0;
    while (k < keptScales.length && keptScales[k] !== scale) k += 1;
    if (k < keptScales.length) {
      scaleTerm[i] = keptTerms[k] as number;
      continue;
    }
    const term = scaleTermValue(form, scale);
    if (keptScales.length < KEPT_SCALES) {
      keptScales.push(scale);
      keptTerms.push(term);
    }
    scaleTerm[i] = term;
  }
  const { latency, difficulty } = data;
  columns.forEach((column, j) => {
    const target = values.subarray(j * n, (j + 1) * n);
    const levelCode =
      column.difficulty !== null && column.difficulty !== 'value' && coding.kind === 'levels'
        ? coding.levels.indexOf(column.difficulty.level)
        : -1;
    // One factor at a time, each a plain loop: the product of the column's covariate factors.
    if (column.latency) target.set(latency.subarray(0, n));
    else target.fill(1);
    if (column.scale) for (let i = 0; i < n; i += 1) target[i] = (target[i] as number) * (scaleTerm[i] as number);
    if (column.difficulty === 'value') for (let i = 0; i < n; i += 1) target[i] = (target[i] as number) * (difficulty[i] as number);
    else if (column.difficulty !== null) for (let i = 0; i < n; i += 1) if (difficulty[i] !== levelCode) target[i] = 0;
  });
  return { matrix: { rows: n, columns: columns.length, names: columns.map((column) => column.name), values }, columns };
}

/**
 * One row of {@link buildDesign}'s matrix at a time, without the matrix: `row(latency, scale,
 * difficulty, out)` writes the row's entries into `out`, by the same products in the same order,
 * so the same bits (for a sweep over many rows that needs each row once).
 */
export function designRows(terms: readonly TermName[], coding: DifficultyCoding): (latency: number, scale: number, difficulty: number, out: Float64Array) => void {
  const columns = designColumns(terms, coding);
  const form = scaleForm(terms);
  const k = columns.length;
  // Each column's factors as flags (a plain loop over typed arrays per row).
  const byLatency = Uint8Array.from(columns, (column) => (column.latency ? 1 : 0));
  const byScale = Uint8Array.from(columns, (column) => (column.scale ? 1 : 0));
  const byValue = Uint8Array.from(columns, (column) => (column.difficulty === 'value' ? 1 : 0));
  // A level column's level code (-1: not among the coding's levels, as buildDesign has it); -2: no level column.
  const levelCodes = Int32Array.from(columns, (column) =>
    column.difficulty === null || column.difficulty === 'value' ? -2 : coding.kind === 'levels' ? coding.levels.indexOf(column.difficulty.level) : -1,
  );
  // The terms of the first few distinct scales, found by comparison (as buildDesign keeps them).
  const keptScales = new Float64Array(KEPT_SCALES);
  const keptTerms = new Float64Array(KEPT_SCALES);
  let kept = 0;
  return (latency, scale, difficulty, out) => {
    let at = 0;
    while (at < kept && keptScales[at] !== scale) at += 1;
    let term: number;
    if (at < kept) term = keptTerms[at] as number;
    else {
      term = scaleTermValue(form, scale);
      if (kept < KEPT_SCALES) {
        keptScales[kept] = scale;
        keptTerms[kept] = term;
        kept += 1;
      }
    }
    for (let j = 0; j < k; j += 1) {
      let value = byLatency[j] === 1 ? latency : 1;
      if (byScale[j] === 1) value *= term;
      if (byValue[j] === 1) value *= difficulty;
      else if (levelCodes[j] !== -2 && difficulty !== levelCodes[j]) value = 0;
      out[j] = value;
    }
  };
}

/**
 * X b of one design row `x`, summed as `multiply` (numeric/design-matrix.ts) sums each row: columns
 * in order, zero coefficients skipped. The same bits as multiplying the matrix.
 */
export function rowPredictor(x: Float64Array, coefficients: ArrayLike<number>): number {
  let sum = 0;
  for (let j = 0; j < x.length; j += 1) {
    const coefficient = coefficients[j] as number;
    if (coefficient !== 0) sum += (x[j] as number) * coefficient;
  }
  return sum;
}

/** A design row by row: `rowAt(i, out)` writes row i's entries into `out` (the whole design is never needed at once). */
export interface DesignByRow {
  readonly rows: number;
  readonly columns: number;
  rowAt(row: number, out: Float64Array): void;
}

/** The design of `terms` over the rows of `data`, one row at a time: {@link designRows} of each row's covariates. */
export function designRowsOf(data: CollapsedTrials, terms: readonly TermName[], coding: DifficultyCoding): DesignByRow {
  const row = designRows(terms, coding);
  const { latency, scale, difficulty } = data;
  return {
    rows: data.rows,
    columns: designColumns(terms, coding).length,
    rowAt: (i, out) => row(latency[i] as number, scale[i] as number, difficulty[i] as number, out),
  };
}
