/**
 * Reading a trials file into groups for fitting, hashing its bytes in the
 * same pass, with a progress line: the one way `fit` and `field-check` read
 * trials, so a reader added for one serves both.
 */
import { createHash } from 'node:crypto';
import { type Result, ok } from '../issues.js';
import { readGroupedTrialsFile } from '../io/read-trials.js';
import type { GroupedTrials } from '../model/collapse.js';

/** The progress line on stderr, only on a terminal and only once a run has taken more than a second; `stage` is called only when the line is shown (formatting a count loads locale data, about 20 ms). */
export function progressLine(command: string): { update: (stage: () => string) => void; done: () => void } {
  const started = performance.now();
  const tty = Boolean(process.stderr.isTTY);
  let shown = false;
  return {
    update(stage) {
      if (!tty) return;
      const elapsed = (performance.now() - started) / 1000;
      if (elapsed < 1) return;
      shown = true;
      process.stderr.write(`\r\u001b[2Klagparity ${command}: ${stage()} (${elapsed.toFixed(1)} s)`);
    },
    done() {
      if (shown) process.stderr.write('\r\u001b[2K');
    },
  };
}

/** Read the trials file straight into groups, hashing its bytes in the same pass. */
export async function readGrouped(path: string, progress: ReturnType<typeof progressLine>): Promise<Result<{ grouped: GroupedTrials; sha256: string }>> {
  const hash = createHash('sha256');
  const read = await readGroupedTrialsFile(path, {
    onProgress: (rows) => progress.update(() => `read ${rows.toLocaleString('en-GB')} rows`),
    onChunk: (bytes) => hash.update(bytes),
  });
  if (!read.ok) return read;
  return ok({ grouped: read.value, sha256: hash.digest('hex') }, read.warnings);
}
