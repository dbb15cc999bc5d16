/**
 * Reading a trials file from disk as a stream: memory stays proportional to
 * the columns (or, read straight into groups, to the distinct points), never
 * to the text, and the size limits are enforced while reading, not after. The bytes go through the CSV scanner of
 * `formats/trials-csv.ts` one chunk at a time; no chunk is kept.
 */
import { createHash } from 'node:crypto';
import { type FileHandle, open, stat } from 'node:fs/promises';
import { basename } from 'node:path';
import { type Result, error, fail, ok } from '../issues.js';
import { MAX_CSV_LINE_BYTES, TrialsReader, detectDelimiter } from '../formats/trials-csv.js';
import type { Trials, TrialSinkOptions } from '../formats/trials-types.js';
import { mergeGroups } from '../model/collapse.js';
import type { GroupedTrials } from '../model/collapsed-trials.js';
import { COLLAPSE_BATCH_ROWS, GroupAccumulator } from '../model/group-accumulator.js';
import { CALLER_SHARE, KEEPING_CALLER_SHARE, PART_BATCH_ROWS, PROBE_BYTES, SPLIT_READ_MIN_BYTES, type SplitOutcome, type SplitTuning } from './split-read-protocol.js';

/** Bytes read per chunk. */
const CHUNK_BYTES = 1 << 18;

async function readHead(path: string): Promise<{ head: string; headBytes: Uint8Array; size: number }> {
  const handle = await open(path, 'r');
  try {
    const buffer = Buffer.alloc(MAX_CSV_LINE_BYTES);
    const { bytesRead } = await handle.read(buffer, 0, buffer.length, 0);
    const { size } = await stat(path);
    const headBytes = buffer.subarray(0, bytesRead);
    return { head: headBytes.toString('utf8'), headBytes, size };
  } finally {
    await handle.close();
  }
}

/** Rows expected from the file size and the mean line length of the first 64 KiB (a capacity hint, not a limit). */
function expectedRows(head: string, size: number): number {
  const lines = head.split('\n').length - 1;
  if (lines < 2) return 1024;
  const meanBytes = Buffer.byteLength(head.slice(0, head.lastIndexOf('\n') + 1)) / lines;
  return Math.ceil((size / meanBytes) * 1.02) + 16;
}

/** Options of {@link readTrialsFile} and {@link readGroupedTrialsFile}. */
export interface ReadTrialsOptions {
  /** Called with the number of rows read, about every million rows. */
  readonly onProgress?: (rows: number) => void;
  /** Sees every chunk of the file's bytes in order, e.g. to hash the file in the same pass. */
  readonly onChunk?: (bytes: Uint8Array) => void;
  /**
   * Threads to read with (default 1). With 2 or more and a worker script (`split.workerUrl`: the CLI
   * passes its own), {@link readGroupedTrialsFile} parses the later part of a large file (64 MiB or
   * more) on a worker thread, with the same result (`split-read.ts`).
   */
  readonly threads?: number;
  /** Hash the file's bytes (SHA-256, hex) while reading: {@link readGroupedTrialsFile} returns it as `sha256`. */
  readonly sha256?: boolean;
  /** The worker script of a read on threads, and how it splits the file (see `split-read.ts`). */
  readonly split?: SplitTuning;
}

/** Read a trials CSV file into columns. */
export async function readTrialsFile(path: string, options: ReadTrialsOptions = {}): Promise<Result<Trials>> {
  const read = await scanFile(path, options, null);
  return read.ok ? read.value.reader.finish() : read;
}

/**
 * Read a trials CSV file straight into groups for fitting (see
 * `groupTrials`): rows are collapsed batch by batch as they are read, so
 * memory follows the distinct points, not the rows. The same groups as
 * `groupTrials(readTrialsFile(path))`, in the same order with named levels;
 * with numeric levels (keyed by code while reading, by value there) the
 * points found through a hash collision may come in another order, which
 * changes a fit's sums only in their last bits. One exception: when the first
 * 8,192 rows of a per-attempt file with players or weights are nearly all
 * distinct (fewer than one in ten merges), every row is kept as read, each
 * its own group (`keepDistinct` of `GroupAccumulator`): a fit of the groups is
 * the same up to the last bits of its sums, with more rows.
 */
