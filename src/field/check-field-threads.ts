/**
 * `checkFieldOnThreads(input, model, options, threads)`: {@link checkField}
 * with its calibration fits (calibration in the large, the slope, the refit)
 * on worker threads (`calibration-worker.ts`, through `job-threads.ts`) while
 * the calling thread checks the input and runs the band fit, then whatever
 * calibration fit is left. The workers start at once: each receives the live
 * groups and the model's document by structured clone (a copy) and joins and
 * designs them itself, by the same code as the calling thread, so that the
 * refit, the longest fit, need not wait for the calling thread's join. Each
 * fit gives the same result on any thread, so the report is the same, bit for
 * bit, for any number of threads (tests compare them). Input the calling
 * thread refuses ends the workers and returns its issues. CLI only: the
 * library's entry point never starts a thread.
 */
import type { Trials } from '../formats/trials-types.js';
import { type Result, fail } from '../issues.js';
import { type StartedWorkers, runJobsOnThreads, startWorkers } from '../job-threads.js';
import { groupTrials } from '../model/collapse.js';
import type { GroupedTrials } from '../model/collapsed-trials.js';
import type { CompiledModel } from '../model/compile.js';
import type { BandRates } from './band-rates.js';
import { CALIBRATION_JOBS, type CalibrationFit, type CalibrationJob, type CalibrationSource, runCalibrationFit } from './calibration-fits.js';
import { type FieldCheckOptions, type FieldCheckStage, beginFieldCheck, checkField } from './check-field.js';
import type { FieldCheckReport } from './field-types.js';

/** The worker script: beside this module, as tsc emits it and as the CLI bundle places it. */
export const CALIBRATION_WORKER_URL = new URL('./calibration-worker.js', import.meta.url);

/**
 * The workers of a check on `threads` threads in all, started ahead of it (before the telemetry
 * is read: they load their script meanwhile); null for one thread. Pass them to
 * {@link checkFieldOnThreads}, or stop them.
 */
export function startCalibrationWorkers(threads: number): StartedWorkers | null {
  return threads <= 1 ? null : startWorkers(CALIBRATION_WORKER_URL, Math.min(threads - 1, CALIBRATION_JOBS.length));
}

/** Check with the calibration fits on `threads` threads in all (1: {@link checkField} itself); `workers` started ahead (it stops them). */
export async function checkFieldOnThreads(
  input: GroupedTrials | Trials,
  model: CompiledModel,
  options: FieldCheckOptions,
  threads: number,
  {
    workerUrl = CALIBRATION_WORKER_URL,
    callerTakesFits = true,
    onWorkerFit,
    workers,
  }: { readonly workerUrl?: URL; readonly callerTakesFits?: boolean; readonly onWorkerFit?: (job: CalibrationJob) => void; readonly workers?: StartedWorkers | null } = {},
): Promise<Result<FieldCheckReport>> {
  if (threads <= 1) {
    await workers?.stop();
    return checkField(input, model, options);
  }
  const trials = 'groups' in input ? input : groupTrials(input);
  const source: CalibrationSource = { trials, model: model.source };
  let stage: Result<FieldCheckStage> | null = null;
  let rates: BandRates | null = null;
  const fits = await runJobsOnThreads(
    source,
    CALIBRATION_JOBS,
    (job): CalibrationFit | null => (stage?.ok === true ? runCalibrationFit(stage.value.calibration, job) : null),
    {
      threads,
      workerUrl,
      ...(workers === undefined || workers === null ? {} : { workers }),
      callerTakesJobs: callerTakesFits,
      ...(onWorkerFit === undefined ? {} : { onWorkerResult: (index: number) => onWorkerFit(CALIBRATION_JOBS[index] as CalibrationJob) }),
      callerFirst: () => {
        stage = beginFieldCheck(trials, model, options);
        if (stage.ok) rates = stage.value.bandRates();
        // Refused input: the fits are called off and the workers stopped.
        return stage.ok;
      },
    },
  );
  // callerFirst always ran by now (the casts only tell the type checker, which cannot see into the closure).
  const begun = (stage as Result<FieldCheckStage> | null) ?? beginFieldCheck(trials, model, options);
  if (!begun.ok) return fail(begun.issues);
  if (fits.some((fit) => fit === null)) throw new Error('field check: a calibration fit gave no result');
  return begun.value.finish((rates as BandRates | null) ?? begun.value.bandRates(), fits as CalibrationFit[]);
}
