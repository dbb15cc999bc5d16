/**
 * The worker thread of `split-read.ts`: reads a trials file's header line,
 * then its lines from a byte offset to the end, by the same reader as a
 * whole-file read (`TrialsReader`), and posts the rows back in batches with
 * the names they use; when asked, it also hashes the whole file (the calling
 * thread's part first, read only for that). It never reports a row's error itself: a failure (or
 * any trouble) ends with `{ kind: 'end', ok: false }`, and the calling thread
 * reads the file line by line for the error's own line and message.
 * Loaded only by `split-read.ts`, never by the library's entry point.
 */
import { createHash } from 'node:crypto';
import { open } from 'node:fs/promises';
import { parentPort } from 'node:worker_threads';
import { TrialsReader } from '../formats/trials-csv.js';
import type { TrialBatch, TrialRowSink } from '../formats/trials-types.js';
import type { PartJob, PartMessage } from './split-read-protocol.js';

const CHUNK_BYTES = 1 << 18;

async function readPart(job: PartJob, post: (message: PartMessage, transfer: ArrayBuffer[]) => void): Promise<{ ok: boolean; sha256: string | null }> {
  let sentLevels = 0;
  let sentPlayers = 0;
  let reader: TrialsReader | null = null;
  const sink: TrialRowSink = {
    addRows(batch: TrialBatch, count: number) {
      const names = (reader as TrialsReader).builder.names();
      const copy = <T extends Float64Array | Int32Array>(column: T): T => column.slice(0, count) as T;
      const columns: TrialBatch = {
        latency: copy(batch.latency),
        scale: copy(batch.scale),
        difficulty: copy(batch.difficulty),
        weight: batch.weight === null ? null : copy(batch.weight),
        player: batch.player === null ? null : copy(batch.player),
        successes: copy(batch.successes),
        attempts: copy(batch.attempts),
      };
      const message: PartMessage = { kind: 'rows', count, columns, levels: names.difficulty.slice(sentLevels), players: names.player.slice(sentPlayers) };
      sentLevels = names.difficulty.length;
      sentPlayers = names.player.length;
      const transfer = Object.values(columns).flatMap((column: Float64Array | Int32Array | null) => (column === null ? [] : [column.buffer as ArrayBuffer]));
      post(message, transfer);
    },
  };
  reader = new TrialsReader(job.file, job.delimiter, { sink: { batchRows: job.batchRows, open: () => sink } });
  const failed = { ok: false, sha256: null };
  const hash = job.sha256 ? createHash('sha256') : null;
  const handle = await open(job.path, 'r');
  try {
    const buffer = Buffer.allocUnsafe(CHUNK_BYTES);
    // The calling thread's part, only hashed (the hash is of the whole file, in order).
    for (let offset = 0; hash !== null && offset < job.start; ) {
      const { bytesRead } = await handle.read(buffer, 0, Math.min(CHUNK_BYTES, job.start - offset), offset);
      if (bytesRead === 0) return failed;
      offset += bytesRead;
      hash.update(buffer.subarray(0, bytesRead));
    }
    const header = Buffer.allocUnsafe(job.headerEnd);
    const { bytesRead } = await handle.read(header, 0, job.headerEnd, 0);
    if (bytesRead !== job.headerEnd || !reader.push(header)) return failed;
    for (let offset = job.start; ; ) {
      const { bytesRead: read } = await handle.read(buffer, 0, CHUNK_BYTES, offset);
      if (read === 0) break;
      offset += read;
      const chunk = buffer.subarray(0, read);
      hash?.update(chunk);
      if (!reader.push(chunk)) return failed;
    }
  } finally {
    await handle.close();
  }
  return reader.finishSource().ok ? { ok: true, sha256: hash === null ? null : hash.digest('hex') } : failed;
}

const port = parentPort;
if (port !== null) {
  port.once('message', (job: PartJob) => {
    const post = (message: PartMessage, transfer: ArrayBuffer[]) => port.postMessage(message, transfer);
    readPart(job, post).then(
      ({ ok, sha256 }) => post({ kind: 'end', ok, sha256 }, []),
      () => post({ kind: 'end', ok: false, sha256: null }, []),
    );
  });
}
