/**
 * The split read's constants and types (`split-read.ts`), and the messages between it and its worker
 * thread (`read-part-worker.ts`): no thread is started from here, so `read-trials.ts` imports it
 * freely and loads `split-read.ts` only when it splits.
 */
import type { TrialBatch } from '../formats/trials-types.js';

/** What the worker reads: the header line (`[0, headerEnd)`), then `[start, end of file)`. */
export interface PartJob {
  readonly path: string;
  /** The file's name in messages (unused unless the worker's reader fails, and then only there). */
  readonly file: string;
  readonly delimiter: ',' | ';' | '\t';
  readonly headerEnd: number;
  readonly start: number;
  readonly batchRows: number;
  /** Whether to hash the whole file (SHA-256, from its first byte) while reading. */
  readonly sha256: boolean;
}

/**
 * A batch of rows with the names (levels, player ids) the worker's reader met since the last
 * batch, in the order it met them; or the end of the part (`ok`: every line was read, no failure;
 * `sha256`: the whole file's hash, when asked).
 */
export type PartMessage =
  | { readonly kind: 'rows'; readonly count: number; readonly columns: TrialBatch; readonly levels: readonly string[]; readonly players: readonly string[] }
  | { readonly kind: 'end'; readonly ok: boolean; readonly sha256: string | null };

/**
 * Files smaller than this are read on one thread. Measured with `fit` (one fit) on the bench's
 * files, alternating `--threads 1` and `2`: 5M rows (120 MiB) 7.36 -> 6.14 s; 1M rows (24 MiB)
 * 2.21 -> 2.13 s, within the noise, with up to 20 MiB more at the peak (the worker, and the
 * batches it read ahead).
 */
export const SPLIT_READ_MIN_BYTES = 64 << 20;

/**
 * The share of the file's bytes the calling thread reads itself when its sink merges rows: it groups
 * every line while the worker hashes the whole file, and parsing a line costs about twice what
 * grouping it costs (profiles of the 5M-row bench file before rows were kept), so both threads end
 * together near a quarter.
 */
export const CALLER_SHARE = 0.27;

/**
 * The share when the sink keeps rows as they come (`GroupAccumulator` keepDistinct): appending a row
 * costs little, so the threads split the parsing about evenly. Reads of the 5M-row bench file, three
 * alternating runs each on a loaded minute: 1.48 s at 0.5, 1.61 s at 0.4, 1.91 s at 0.27.
 */
export const KEEPING_CALLER_SHARE = 0.5;

/** The calling thread reads this much first, before it sets its share (the sink has seen a first batch then). */
export const PROBE_BYTES = 1 << 20;

/** How a read on threads went: the worker read its part; this thread read every line (the worker never began, or the split fell inside a quoted field); or the worker gave up after it began and the file was read again. */
export type SplitOutcome = 'two-threads' | 'one-thread' | 'read-again';

/** The split's worker script, and its tuning (tests): the size from which to split, the calling thread's share, the first read, and a report of the outcome. */
export interface SplitTuning {
  readonly minBytes?: number;
  /** The calling thread's share, whatever the sink does (default {@link CALLER_SHARE} or {@link KEEPING_CALLER_SHARE}). */
  readonly callerShare?: number;
  /** Bytes read before the share is set (default {@link PROBE_BYTES}). */
  readonly probeBytes?: number;
  /** The worker's script: the CLI's (`part-worker-url.ts`); without it the file is read on one thread. */
  readonly workerUrl?: URL;
  readonly onOutcome?: (outcome: SplitOutcome) => void;
}

/** Rows in each batch the worker posts (the calling thread re-batches them for its sink). */
export const PART_BATCH_ROWS = 1 << 16;
