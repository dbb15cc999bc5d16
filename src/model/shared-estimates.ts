/**
 * The folds' starting values, handed to fold refits that may already be
 * waiting: `fit-model-threads.ts` starts its worker before the full fit, so
 * that the worker's start and the jobs that need nothing of that fit (the
 * least-squares baseline, the likelihood-ratio refits) overlap it, and a
 * fold's fit, which starts from the full estimates (`refit-starts.ts`),
 * waits here until the calling thread has published them.
 *
 * Layout: one Float64Array (the full estimates, then each fold's start) and
 * one Int32Array: [0] the state (0 pending, 1 published, 2 abandoned: the
 * full fit ended the report), then per fold 1 when it has a start of its
 * own. On a SharedArrayBuffer when threads share them (a plain buffer
 * otherwise: a page without cross-origin isolation has no SharedArrayBuffer,
 * and one thread publishes before it runs any job). The values are written
 * before the state is stored, and read after it is loaded, with Atomics: a
 * reader that sees the state sees the values.
 */

export interface SharedEstimates {
  readonly columns: number;
  readonly values: Float64Array;
  readonly state: Int32Array;
}

const PENDING = 0;
const PUBLISHED = 1;
const ABANDONED = 2;

/** Room for `columns` estimates and `folds` starts, shared between threads when `shared`. */
export function sharedEstimates(columns: number, folds: number, shared: boolean): SharedEstimates {
  const make = (bytes: number) => (shared ? new SharedArrayBuffer(bytes) : new ArrayBuffer(bytes));
  return { columns, values: new Float64Array(make((1 + folds) * columns * 8)), state: new Int32Array(make((1 + folds) * 4)) };
}

function signal(shared: SharedEstimates, value: number): void {
  Atomics.store(shared.state, 0, value);
  if (shared.state.buffer instanceof SharedArrayBuffer) Atomics.notify(shared.state, 0);
}

/** Publish the full estimates and each fold's own start (null: that fold starts from the full estimates). */
export function publishFoldStarts(shared: SharedEstimates, full: Float64Array, starts: readonly (Float64Array | null)[]): void {
  const k = shared.columns;
  shared.values.set(full.subarray(0, k), 0);
  starts.forEach((start, fold) => {
    if (start !== null) shared.values.set(start.subarray(0, k), (1 + fold) * k);
    Atomics.store(shared.state, 1 + fold, start === null ? 0 : 1);
  });
  signal(shared, PUBLISHED);
}

/** No starts will come (the full fit ended the report): waiting jobs return at once. */
export function abandonEstimates(shared: SharedEstimates): void {
  signal(shared, ABANDONED);
}

/** Fold `fold`'s start, waiting for it on a shared buffer: its own, else the full estimates; null when abandoned. */
export function awaitFoldStart(shared: SharedEstimates, fold: number): Float64Array | null {
  let state = Atomics.load(shared.state, 0);
  while (state === PENDING) {
    if (!(shared.state.buffer instanceof SharedArrayBuffer)) throw new Error('the full fit publishes its estimates before its refits run on one thread');
    Atomics.wait(shared.state, 0, PENDING);
    state = Atomics.load(shared.state, 0);
  }
  if (state === ABANDONED) return null;
  const k = shared.columns;
  const at = Atomics.load(shared.state, 1 + fold) === 1 ? (1 + fold) * k : 0;
  return shared.values.slice(at, at + k);
}
