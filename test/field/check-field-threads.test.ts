import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { checkField } from '../../src/field/check-field.js';
import { checkFieldOnThreads } from '../../src/field/check-field-threads.js';
import { startWorkers } from '../../src/job-threads.js';
import { readGroupedTrialsFile } from '../../src/io/read-trials.js';
import { ROOT } from '../helpers/demo.js';
import { fieldFixture } from '../helpers/field-fixtures.js';
import { fixtureModel } from './reference-fixture.js';

// The R reference fixture's live rows (test/fixtures/field/); the check here is that threads change nothing.
// The worker as tsc emits it (the suite's global setup builds dist/ first); the source tree has no .js worker.
const builtWorker = new URL(`file://${join(ROOT, 'dist', 'field', 'calibration-worker.js')}`);

describe('checkFieldOnThreads()', () => {
  for (const file of ['live-attempts.csv', 'live-rounds.csv'] as const) {
    it(`gives checkField's report on ${file} with every calibration fit on a real worker thread, with both, and with none`, async () => {
      const read = await readGroupedTrialsFile(fieldFixture(file));
      if (!read.ok) throw new Error(read.issues.map((issue) => issue.message).join('; '));
      const model = fixtureModel();
      const sequential = checkField(read.value, model);
      expect(sequential.ok).toBe(true);
      const onWorker: string[] = [];
      expect(await checkFieldOnThreads(read.value, model, {}, 2, { workerUrl: builtWorker, callerTakesFits: false, onWorkerFit: (job) => onWorker.push(job) })).toEqual(sequential);
      expect(onWorker.sort()).toEqual(['in_the_large', 'refit', 'slope']);
      expect(await checkFieldOnThreads(read.value, model, {}, 2, { workerUrl: builtWorker })).toEqual(sequential);
      expect(await checkFieldOnThreads(read.value, model, {}, 1, { workerUrl: builtWorker })).toEqual(sequential);
      const missing = new URL(`file://${join(ROOT, 'dist', 'field', 'no-such-worker.js')}`);
      const none: string[] = [];
      expect(await checkFieldOnThreads(read.value, model, {}, 2, { workerUrl: missing, callerTakesFits: false, onWorkerFit: (job) => none.push(job) })).toEqual(sequential);
      expect(none).toEqual([]);
    });
  }

  it('takes workers started before the read (they set the fits up from the live groups), and stops them', async () => {
    const read = await readGroupedTrialsFile(fieldFixture('live-attempts.csv'));
    if (!read.ok) throw new Error(read.issues.map((issue) => issue.message).join('; '));
    const model = fixtureModel();
    const workers = startWorkers(builtWorker, 2);
    const onWorker: string[] = [];
    expect(await checkFieldOnThreads(read.value, model, {}, 3, { workerUrl: builtWorker, workers, callerTakesFits: false, onWorkerFit: (job) => onWorker.push(job) })).toEqual(checkField(read.value, model));
    expect(onWorker.sort()).toEqual(['in_the_large', 'refit', 'slope']);
    await Promise.all(workers.started.map(({ ended }) => ended));
  });

  it('returns the issues of input the calling thread refuses, as checkField does, and stops the workers', async () => {
    const read = await readGroupedTrialsFile(fieldFixture('live-attempts.csv'));
    if (!read.ok) throw new Error(read.issues.map((issue) => issue.message).join('; '));
    const model = fixtureModel();
    const workers = startWorkers(builtWorker, 1);
    const refused = await checkFieldOnThreads(read.value, model, { margin: 0.7 }, 2, { workerUrl: builtWorker, workers });
    expect(refused).toEqual(checkField(read.value, model, { margin: 0.7 }));
    expect(refused.ok).toBe(false);
    await Promise.all(workers.started.map(({ ended }) => ended));
  });
});
