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

  it('returns the report of a full fit that ends it (separation) without waiting on the started worker', async () => {
    // Every hit above 100 ms, every miss below: latency separates the outcomes, so there are no refits.
    const lines = ['player,latency_ms,scale,difficulty,hit'];
    for (let i = 0; i < 400; i += 1) lines.push(`p${i % 20},${20 + (i % 200)},${[1, 1.5][i % 2]},${i % 3 === 0 ? 'hard' : 'easy'},${20 + (i % 200) > 100 ? 1 : 0}`);
    const separated = groupTrials(unwrap(parseTrialsCsv(`${lines.join('\n')}\n`, 'separated.csv')));
    const started = performance.now();
    const threaded = await fitModelOnThreads(separated, options, 2, { workerUrl: builtWorker, callerTakesRefits: false });
    expect(threaded.status).toBe('separation');
    expect(threaded).toEqual(fitModel(separated, options));
    expect(performance.now() - started).toBeLessThan(20_000);
  });
});
