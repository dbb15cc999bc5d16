/**
 * Trials data in columns (`lagparity/trials@1`): what a trials file holds
 * once read (`Trials`), and what a reader hands to a sink that takes the
 * rows in batches instead (`TrialsLayout`, `TrialBatch`, `TrialRowSink`,
 * `TrialSinkOptions`, `TrialsSource`). Types and the documented limits; the
 * reading is in `trials-csv.ts` and `trials-builder.ts`.
 */

export const TRIALS_FORMAT = 'lagparity/trials@1';

/** Documented limit: a file at most 50 million rows (and one line at most `MAX_CSV_LINE_BYTES`, `csv-scanner.ts`). */
export const MAX_TRIAL_ROWS = 50_000_000;

export type DifficultyColumn =
  | { readonly kind: 'numeric'; readonly values: Float64Array }
  | { readonly kind: 'levels'; readonly levels: readonly string[]; readonly codes: Int32Array };

/** Trials in columns. `successes[i]` of `attempts[i]` at row i. */
export interface Trials {
  readonly file: string;
  readonly shape: 'per_attempt' | 'per_round';
  readonly rows: number;
  readonly latency: Float64Array;
  readonly scale: Float64Array;
  readonly difficulty: DifficultyColumn;
  readonly successes: Float64Array;
  readonly attempts: Float64Array;
  readonly weight: Float64Array | null;
  readonly player: { readonly ids: readonly string[]; readonly codes: Int32Array } | null;
}

/** What a trials file holds besides its rows: what a {@link TrialRowSink} needs to interpret the codes. */
export interface TrialsLayout {
  readonly file: string;
  readonly shape: Trials['shape'];
  readonly weight: boolean;
  readonly player: boolean;
  /** Rows the reader expects (its capacity hint, e.g. from the file size; not a limit). */
  readonly expectedRows: number;
}

/** A batch of rows handed to a sink: the first `count` entries of each column; valid only during the call. */
export interface TrialBatch {
  readonly latency: Float64Array;
  readonly scale: Float64Array;
  /** Difficulty level codes (indices into the file's level names, in order of first appearance). */
  readonly difficulty: Int32Array;
  readonly weight: Float64Array | null;
  /** Player codes (indices into the player ids), or null without a player column. */
  readonly player: Int32Array | null;
  readonly successes: Float64Array;
  readonly attempts: Float64Array;
}

/** Takes rows in batches instead of the builder keeping every row (e.g. to collapse them as they are read). */
export interface TrialRowSink {
  addRows(batch: TrialBatch, count: number): void;
  /** Whether the sink keeps its rows as they come, with nothing to merge (a reader on two threads gives the other thread more lines then). */
  keepsRows?(): boolean;
}

/** How to hand rows to a sink: batches of `batchRows`, the sink opened once the header is read. */
export interface TrialSinkOptions {
  readonly batchRows: number;
  open(layout: TrialsLayout): TrialRowSink;
}

/** The file's names and counts once every row went to a sink. */
export interface TrialsSource {
  readonly file: string;
  readonly shape: Trials['shape'];
  readonly rows: number;
  /** Difficulty level names, by code. */
  readonly levels: readonly string[];
  /** The number of each level when every level name is a number, else null. */
  readonly numericLevels: readonly number[] | null;
  /** Player ids, by code, or null without a player column. */
  readonly players: readonly string[] | null;
}
