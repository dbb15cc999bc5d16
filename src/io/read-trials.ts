/**
 * Reading a trials file from disk as a stream: memory stays proportional to
 * the columns, never to the text, and the size limits are enforced while
 * reading, not after. The bytes go through the CSV scanner of
 * `formats/trials-csv.ts` one chunk at a time; no chunk is kept.
 */
import { open, stat } from 'node:fs/promises';
import { basename } from 'node:path';
import { type Result, error, fail } from '../issues.js';
import { type Trials, MAX_CSV_LINE_BYTES, TrialsReader, detectDelimiter } from '../formats/trials-csv.js';

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

/**
 * Read a trials CSV file. `onProgress` (optional) is called with the number of
 * rows read, about every million rows; `onChunk` (optional) sees every chunk of
 * the file's bytes in order, e.g. to hash the file in the same pass.
 */
export async function readTrialsFile(
  path: string,
  options: { onProgress?: (rows: number) => void; onChunk?: (bytes: Buffer) => void } = {},
): Promise<Result<Trials>> {
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
  });
  // One buffer, read into again and again: no chunk outlives its scan.
  const onChunk = options.onChunk;
  let handle;
  try {
    handle = await open(path, 'r');
  } catch (cause) {
    return fail([error('cannot_read', path, `the file requires to be readable: ${(cause as Error).message}`)]);
  }
  try {
    const buffer = Buffer.allocUnsafe(CHUNK_BYTES);
    for (;;) {
      const { bytesRead } = await handle.read(buffer, 0, CHUNK_BYTES, null);
      if (bytesRead === 0) break;
      const chunk = buffer.subarray(0, bytesRead);
      onChunk?.(chunk);
      if (!reader.push(chunk)) break;
    }
  } catch (cause) {
    return fail([error('cannot_read', path, `the file requires to be readable: ${(cause as Error).message}`)]);
  } finally {
    await handle.close();
  }
  return reader.finish();
}
