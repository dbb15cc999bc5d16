/**
 * `checkFieldOnThreads(input, model, options, threads)`: {@link checkField}
 * with its calibration fits (calibration in the large, the slope, the refit)
 * on worker threads (`calibration-worker.ts`, through `job-threads.ts`) while
 * the calling thread runs the band fit, then whatever calibration fit is left.
 * Each fit gives the same result on any thread, so the report is the same,
 * bit for bit, for any number of threads (tests compare them). The workers
 * receive the live rows by structured clone (a copy). CLI only: the
 * library's entry point never starts a thread.
 */
import type { Trials } from '../formats/trials-types.js';
import type { Result } from '../issues.js';
import { runJobsOnThreads } from '../job-threads.js';
import type { GroupedTrials } from '../model/collapsed-trials.js';
import type { CompiledModel } from '../model/compile.js';
import type { BandRates } from './band-rates.js';
import { CALIBRATION_JOBS, type CalibrationJob, runCalibrationFit } from './calibration-fits.js';
import { type FieldCheckOptions, beginFieldCheck, checkField } from './check-field.js';
import type { FieldCheckReport } from './field-types.js';

/** The worker script: beside this module, as tsc emits it and as the CLI bundle places it. */
export const CALIBRATION_WORKER_URL = new URL('./calibration-worker.js', import.meta.url);

/** Check with the calibration fits on `threads` threads in all (1: {@link checkField} itself). */
export async function checkFieldOnThreads(
  input: GroupedTrials | Trials,
  model: CompiledModel,
  options: FieldCheckOptions,
  threads: number,
  {
    workerUrl = CALIBRATION_WORKER_URL,
    callerTakesFits = true,
    onWorkerFit,
  }: { readonly workerUrl?: URL; readonly callerTakesFits?: boolean; readonly onWorkerFit?: (job: CalibrationJob) => void } = {},
): Promise<Result<FieldCheckReport>> {
  if (threads <= 1) return checkField(input, model, options);
  const stage = beginFieldCheck(input, model, options);
  if (!stage.ok) return stage;
  const { calibration } = stage.value;
  let rates: BandRates | null = null;
  const fits = await runJobsOnThreads(calibration, CALIBRATION_JOBS, (job) => runCalibrationFit(calibration, job), {
    threads,
    workerUrl,
    callerTakesJobs: callerTakesFits,
    ...(onWorkerFit === undefined ? {} : { onWorkerResult: (index: number) => onWorkerFit(CALIBRATION_JOBS[index] as CalibrationJob) }),
    callerFirst: () => {
      rates = stage.value.bandRates();
    },
  });
  // callerFirst always ran by now; the fallback only satisfies the type checker (rates is set in a closure).
  return stage.value.finish(rates ?? stage.value.bandRates(), fits);
}
