/**
 * The `--threads` option of the commands that can share their work between
 * threads (`plan size`, `fit`, `field-check`): a whole number from 1 to 256,
 * by default the processors available, at most `defaultCap` of them. The
 * answer never depends on it.
 */
import { availableParallelism } from 'node:os';
import { type Issue, error, show } from '../issues.js';

/**
 * The default of `fit` and `field-check`: each of their worker threads holds a copy of the data's
 * groups and its own designs (about 250 MB at a million distinct rows), so a many-core machine does
 * not start one per core unasked; `--threads` sets more.
 */
export const FIT_THREADS_CAP = 4;

/** Threads to use; an invalid value adds an issue naming `--threads`. */
export function threadCount(text: string | undefined, issues: Issue[], defaultCap = Infinity): number {
  if (text === undefined) return Math.max(1, Math.min(defaultCap, availableParallelism()));
  const value = Number(text);
  if (!Number.isInteger(value) || value < 1 || value > 256) issues.push(error('invalid_option', '--threads', `\`--threads\` requires a whole number from 1 to 256, got ${show(text)}`));
  return value;
}
