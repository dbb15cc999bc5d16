/**
 * The full fit's estimates and the folds' starting values, handed to refits
 * that may already be running: `fit-model-threads.ts` starts its worker
 * before the full fit, so that the worker's start and the jobs that need no
 * estimate (the least-squares baseline) overlap the fit, and a job that needs
 * them waits here until the calling thread has published them.
 *
 * Layout: one Float64Array (the coefficients, the covariance row-major,
 * -2 x the Bernoulli log-likelihood, then each fold's start) and one
 * Int32Array of states: [0] the full estimates, [1] the folds' starts
 * (0 pending, 1 published, 2 abandoned: the full fit ended the report), then
 * per fold 1 when it has a start. On a SharedArrayBuffer when threads share
 * them (a plain buffer otherwise: a page without cross-origin isolation has
 * no SharedArrayBuffer, and one thread publishes before it runs any job).
 * The values are written before the state is stored, and read after it is
 * loaded, with Atomics: a reader that sees a state sees the values.
 */
import type { FullEstimates } from './likelihood-ratio-tests.js';

export interface SharedEstimates {
  readonly columns: number;
  readonly folds: number;
  readonly values: Float64Array;
  readonly state: Int32Array;
}

const PENDING = 0;
const PUBLISHED = 1;
const ABANDONED = 2;

/** Room for `columns` coefficients and `folds` starts, shared between threads when `shared`. */
export function sharedEstimates(columns: number, folds: number, shared: boolean): SharedEstimates {
  const doubles = columns + columns * columns + 1 + folds * columns;
  const ints = 2 + folds;
  const make = (bytes: number) => (shared ? new SharedArrayBuffer(bytes) : new ArrayBuffer(bytes));
  return { columns, folds, values: new Float64Array(make(doubles * 8)), state: new Int32Array(make(ints * 4)) };
}

function signal(shared: SharedEstimates, index: number, value: number): void {
  Atomics.store(shared.state, index, value);
  if (shared.state.buffer instanceof SharedArrayBuffer) Atomics.notify(shared.state, index);
}

/** The state at `index` once it is no longer pending (waiting for it on a shared buffer). */
function settled(shared: SharedEstimates, index: number): number {
  for (;;) {
    const value = Atomics.load(shared.state, index);
    if (value !== PENDING) return value;
    if (!(shared.state.buffer instanceof SharedArrayBuffer)) throw new Error('the full fit publishes its estimates before its refits run on one thread');
    Atomics.wait(shared.state, index, PENDING);
  }
}

/** Publish the full fit's coefficients, covariance and Bernoulli deviance. */
export function publishFull(shared: SharedEstimates, full: Omit<FullEstimates, 'names'>): void {
  const k = shared.columns;
  shared.values.set(full.coefficients.subarray(0, k), 0);
  shared.values.set(full.covariance.subarray(0, k * k), k);
  shared.values[k + k * k] = full.bernoulliDeviance;
  signal(shared, 0, PUBLISHED);
}

/** Publish each fold's start (null: the fold starts from the full estimates). */
export function publishFoldStarts(shared: SharedEstimates, starts: readonly (Float64Array | null)[]): void {
  const k = shared.columns;
  const base = k + k * k + 1;
  starts.forEach((start, fold) => {
    if (start !== null) shared.values.set(start.subarray(0, k), base + fold * k);
    Atomics.store(shared.state, 2 + fold, start === null ? 0 : 1);
  });
  signal(shared, 1, PUBLISHED);
}

/** No estimates will come (the full fit ended the report): waiting jobs return at once. */
export function abandonEstimates(shared: SharedEstimates): void {
  signal(shared, 0, ABANDONED);
  signal(shared, 1, ABANDONED);
}

/** The full estimates (waiting for them), or null when abandoned. */
export function awaitFull(shared: SharedEstimates, names: readonly string[]): FullEstimates | null {
  if (settled(shared, 0) === ABANDONED) return null;
  const k = shared.columns;
  return {
    names,
    coefficients: shared.values.slice(0, k),
    covariance: shared.values.slice(k, k + k * k),
    bernoulliDeviance: shared.values[k + k * k] as number,
  };
}

/** Fold `fold`'s start (waiting for the starts): its own, else the full estimates; null when abandoned. */
export function awaitFoldStart(shared: SharedEstimates, fold: number): Float64Array | null {
  if (settled(shared, 1) === ABANDONED) return null;
  const k = shared.columns;
  if (Atomics.load(shared.state, 2 + fold) === 1) {
    const base = k + k * k + 1 + fold * k;
    return shared.values.slice(base, base + k);
  }
  return shared.values.slice(0, k);
}