export async function readGroupedTrialsFile(path: string, options: ReadTrialsOptions = {}): Promise<Result<GroupedTrials & { readonly sha256?: string }>> {
  let accumulator: GroupAccumulator | null = null;
  const sink: TrialSinkOptions = {
    batchRows: COLLAPSE_BATCH_ROWS,
    open: (layout) => {
      accumulator = new GroupAccumulator({ weight: layout.weight, player: layout.player, merge: layout.shape === 'per_attempt', expectedRows: layout.expectedRows, keepDistinct: true });
      return accumulator;
    },
  };
  const read = await scanFile(path, options, sink);
  if (!read.ok) return read;
  const source = read.value.reader.finishSource();
  if (!source.ok) return source;
  const { file, shape, levels, numericLevels, players } = source.value;
  const opened = accumulator as GroupAccumulator | null;
  if (opened === null) return fail([error('empty_file', file, 'a trials file requires a header line and rows, got an empty file')]);
  let groups = opened.finish(numericLevels === null ? undefined : (code) => numericLevels[code] as number);
  if (numericLevels !== null && new Set(numericLevels).size < numericLevels.length) groups = mergeGroups(groups);
  return ok(
    {
      file,
      shape,
      difficulty: numericLevels === null ? { kind: 'levels', levels } : { kind: 'numeric' },
      players,
      groups,
      ...(read.value.sha256 === null ? {} : { sha256: read.value.sha256 }),
    },
    source.warnings,
  );
}

/**
 * Scan the file through a trials reader (with a sink or without); the reader is left to finish.
 * With a sink, `threads` above 1 and a large file, the later part of the file is parsed on a
 * worker thread (`split-read.ts`), with the same result.
 */
