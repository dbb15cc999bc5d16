/**
 * Shape checks shared by the fitting functions. Each returns the issues it
 * finds (never throws), in the project's error grammar.
 */
import { error, show, type Issue } from '../issues.js';

/** `field` requires `expected` entries. */
export function checkLength(field: string, values: ArrayLike<unknown>, expected: number): Issue[] {
  return values.length === expected
    ? []
    : [error('length_mismatch', field, `\`${field}\` requires ${expected} entries (one per design row), got ${values.length}`)];
}

/** Every entry of `field` finite (and >= 0 when `nonNegative`); reports the first offender. */
export function checkFinite(field: string, values: ArrayLike<number>, nonNegative = false): Issue[] {
  if (values instanceof Float64Array && allFinite(values, nonNegative)) return [];
  for (let i = 0; i < values.length; i += 1) {
    const value = values[i] as number;
    if (!Number.isFinite(value)) {
      return [error('not_finite', `${field}[${i}]`, `\`${field}\` requires finite numbers, got ${show(value)}`)];
    }
    if (nonNegative && value < 0) {
      return [error('negative', `${field}[${i}]`, `\`${field}\` requires numbers >= 0, got ${show(value)}`)];
    }
  }
  return [];
}

/**
 * True when every entry is finite (and >= 0 when `nonNegative`): one branch-free sweep (v * 0 is
 * 0 for a finite v and NaN otherwise), the common case of a large design; the loop of
 * {@link checkFinite} then finds no offender to name.
 */
function allFinite(values: Float64Array, nonNegative: boolean): boolean {
  let probe = 0;
  let least = 0;
  for (let i = 0; i < values.length; i += 1) {
    const value = values[i] as number;
    probe += value * 0;
    least = value < least ? value : least;
  }
  return probe === 0 && (!nonNegative || least >= 0);
}

/** Cluster indices are integers >= 0, one per row. */
export function checkClusters(values: ArrayLike<number>, rows: number): Issue[] {
  const issues = checkLength('clusters', values, rows);
  if (issues.length > 0) return issues;
  for (let i = 0; i < values.length; i += 1) {
    const value = values[i] as number;
    if (!Number.isInteger(value) || value < 0) {
      return [error('invalid_cluster', `clusters[${i}]`, `\`clusters\` requires integers >= 0, got ${show(value)}`)];
    }
  }
  return [];
}
