/**
 * Running a size study's simulations: every size's studies cut into batches,
 * handed to `threads` worker threads (`simulation-worker.ts`) as each becomes
 * free, and each batch's records put back at its studies' places. A study's
 * result depends only on the plan, its size and its index (`studySeed`), so
 * the records, and everything computed from them, are the same for any
 * number of threads. `threads: 0` runs the batches on the calling thread
 * (for callers that cannot start a worker, such as tests run from source).
 *
 * Node only; not reachable from the library's entry point, so importing
 * lagparity never starts or loads a worker.
 */
import { Worker } from 'node:worker_threads';
import { RECORD_LENGTH, type SimulationPlan, simulateStudies } from './simulate-studies.js';
import type { StudyBatch } from './simulation-worker.js';

export interface SizeToRun {
  readonly participants: number;
  readonly repetitions: number;
}

export interface RunStudiesOptions {
  /** Worker threads; 0 runs on the calling thread. */
  readonly threads: number;
  /** Studies per batch (default 20): small enough to share the work out evenly, large enough that messages cost nothing. */
  readonly batch?: number;
  /** The worker script; default `simulation-worker.js` beside this module. */
  readonly workerUrl?: URL;
  /** Called after each batch with the studies done and the total. */
  readonly onProgress?: (done: number, total: number) => void;
}

/** The default worker script: beside this module, as tsc emits it and as the CLI bundle places it. */
export const SIMULATION_WORKER_URL = new URL('./simulation-worker.js', import.meta.url);

function batchesOf(sizes: readonly SizeToRun[], studies: number, batch: number): StudyBatch[] {
  const batches: StudyBatch[] = [];
  sizes.forEach((size, sizeIndex) => {
    for (let first = 0; first < studies; first += batch) {
      batches.push({ id: sizeIndex * Math.ceil(studies / batch) + first / batch, participants: size.participants, repetitions: size.repetitions, first, count: Math.min(batch, studies - first) });
    }
  });
  return batches;
}

/** Simulate `studies` studies at each size; the records of each size, in study order. */
export async function runStudies(plan: SimulationPlan, sizes: readonly SizeToRun[], studies: number, options: RunStudiesOptions): Promise<Float64Array[]> {
  const batchSize = options.batch ?? 20;
  const perSize = Math.ceil(studies / batchSize);
  const results = sizes.map(() => new Float64Array(studies * RECORD_LENGTH));
  const batches = batchesOf(sizes, studies, batchSize);
  const total = sizes.length * studies;
  let done = 0;
  const place = (batch: StudyBatch, records: Float64Array) => {
    (results[Math.floor(batch.id / perSize)] as Float64Array).set(records, batch.first * RECORD_LENGTH);
    done += batch.count;
    options.onProgress?.(done, total);
  };
  if (options.threads <= 0) {
    for (const batch of batches) place(batch, simulateStudies(plan, batch.participants, batch.repetitions, batch.first, batch.count));
    return results;
  }
  const workers = Array.from({ length: Math.min(options.threads, batches.length) }, () => new Worker(options.workerUrl ?? SIMULATION_WORKER_URL, { workerData: plan }));
  const byId = new Map(batches.map((batch) => [batch.id, batch]));
  let next = 0;
  try {
    await new Promise<void>((resolve, reject) => {
      let running = 0;
      const feed = (worker: Worker) => {
        const batch = batches[next];
        if (batch === undefined) {
          if (running === 0) resolve();
          return;
        }
        next += 1;
        running += 1;
        worker.postMessage(batch);
      };
      for (const worker of workers) {
        worker.on('message', (message: { id: number; records: Float64Array }) => {
          running -= 1;
          place(byId.get(message.id) as StudyBatch, message.records);
          feed(worker);
        });
        worker.on('error', reject);
        worker.on('exit', (code) => {
          if (code !== 0) reject(new Error(`a simulation worker stopped with exit code ${code}`));
        });
      }
      for (const worker of workers) feed(worker);
    });
  } finally {
    await Promise.all(workers.map((worker) => worker.terminate()));
  }
  return results;
}
