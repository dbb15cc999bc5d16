/**
 * Independent jobs shared between the calling thread and worker threads:
 * every thread claims the next job from one shared counter (an atomic add on
 * a SharedArrayBuffer), so a thread that finishes early takes more, and the
 * results come back in the jobs' order whoever ran them. Used where each job
 * is a whole fit (the fit's refits, `model/fit-model-threads.ts`; the field
 * check's fits, `field/check-field-threads.ts`): a job computes exactly what
 * it computes on one thread, so the answer never depends on the threads.
 *
 * A worker script calls {@link serveJobs}; the caller {@link runJobsOnThreads},
 * which starts the workers, or takes workers started earlier ({@link startWorkers}:
 * while the caller reads its input, the workers load their scripts). Workers
 * receive the shared context by structured clone (a copy; a SharedArrayBuffer
 * is shared). Should a
 * worker not start or stop early, the jobs it did not finish run on the
 * calling thread; a job that throws on a worker is run again on the calling
 * thread, where it throws to the caller.
 */
import { Worker, parentPort } from 'node:worker_threads';

/** What a worker receives: the context every job shares, the jobs, the counter of claims. */
interface JobsData<C, J> {
  readonly context: C;
  readonly jobs: readonly J[];
  /** One Int32 on a SharedArrayBuffer: the next job to claim. */
  readonly claims: Int32Array;
}

type WorkerMessage<R> = { readonly index: number; readonly result: R } | { readonly done: true };

/** A worker thread running a job script, and when it ended (it stopped, failed to start or failed). */
interface JobWorker {
  readonly worker: Worker;
  readonly ended: Promise<void>;
}

/**
 * Worker threads started ahead of their jobs: each loads its script at once (a tenth of a second
 * or more) and waits for {@link runJobsOnThreads} to send the jobs, so a caller can start them
 * before it reads its input. Hand them to exactly one run, which stops them; otherwise call
 * `stop`. They never keep the process alive on their own.
 */
export interface StartedWorkers {
  readonly started: readonly JobWorker[];
  stop(): Promise<void>;
}

/** Start `count` workers of the script at `url` (none where a thread cannot start). */
export function startWorkers(url: URL, count: number): StartedWorkers {
  const started: JobWorker[] = [];
  for (let index = 0; index < count; index += 1) {
    let worker: Worker;
    try {
      worker = new Worker(url);
    } catch {
      break;
    }
    worker.unref();
    // Listened for from the start (and kept): a script that fails to load must not throw in this thread.
    const ended = new Promise<void>((resolve) => {
      worker.on('error', () => resolve());
      worker.once('exit', () => resolve());
    });
    started.push({ worker, ended });
  }
  return { started, stop: async () => void (await Promise.all(started.map(({ worker }) => worker.terminate()))) };
}

export interface JobThreads {
  /** Threads in all, the calling one included (1: no worker). */
  readonly threads: number;
  readonly workerUrl: URL;
  /** Workers of `workerUrl` already started ({@link startWorkers}); this run uses and stops them (and starts none). */
  readonly workers?: StartedWorkers;
  /** Whether the calling thread claims jobs too (default true; tests leave every job to the workers). */
  readonly callerTakesJobs?: boolean;
  /**
   * Work of the calling thread's own, done once the workers are started and before it claims
   * jobs; `false` calls the jobs off (the calling thread found they cannot run): no thread claims
   * another, the workers are stopped, and the jobs no thread finished are left to `run` here.
   */
  readonly callerFirst?: () => boolean | void;
  /** Called on the calling thread when a worker's result arrives. */
  readonly onWorkerResult?: (index: number) => void;
}

/** Run `jobs`, each by `run` here or by the worker script elsewhere; the results in the jobs' order. */
export async function runJobsOnThreads<C, J, R>(context: C, jobs: readonly J[], run: (job: J) => R, options: JobThreads): Promise<R[]> {
  const results: (R | undefined)[] = Array.from({ length: jobs.length }, () => undefined);
  const claims = new Int32Array(new SharedArrayBuffer(4));
  const data: JobsData<C, J> = { context, jobs, claims };
  const pool = options.workers ?? startWorkers(options.workerUrl, Math.min(options.threads - 1, jobs.length));
  const settled: Promise<void>[] = [];
  try {
    for (const { worker, ended } of pool.started) {
      // Until it ends, a worker with jobs keeps the process alive (this thread awaits its results).
      worker.ref();
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
          void ended.then(resolve);
        }),
      );
      try {
        worker.postMessage(data);
      } catch {
        // A worker that cannot take the data (it ended) claims nothing.
      }
    }
    if (options.callerFirst?.() === false) {
      Atomics.store(claims, 0, jobs.length);
      settled.length = 0;
    }
    const claimHere = options.callerTakesJobs !== false || pool.started.length === 0;
    for (let index = claimHere ? Atomics.add(claims, 0, 1) : jobs.length; index < jobs.length; index = Atomics.add(claims, 0, 1)) {
      results[index] = run(jobs[index] as J);
    }
    await Promise.all(settled);
  } finally {
    await pool.stop();
  }
  return results.map((result, index) => result ?? run(jobs[index] as J));
}

/**
 * The body of a worker script: once the jobs arrive, `prepare` receives the shared context and
 * gives the function that runs one job; jobs are claimed until none is left, each result posted
 * back as it is done.
 */
export function serveJobs<C, J, R>(prepare: (context: C) => (job: J) => R): void {
  parentPort?.once('message', ({ context, jobs, claims }: JobsData<C, J>) => {
    const run = prepare(context);
    for (let index = Atomics.add(claims, 0, 1); index < jobs.length; index = Atomics.add(claims, 0, 1)) {
      try {
        parentPort?.postMessage({ index, result: run(jobs[index] as J) });
      } catch {
        // No result: the calling thread runs this job again and meets the error itself.
      }
    }
    parentPort?.postMessage({ done: true });
  });
}
