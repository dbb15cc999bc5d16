/**
 * A large trials file read on two threads: the calling thread reads the
 * first part of the file, as a whole-file read would, while a worker thread
 * (`read-part-worker.ts`) reads the rest by the same reader; then the calling
 * thread adds the worker's rows after its own, in the file's order, with the
 * worker's names (levels, player ids) recoded to its own in order of first
 * appearance. Every row goes through the calling thread's builder and sink
 * exactly as in a whole-file read (the same batches, hence the same groups in
 * the same order), so the result is the same, bit for bit; only the parsing of
 * the later lines moves to the other thread. The calling thread's share
 * (`split-read-protocol.ts`) is half when its sink keeps rows as they come,
 * less when it merges them (it groups every row, `model/group-accumulator.ts`).
 *
 * Whenever the worker cannot give the same answer it gives up and the caller
 * reads the lines itself (`read-trials.ts`): the split point falls inside a
 * quoted field, a line of the worker's part is bad (the error must name its
 * own line), the rows pass the documented limit, or a thread cannot start.
 */
import { Worker } from 'node:worker_threads';
import type { FileHandle } from 'node:fs/promises';
import type { TrialsBuilder } from '../formats/trials-builder.js';
import type { PartJob, PartMessage } from './split-read-protocol.js';

/** The offset just past the first line feed at or after `from` (within 64 KiB), or -1. */
export async function lineStartAfter(handle: FileHandle, from: number, size: number): Promise<number> {
  const window = Buffer.allocUnsafe(Math.min(1 << 16, Math.max(0, size - from)));
  if (window.length === 0) return -1;
  const { bytesRead } = await handle.read(window, 0, window.length, from);
  const at = window.subarray(0, bytesRead).indexOf(0x0a);
  return at < 0 || from + at + 1 >= size ? -1 : from + at + 1;
}

/**
 * The end of the header line in the file's first bytes (past its line feed), or -1 when the worker
 * could not read it alone: no line feed, or a quote (a quoted header name may hold a line end).
 */
export function headerEndOf(head: Uint8Array): number {
  const end = head.indexOf(0x0a);
  if (end < 0 || head.subarray(0, end).includes(0x22)) return -1;
  return end + 1;
}

/** A worker reading the later part of a file. */
export interface PartWorker {
  /** Start reading (once). */
  read(job: PartJob): void;
  /** Whether it already stopped without a good end (e.g. it could not start). */
  failed(): boolean;
  /**
   * Add every row it reads to `builder`, in order, as they come; once the part ended with every line
   * read, `ok` and the file's hash (when asked), else not `ok`, with whether the builder took some of
   * its rows (then read again from the start; else read on from the split point).
   */
  addRowsTo(builder: TrialsBuilder): Promise<{ readonly ok: boolean; readonly sha256: string | null; readonly took: boolean }>;
  stop(): void;
}

/** Start the worker thread of the script at `url` (`part-worker-url.ts`; its script loads while the caller starts reading), or null where a thread cannot start. */
export function startPartWorker(url: URL): PartWorker | null {
  let worker: Worker;
  try {
    worker = new Worker(url);
  } catch {
    return null;
  }
  worker.unref();
  const queue: (PartMessage | null)[] = [];
  let wake: (() => void) | null = null;
  let over = false;
  const push = (message: PartMessage | null) => {
    if (over) return;
    if (message === null || message.kind === 'end') over = true;
    queue.push(message);
    wake?.();
  };
  worker.on('message', (message: PartMessage) => push(message));
  // A script that fails to load, or a worker that stops early, ends the part without a good end.
  worker.on('error', () => push(null));
  worker.on('exit', () => push(null));
  const next = async (): Promise<PartMessage | null> => {
    while (queue.length === 0) await new Promise<void>((resolve) => (wake = resolve));
    wake = null;
    return queue.shift() as PartMessage | null;
  };
  return {
    read: (job) => worker.postMessage(job),
    failed: () => queue.includes(null) || queue.some((message) => message?.kind === 'end' && !message.ok),
    async addRowsTo(builder) {
      const levelCodes: number[] = [];
      const playerCodes: number[] = [];
      let took = false;
      const gaveUp = () => ({ ok: false, sha256: null, took });
      // Waiting for the worker's messages keeps the process alive (nothing else may be pending).
      worker.ref();
      try {
        for (;;) {
          const message = await next();
          if (message === null) return gaveUp();
          if (message.kind === 'end') return message.ok ? { ok: true, sha256: message.sha256, took } : gaveUp();
          for (const name of message.levels) levelCodes.push(builder.codeOf('difficulty', name));
          for (const name of message.players) playerCodes.push(builder.codeOf('player', name));
          const players = message.columns.player === null ? null : Int32Array.from(playerCodes);
          if (!builder.addReadRows(message.columns, message.count, Int32Array.from(levelCodes), players)) return gaveUp();
          took = true;
        }
      } finally {
        worker.unref();
      }
    },
    stop: () => {
      over = true;
      void worker.terminate();
    },
  };
}
