/**
 * The folds' starts handed to fold refits already waiting on another thread:
 * a real worker thread waits for them (Atomics.wait) and reads exactly what
 * the calling thread published, or null once abandoned.
 */
import { join } from 'node:path';
import { Worker } from 'node:worker_threads';
import { describe, expect, it } from 'vitest';
import { abandonEstimates, awaitFoldStart, publishFoldStarts, sharedEstimates } from '../../src/model/shared-estimates.js';
import { ROOT } from '../helpers/demo.js';

// A worker that imports the built module (the suite's global setup builds dist/ first), waits, and posts what it read.
const workerCode = `
const { parentPort, workerData } = require('node:worker_threads');
import(${JSON.stringify(`file://${join(ROOT, 'dist', 'model', 'shared-estimates.js')}`)}).then(({ awaitFoldStart }) => {
  parentPort.postMessage('waiting');
  const starts = [0, 1].map((fold) => awaitFoldStart(workerData, fold));
  parentPort.postMessage(starts.map((start) => (start === null ? null : [...start])));
});
`;

function readOnWorker(shared: ReturnType<typeof sharedEstimates>, act: () => void): Promise<unknown> {
  return new Promise((resolve, reject) => {
    const worker = new Worker(workerCode, { eval: true, workerData: shared });
    worker.on('message', (message) => {
      if (message === 'waiting') setTimeout(act, 50);
      else {
        resolve(message);
        void worker.terminate();
      }
    });
    worker.on('error', reject);
  });
}

describe('shared fold starts', () => {
  it('give a waiting worker exactly the published starts (a fold without its own takes the full estimates)', async () => {
    const shared = sharedEstimates(2, 2, true);
    const read = await readOnWorker(shared, () => publishFoldStarts(shared, Float64Array.of(0.1, -2.5e-3), [Float64Array.of(0.11, -2.6e-3), null]));
    expect(read).toEqual([
      [0.11, -2.6e-3],
      [0.1, -2.5e-3],
    ]);
  });

  it('release a waiting worker with nothing once abandoned', async () => {
    const shared = sharedEstimates(2, 2, true);
    expect(await readOnWorker(shared, () => abandonEstimates(shared))).toEqual([null, null]);
  });

  it('on one thread, are read after they are published, and refuse to be awaited before', () => {
    const local = sharedEstimates(1, 1, false);
    expect(local.values.buffer).not.toBeInstanceOf(SharedArrayBuffer);
    expect(() => awaitFoldStart(local, 0)).toThrow(/publishes its estimates before/);
    publishFoldStarts(local, Float64Array.of(2), [null]);
    expect(awaitFoldStart(local, 0)).toEqual(Float64Array.of(2));
  });
});
