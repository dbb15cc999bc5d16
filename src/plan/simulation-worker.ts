/**
 * The size study's worker thread: receives batches of studies
 * (`{ id, participants, repetitions, first, count }`), simulates and fits
 * them (`simulate-studies.ts`) and sends their records back. Loaded only by
 * `run-studies.ts` when a size study runs, never by the library's entry point.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { type SimulationPlan, simulateStudies } from './simulate-studies.js';

export interface StudyBatch {
  readonly id: number;
  readonly participants: number;
  readonly repetitions: number;
  readonly first: number;
  readonly count: number;
}

const plan = workerData as SimulationPlan;
parentPort?.on('message', (batch: StudyBatch) => {
  const records = simulateStudies(plan, batch.participants, batch.repetitions, batch.first, batch.count);
  parentPort?.postMessage({ id: batch.id, records }, [records.buffer as ArrayBuffer]);
});
