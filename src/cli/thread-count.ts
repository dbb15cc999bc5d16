/**
 * The `--threads` option of the commands that can share their work between
 * threads (`plan size`, `fit`): a whole number from 1 to 256, by default the
 * processors available. The answer never depends on it.
 */
import { availableParallelism } from 'node:os';
import { type Issue, error, show } from '../issues.js';

/** Threads to use; an invalid value adds an issue naming `--threads`. */
export function threadCount(text: string | undefined, issues: Issue[]): number {
  if (text === undefined) return Math.max(1, availableParallelism());
  const value = Number(text);
  if (!Number.isInteger(value) || value < 1 || value > 256) issues.push(error('invalid_option', '--threads', `\`--threads\` requires a whole number from 1 to 256, got ${show(text)}`));
  return value;
}
