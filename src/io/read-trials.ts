/**
 * Reading a trials file from disk as a stream: memory stays proportional to
 * the columns (or, read straight into groups, to the distinct points), never
 * to the text, and the size limits are enforced while reading, not after. The bytes go through the CSV scanner of
 * `formats/trials-csv.ts` one chunk at a time; no chunk is kept.
 */
import { open, stat } from 'node:fs/promises';
import { basename } from 'node:path';
import { type Result, error, fail, ok } from '../issues.js';
import { MAX_CSV_LINE_BYTES, TrialsReader, detectDelimiter } from '../formats/trials-csv.js';
import type { Trials, TrialSinkOptions } from '../formats/trials-types.js';
import { mergeGroups } from '../model/collapse.js';
import type { GroupedTrials } from '../model/collapsed-trials.js';
import { COLLAPSE_BATCH_ROWS, GroupAccumulator } from '../model/group-accumulator.js';

/** Bytes read per chunk. */
const CHUNK_BYTES = 1 << 18;

async function readHead(path: string): Promise<{ head: string; size: number }> {
  const handle = await open(path, 'r');
  try {
    const buffer = Buffer.alloc(MAX_CSV_LINE_BYTES);
    const { bytesRead } = await handle.read(buffer, 0, buffer.length, 0);
    const { size } = await stat(path);
    return { head: buffer.subarray(0, bytesRead).toString('utf8'), size };
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
}

/** Read a trials CSV file into columns. */
export async function readTrialsFile(path: string, options: ReadTrialsOptions = {}): Promise<Result<Trials>> {
  const read = await scanFile(path, options, null);
  return read.ok ? read.value.finish() : read;
}

/**
 * Read a trials CSV file straight into groups for fitting (see
 * `groupTrials`): rows are collapsed batch by batch as they are read, so
 * memory follows the distinct points, not the rows. The same groups as
 * `groupTrials(readTrialsFile(path))`, in the same order with named levels;
 * with numeric levels (keyed by code while reading, by value there) the
 * points found through a hash collision may come in another order, which
 * changes a fit's sums only in their last bits.
 */
export async function readGroupedTrialsFile(path: string, options: ReadTrialsOptions = {}): Promise<Result<GroupedTrials>> {
  let accumulator: GroupAccumulator | null = null;
  const sink: TrialSinkOptions = {
    batchRows: COLLAPSE_BATCH_ROWS,
    open: (layout) => {
      accumulator = new GroupAccumulator({ weight: layout.weight, player: layout.player, merge: layout.shape === 'per_attempt', expectedRows: layout.expectedRows });
      return accumulator;
    },
  };
  const read = await scanFile(path, options, sink);
  if (!read.ok) return read;
  const source = read.value.finishSource();
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
    },
    source.warnings,
  );
}

/** Scan the file through a trials reader (with a sink or without); the reader is left to finish. */
async function scanFile(path: string, options: ReadTrialsOptions, sink: TrialSinkOptions | null): Promise<Result<TrialsReader>> {
  const file = basename(path);
  let head: string;
  let size: number;
  try {
    ({ head, size } = await readHead(path));
  } catch (cause) {
    return fail([error('cannot_read', path, `the file requires to be readable: ${(cause as Error).message}`)]);
  }
  const body = head.replace(/^\uFEFF/, '');
  if (body.trim() === '') return fail([error('empty_file', file, 'a trials file requires a header line and rows, got an empty file')]);
  const delimiter = detectDelimiter(body.split(/\r?\n/, 1)[0] ?? '');
  const reader = new TrialsReader(file, delimiter, {
    capacity: expectedRows(head, size),
    ...(options.onProgress === undefined ? {} : { onProgress: options.onProgress }),
    ...(sink === null ? {} : { sink }),
  });
  // Two buffers read into in turn: the next chunk is read while this one is scanned,
  // and no chunk outlives its scan (the scanner copies what it carries over).
  const onChunk = options.onChunk;
  let handle;
  try {
    handle = await open(path, 'r');
  } catch (cause) {
    return fail([error('cannot_read', path, `the file requires to be readable: ${(cause as Error).message}`)]);
  }
  let pending: Promise<{ bytesRead: number }> | null = null;
  try {
    const buffers = [Buffer.allocUnsafe(CHUNK_BYTES), Buffer.allocUnsafe(CHUNK_BYTES)] as const;
    let turn: 0 | 1 = 0;
    let offset = 0;
    pending = handle.read(buffers[0], 0, CHUNK_BYTES, 0);
    for (;;) {
      const { bytesRead } = await pending;
      pending = null;
      if (bytesRead === 0) break;
      const chunk = buffers[turn].subarray(0, bytesRead);
      offset += bytesRead;
      turn = turn === 0 ? 1 : 0;
      pending = handle.read(buffers[turn], 0, CHUNK_BYTES, offset);
      onChunk?.(chunk);
      if (!reader.push(chunk)) break;
    }
  } catch (cause) {
    return fail([error('cannot_read', path, `the file requires to be readable: ${(cause as Error).message}`)]);
  } finally {
    // A read still in flight (the scan stopped early) ends before the file is closed.
    if (pending !== null) await pending.catch(() => undefined);
    await handle.close();
  }
  return ok(reader);
}