async function scanFile(path: string, options: ReadTrialsOptions, sink: TrialSinkOptions | null): Promise<Result<{ reader: TrialsReader; sha256: string | null }>> {
  const file = basename(path);
  let head: string;
  let headBytes: Uint8Array;
  let size: number;
  try {
    ({ head, headBytes, size } = await readHead(path));
  } catch (cause) {
    return fail([error('cannot_read', path, `the file requires to be readable: ${(cause as Error).message}`)]);
  }
  const body = head.replace(/^\uFEFF/, '');
  if (body.trim() === '') return fail([error('empty_file', file, 'a trials file requires a header line and rows, got an empty file')]);
  const delimiter = detectDelimiter(body.split(/\r?\n/, 1)[0] ?? '');
  const newReader = () =>
    new TrialsReader(file, delimiter, {
      capacity: expectedRows(head, size),
      ...(options.onProgress === undefined ? {} : { onProgress: options.onProgress }),
      ...(sink === null ? {} : { sink }),
    });
  let reader = newReader();
  let hash = options.sha256 === true ? createHash('sha256') : null;
  const onChunk = hash === null && options.onChunk === undefined ? undefined : (bytes: Uint8Array) => {
    hash?.update(bytes);
    options.onChunk?.(bytes);
  };
  // The hash alone, for bytes `onChunk` has seen already (or that are read again).
  const hashOnly = (bytes: Uint8Array) => hash?.update(bytes);
  const scanned = (digest: string | null = hash === null ? null : hash.digest('hex')) => ok({ reader, sha256: digest });
  const tuning = options.split ?? {};
  const outcome = (how: SplitOutcome) => tuning.onOutcome?.(how);
  // The split's module (it starts a thread) loads only when the file is split.
  const splits = sink !== null && (options.threads ?? 1) > 1 && tuning.workerUrl !== undefined && size >= (tuning.minBytes ?? SPLIT_READ_MIN_BYTES);
  const split = splits ? await import('./split-read.js') : null;
  const headerEnd = split === null ? -1 : split.headerEndOf(headBytes);
  const part = split !== null && tuning.workerUrl !== undefined && headerEnd > 0 ? split.startPartWorker(tuning.workerUrl) : null;
  let handle;
  try {
    handle = await open(path, 'r');
  } catch (cause) {
    part?.stop();
    return fail([error('cannot_read', path, `the file requires to be readable: ${(cause as Error).message}`)]);
  }
  try {
    if (part === null || split === null) {
      await scanRange(handle, reader, 0, onChunk);
      return scanned();
    }
    // The first MiB first: its rows tell whether the sink merges them, which sets this thread's share.
    const probed = Math.min(size, tuning.probeBytes ?? PROBE_BYTES);
    let going = await scanRange(handle, reader, 0, onChunk, probed);
    const share = tuning.callerShare ?? (reader.builder.sinkKeepsRows() ? KEEPING_CALLER_SHARE : CALLER_SHARE);
    const start = going ? await split.lineStartAfter(handle, Math.max(headerEnd, probed, Math.floor(size * share)), size) : -1;
    if (start < 0) {
      part.stop();
      outcome('one-thread');
      if (going) await scanRange(handle, reader, probed, onChunk);
      return scanned();
    }
    // The worker hashes the file itself (this thread's part too), so this thread only parses and groups.
    part.read({ path, file, delimiter, headerEnd, start, batchRows: PART_BATCH_ROWS, sha256: hash !== null });
    going = await scanRange(handle, reader, probed, onChunk, start);
    // A bad line here is the file's first: the reader reports it. A quoted field across the split
    // point, or a worker that could not start: this thread reads on from the split point itself.
    if (!going || !reader.atLineEnd() || part.failed()) {
      part.stop();
      if (going) await scanRange(handle, reader, start, onChunk);
      outcome('one-thread');
      return scanned();
    }
    if (options.onChunk !== undefined) await scanRange(handle, null, start, options.onChunk);
    const parted = await part.addRowsTo(reader.builder);
    if (parted.ok) {
      outcome('two-threads');
      return scanned(parted.sha256);
    }
    part.stop();
    if (!parted.took) {
      // It stopped before any of its rows came (e.g. its script did not load): read on from the split point.
      await scanRange(handle, reader, start, hashOnly);
      outcome('one-thread');
      return scanned();
    }
    // The worker's part has a bad line (or passes a limit): read every line here, for the error's own line.
    reader = newReader();
    hash = hash === null ? null : createHash('sha256');
    await scanRange(handle, reader, 0, hashOnly);
    outcome('read-again');
    return scanned();
  } catch (cause) {
    part?.stop();
    return fail([error('cannot_read', path, `the file requires to be readable: ${(cause as Error).message}`)]);
  } finally {
    await handle.close();
  }
}

/**
 * Push the file's bytes from `from` to `to` (default: the end) to `reader` (null: only to
 * `onChunk`), chunk by chunk; false once the reader stopped. Two buffers are read into in turn:
 * the next chunk is read while this one is scanned, and no chunk outlives its scan (the scanner
 * copies what it carries over).
 */
async function scanRange(handle: FileHandle, reader: TrialsReader | null, from: number, onChunk: ((bytes: Uint8Array) => void) | undefined, to = Infinity): Promise<boolean> {
  const buffers = [Buffer.allocUnsafe(CHUNK_BYTES), Buffer.allocUnsafe(CHUNK_BYTES)] as const;
  let turn: 0 | 1 = 0;
  let offset = from;
  const readAt = (buffer: Buffer, at: number) => handle.read(buffer, 0, Math.max(0, Math.min(CHUNK_BYTES, to - at)), at);
  let pending: Promise<{ bytesRead: number }> | null = readAt(buffers[0], offset);
  try {
    for (;;) {
      const { bytesRead } = await pending;
      pending = null;
      if (bytesRead === 0) return true;
      const chunk = buffers[turn].subarray(0, bytesRead);
      offset += bytesRead;
      turn = turn === 0 ? 1 : 0;
      if (offset < to) pending = readAt(buffers[turn], offset);
      onChunk?.(chunk);
      if (reader !== null && !reader.push(chunk)) return false;
      if (pending === null) return true;
    }
  } finally {
    // A read still in flight (the scan stopped early) ends before the file is closed.
    if (pending !== null) await pending.catch(() => undefined);
  }
}
