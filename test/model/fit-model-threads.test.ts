import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { parseTrialsCsv } from '../../src/formats/trials-csv.js';
import { unwrap } from '../../src/issues.js';
import { groupTrials } from '../../src/model/collapse.js';
import { fitModel } from '../../src/model/fit-model.js';
import { fitModelOnThreads } from '../../src/model/fit-model-threads.js';
import { MATCHES, ROOT } from '../helpers/demo.js';

// The demo playtest (invented data): the check is that threads change nothing, not the numbers themselves.
const trials = groupTrials(unwrap(parseTrialsCsv(readFileSync(join(MATCHES, 'playtest-trials.csv'), 'utf8'), 'playtest-trials.csv')));
const options = { folds: 4, seed: 3 } as const;
// The worker as tsc emits it (the suite's global setup builds dist/ first); the source tree has no .js worker.
const builtWorker = new URL(`file://${join(ROOT, 'dist', 'model', 'refit-worker.js')}`);

describe('fitModelOnThreads()', () => {
  const sequential = fitModel(trials, options);

  it('gives the report fitModel gives, with every refit run by a real worker thread', async () => {
    const stages: string[] = [];
    const threaded = await fitModelOnThreads(trials, { ...options, onProgress: (stage) => stages.push(stage) }, 2, { workerUrl: builtWorker, callerTakesRefits: false });
    // 3 likelihood-ratio refits, the baseline and 4 folds, each reported done by the worker.
    expect(stages.filter((stage) => stage.endsWith(': done on a worker thread'))).toHaveLength(8);
    expect(threaded).toEqual(sequential);
    expect(threaded.likelihood_ratio_tests.map((test) => test.factor)).toEqual(['latency', 'scale', 'difficulty']);
    expect(threaded.cross_validation?.fold_results).toHaveLength(4);
    expect(threaded.baseline).not.toBeNull();
  });

  it('gives the same report with more threads than refits, and with one thread', async () => {
    expect(await fitModelOnThreads(trials, options, 12, { workerUrl: builtWorker })).toEqual(sequential);
    expect(await fitModelOnThreads(trials, options, 1, { workerUrl: builtWorker })).toEqual(sequential);
  });

  it('runs every refit on the calling thread when the worker cannot start', async () => {
    const missing = new URL(`file://${join(ROOT, 'dist', 'model', 'no-such-worker.js')}`);
    const stages: string[] = [];
    expect(await fitModelOnThreads(trials, { ...options, onProgress: (stage) => stages.push(stage) }, 2, { workerUrl: missing, callerTakesRefits: false })).toEqual(sequential);
    expect(stages.some((stage) => stage.endsWith('on a worker thread'))).toBe(false);
  });
});
