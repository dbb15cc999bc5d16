/**
 * Reading a trials file from disk as a stream: memory stays proportional to
 * the columns, never to the text, and the size limits are enforced while
 * reading, not after.
 */
import { createReadStream } from 'node:fs';
import { open } from 'node:fs/promises';
import { basename } from 'node:path';
import { parse } from 'csv-parse';
import { type Result, error, fail } from '../issues.js';
import { type Trials, TrialsBuilder, csvErrorIssue, csvOptions, detectDelimiter, MAX_CSV_LINE_BYTES } from '../formats/trials-csv.js';

async function readHead(path: string): Promise<string> {
  const handle = await open(path, 'r');
  try {
    const buffer = Buffer.alloc(MAX_CSV_LINE_BYTES);
    const { bytesRead } = await handle.read(buffer, 0, buffer.length, 0);
    return buffer.subarray(0, bytesRead).toString('utf8');
  } finally {
    await handle.close();
  }
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
  try {
    head = await readHead(path);
  } catch (cause) {
    return fail([error('cannot_read', path, `the file requires to be readable: ${(cause as Error).message}`)]);
  }
  const body = head.replace(/^\uFEFF/, '');
  if (body.trim() === '') return fail([error('empty_file', file, 'a trials file requires a header line and rows, got an empty file')]);
  const delimiter = detectDelimiter(body.split(/\r?\n/, 1)[0] ?? '');
  const builder = new TrialsBuilder(file);
  const source = createReadStream(path);
  const onChunk = options.onChunk;
  if (onChunk !== undefined) source.on('data', (chunk) => onChunk(chunk as Buffer));
  const parser = source.pipe(parse(csvOptions(delimiter)));
  let first = true;
  try {
    for await (const item of parser as AsyncIterable<{ record: string[]; info: { lines: number } }>) {
      if (first) {
        first = false;
        if (!builder.header(item.record, item.info.lines, delimiter)) break;
        continue;
      }
      if (!builder.row(item.record, item.info.lines)) break;
      if (options.onProgress && builder.rows % 1_000_000 === 0) options.onProgress(builder.rows);
    }
  } catch (cause) {
    return fail([csvErrorIssue(file, cause)]);
  } finally {
    parser.destroy();
  }
  if (first) return fail([error('empty_file', file, 'a trials file requires a header line and rows, got an empty file')]);
  return builder.finish();
}
