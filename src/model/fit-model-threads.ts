/**
 * `fitModelOnThreads(trials, options, threads)`: {@link fitModel} with the
 * refits of its report (the likelihood-ratio refits, the folds' fits, the
 * least-squares baseline) shared between the calling thread and
 * `threads - 1` worker threads (`refit-worker.ts`, through
 * `job-threads.ts`). Each job gives the same result on any thread and the
 * report places them in its own order, so the report is the same, bit for
 * bit, for any number of threads (tests compare them).
 *
 * The workers start before the full fit, so that their start (the prepared
 * rows by structured clone, their own designs), the least-squares baseline
 * and the reduced models overlap it; a fold waits for the calling thread to
 * publish its start (`shared-estimates.ts`).
 * The copy is about 50 MB on a million distinct rows, so memory grows by
 * that and the workers' fits' arrays while they run. CLI only: the
 * library's entry point never starts a thread.
 */
import { runJobsOnThreads } from '../job-threads.js';
import type { Trials } from '../formats/trials-types.js';
import type { GroupedTrials } from './collapsed-trials.js';
import { beginFitModel, fitModel } from './fit-model.js';
import type { FitModelOptions, FitReport } from './fit-report-types.js';
import { refitLabel } from './refit-jobs.js';

/** The worker script: beside this module, as tsc emits it and as the CLI bundle places it. */
export const REFIT_WORKER_URL = new URL('./refit-worker.js', import.meta.url);

/** How the refits run: the worker script, and whether the calling thread takes refits too (tests leave them all to the workers). */
export interface RefitThreads {
  readonly workerUrl?: URL;
  readonly callerTakesRefits?: boolean;
}

/** Fit with the refits on `threads` threads in all (1: {@link fitModel} itself). */
export async function fitModelOnThreads(
  trials: Trials | GroupedTrials,
  options: FitModelOptions,
  threads: number,
  { workerUrl = REFIT_WORKER_URL, callerTakesRefits = true }: RefitThreads = {},
): Promise<FitReport> {
  if (threads <= 1) return fitModel(trials, options);
  const stage = beginFitModel(trials, options, { shared: true });
  if (stage.done) return stage.report;
  const { context, jobs } = stage;
  const folds = context.assignment?.folds ?? 0;
  // The workers start before the full fit: their start, the baseline and the reduced models overlap
  // it, and the folds wait for their starts (shared-estimates.ts).
  let ended: FitReport | null = null;
  const results = await runJobsOnThreads(context, jobs, stage.run, {
    threads,
    workerUrl,
    callerTakesJobs: callerTakesRefits,
    callerFirst: () => {
      ended = stage.fitFull();
    },
    onWorkerResult: (index) => options.onProgress?.(`${refitLabel(jobs[index] as (typeof jobs)[number], folds)}: done on a worker thread`),
  });
  return ended ?? stage.finish(results);
}
