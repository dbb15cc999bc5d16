/**
 * The columns of trial rows held while a file is read: typed arrays that
 * share one length and grow together, so a row is a store per column and one
 * length update, with no per-column object or capacity check.
 */

/** The first `length` entries of `array`: a view when it is at least 7/8 full (a well-sized column is never held twice), else a trimmed copy. */
export function filled<T extends Float64Array | Int32Array>(array: T, length: number): T {
  const view = array.subarray(0, length) as T;
  return length * 8 >= array.length * 7 ? view : (view.slice() as T);
}

export class RowBuffer {
  latency: Float64Array;
  scale: Float64Array;
  successes: Float64Array;
  attempts: Float64Array;
  /** Prior weights; empty without a weight column. */
  weight: Float64Array;
  /** Difficulty level codes. */
  difficulty: Int32Array;
  /** Player codes; empty without a player column. */
  player: Int32Array;
  /** Rows held: the first `length` entries of every column. */
  length = 0;
  private readonly hasWeight: boolean;
  private readonly hasPlayer: boolean;

  constructor(capacity: number, columns: { readonly weight: boolean; readonly player: boolean }) {
    const size = Math.max(16, capacity);
    this.hasWeight = columns.weight;
    this.hasPlayer = columns.player;
    this.latency = new Float64Array(size);
    this.scale = new Float64Array(size);
    this.successes = new Float64Array(size);
    this.attempts = new Float64Array(size);
    this.weight = new Float64Array(columns.weight ? size : 0);
    this.difficulty = new Int32Array(size);
    this.player = new Int32Array(columns.player ? size : 0);
  }

  /** Rows the columns hold before they must grow (or be emptied). */
  get capacity(): number {
    return this.latency.length;
  }

  /** Double every column, keeping the rows held. */
  grow(): void {
    const twice = <T extends Float64Array | Int32Array>(array: T, make: (size: number) => T): T => {
      if (array.length === 0) return array;
      const next = make(array.length * 2);
      next.set(array);
      return next;
    };
    this.latency = twice(this.latency, (size) => new Float64Array(size));
    this.scale = twice(this.scale, (size) => new Float64Array(size));
    this.successes = twice(this.successes, (size) => new Float64Array(size));
    this.attempts = twice(this.attempts, (size) => new Float64Array(size));
    this.weight = twice(this.weight, (size) => new Float64Array(size));
    this.difficulty = twice(this.difficulty, (size) => new Int32Array(size));
    this.player = twice(this.player, (size) => new Int32Array(size));
  }

  /** The columns of the rows held (views or trimmed copies, see {@link filled}); weight and player null when absent. */
  finish(): {
    latency: Float64Array;
    scale: Float64Array;
    successes: Float64Array;
    attempts: Float64Array;
    weight: Float64Array | null;
    difficulty: Int32Array;
    player: Int32Array | null;
  } {
    const length = this.length;
    return {
      latency: filled(this.latency, length),
      scale: filled(this.scale, length),
      successes: filled(this.successes, length),
      attempts: filled(this.attempts, length),
      weight: this.hasWeight ? filled(this.weight, length) : null,
      difficulty: filled(this.difficulty, length),
      player: this.hasPlayer ? filled(this.player, length) : null,
    };
  }
}
