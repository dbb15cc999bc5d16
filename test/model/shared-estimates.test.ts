/**
 * The full estimates and the folds' starts handed to refits already running
 * on another thread: a real worker thread waits for them (Atomics.wait) and
 * reads exactly what the calling thread published, or null once abandoned.
 */
import { join } from 'node:path';
import { Worker } from 'node:worker_threads';
import { describe, expect, it } from 'vitest';
import { abandonEstimates, awaitFoldStart, awaitFull, publishFoldStarts, publishFull, sharedEstimates } from '../../src/model/shared-estimates.js';
import { ROOT } from '../helpers/demo.js';

// A worker that imports the built module (the suite's global setup builds dist/ first), waits, and posts what it read.
const workerCode = `
const { parentPort, workerData } = require('node:worker_threads');
import(${JSON.stringify(`file://${join(ROOT, 'dist', 'model', 'shared-estimates.js')}`)}).then(({ awaitFull, awaitFoldStart }) => {
  parentPort.postMessage('waiting');
  const full = awaitFull(workerData, ['a', 'b']);
  const starts = [0, 1].map((fold) => awaitFoldStart(workerData, fold));
  parentPort.postMessage({ full: full === null ? null : { ...full, coefficients: [...full.coefficients], covariance: [...full.covariance] }, starts: starts.map((start) => (start === null ? null : [...start])) });
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

describe('shared estimates', () => {
  it('give a waiting worker exactly the published estimates and starts (a fold without a start takes the full estimates)', async () => {
    const shared = sharedEstimates(2, 2, true);
    const read = await readOnWorker(shared, () => {
      publishFull(shared, { coefficients: Float64Array.of(0.1, -2.5e-3), covariance: Float64Array.of(4e-4, -1e-6, -1e-6, 9e-8), bernoulliDeviance: 1234.5 });
      publishFoldStarts(shared, [Float64Array.of(0.11, -2.6e-3), null]);
    });
    expect(read).toEqual({
      full: { names: ['a', 'b'], coefficients: [0.1, -2.5e-3], covariance: [4e-4, -1e-6, -1e-6, 9e-8], bernoulliDeviance: 1234.5 },
      starts: [[0.11, -2.6e-3], [0.1, -2.5e-3]],
    });
  });

  it('release a waiting worker with nothing once abandoned', async () => {
    const shared = sharedEstimates(2, 2, true);
    expect(await readOnWorker(shared, () => abandonEstimates(shared))).toEqual({ full: null, starts: [null, null] });
  });

  it('on one thread, are read after they are published, and refuse to be awaited before', () => {
    const local = sharedEstimates(1, 1, false);
    expect(local.values.buffer).not.toBeInstanceOf(SharedArrayBuffer);
    expect(() => awaitFull(local, ['a'])).toThrow(/publishes its estimates before/);
    publishFull(local, { coefficients: Float64Array.of(2), covariance: Float64Array.of(0.5), bernoulliDeviance: 10 });
    publishFoldStarts(local, [null]);
    expect(awaitFull(local, ['a'])?.coefficients).toEqual(Float64Array.of(2));
    expect(awaitFoldStart(local, 0)).toEqual(Float64Array.of(2));
  });
});
