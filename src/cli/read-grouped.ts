/**
 * Reading a trials file into groups for fitting, hashing its bytes in the
 * same pass, with a progress line: the one way `fit` and `field-check` read
 * trials, so a reader added for one serves both.
 */
import { createHash } from 'node:crypto';
import { type Result, ok } from '../issues.js';
import { readGroupedTrialsFile } from '../io/read-trials.js';
import type { GroupedTrials } from '../model/collapse.js';
import type { ProgressLine } from './progress.js';

/** Read the trials file straight into groups, hashing its bytes in the same pass. */
export async function readGrouped(path: string, progress: ProgressLine): Promise<Result<{ grouped: GroupedTrials; sha256: string }>> {
  const hash = createHash('sha256');
  const read = await readGroupedTrialsFile(path, {
    onProgress: (rows) => progress.update(() => `read ${rows.toLocaleString('en-GB')} rows`),
    onChunk: (bytes) => hash.update(bytes),
  });
  if (!read.ok) return read;
  return ok({ grouped: read.value, sha256: hash.digest('hex') }, read.warnings);
}
