/**
 * Independent jobs shared between the calling thread and worker threads:
 * every thread claims the next job from one shared counter (an atomic add on
 * a SharedArrayBuffer), so a thread that finishes early takes more, and the
 * results come back in the jobs' order whoever ran them. Used where each job
 * is a whole fit (the fit's refits, `model/fit-model-threads.ts`; the field
 * check's fits, `field/check-field-threads.ts`): a job computes exactly what
 * it computes on one thread, so the answer never depends on the threads.
 *
 * A worker script calls {@link serveJobs}; the caller {@link runJobsOnThreads}.
 * Workers receive the shared context by structured clone (a copy). Should a
 * worker not start or stop early, the jobs it did not finish run on the
 * calling thread; a job that throws on a worker is run again on the calling
 * thread, where it throws to the caller.
 */
import { Worker, parentPort, workerData } from 'node:worker_threads';

/** What a worker receives: the context every job shares, the jobs, the counter of claims. */
interface JobsData<C, J> {
  readonly context: C;
  readonly jobs: readonly J[];
  /** One Int32 on a SharedArrayBuffer: the next job to claim. */
  readonly claims: Int32Array;
}

type WorkerMessage<R> = { readonly index: number; readonly result: R } | { readonly done: true };

export interface JobThreads {
  /** Threads in all, the calling one included (1: no worker). */
  readonly threads: number;
  readonly workerUrl: URL;
  /** Whether the calling thread claims jobs too (default true; tests leave every job to the workers). */
  readonly callerTakesJobs?: boolean;
  /** Work of the calling thread's own, done once the workers are started and before it claims jobs. */
  readonly callerFirst?: () => void;
  /** Called on the calling thread when a worker's result arrives. */
  readonly onWorkerResult?: (index: number) => void;
}

/** Run `jobs`, each by `run` here or by the worker script elsewhere; the results in the jobs' order. */
export async function runJobsOnThreads<C, J, R>(context: C, jobs: readonly J[], run: (job: J) => R, options: JobThreads): Promise<R[]> {
  const results: (R | undefined)[] = Array.from({ length: jobs.length }, () => undefined);
  const claims = new Int32Array(new SharedArrayBuffer(4));
  const data: JobsData<C, J> = { context, jobs, claims };
  const workers: Worker[] = [];
  const settled: Promise<void>[] = [];
  for (let count = 0; count < Math.min(options.threads - 1, jobs.length); count += 1) {
    let worker: Worker;
    try {
      worker = new Worker(options.workerUrl, { workerData: data });
    } catch {
      break;
    }
    workers.push(worker);
    settled.push(
      new Promise<void>((resolve) => {
        worker.on('message', (message: WorkerMessage<R>) => {
          if ('done' in message) resolve();
          else {
            results[message.index] = message.result;
            options.onWorkerResult?.(message.index);
          }
        });
        // A worker that fails or stops leaves its unfinished jobs to this thread (below).
        worker.on('error', () => resolve());
        worker.on('exit', () => resolve());
      }),
    );
  }
  try {
    options.callerFirst?.();
    const claimHere = options.callerTakesJobs !== false || workers.length === 0;
    for (let index = claimHere ? Atomics.add(claims, 0, 1) : jobs.length; index < jobs.length; index = Atomics.add(claims, 0, 1)) {
      results[index] = run(jobs[index] as J);
    }
    await Promise.all(settled);
  } finally {
    await Promise.all(workers.map((worker) => worker.terminate()));
  }
  return results.map((result, index) => result ?? run(jobs[index] as J));
}

/**
 * The body of a worker script: `prepare` receives the shared context once
 * and gives the function that runs one job; jobs are claimed until none is
 * left, each result posted back as it is done.
 */
export function serveJobs<C, J, R>(prepare: (context: C) => (job: J) => R): void {
  const { context, jobs, claims } = workerData as JobsData<C, J>;
  const run = prepare(context);
  for (let index = Atomics.add(claims, 0, 1); index < jobs.length; index = Atomics.add(claims, 0, 1)) {
    try {
      parentPort?.postMessage({ index, result: run(jobs[index] as J) });
    } catch {
      // No result: the calling thread runs this job again and meets the error itself.
    }
  }
  parentPort?.postMessage({ done: true });
}
