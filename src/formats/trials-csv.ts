/**
 * Trials data (CSV): one row per attempt (`hit` 0/1) or per round (`hits` of
 * `attempts`), with `latency_ms`, `scale`, `difficulty` (a number or a named
 * level), optionally `player` and `weight`. Read into columns of typed arrays,
 * never an object per row, so that millions of rows fit in little memory.
 *
 * The row grammar is `trialRowSchema` (zod, `trials-schema.ts`); the reader
 * applies the same rules by hand in its loop for speed, and a test checks the
 * two agree.
 *
 * The CSV itself is scanned byte by byte by `CsvScanner` (RFC 4180, see
 * `csv-scanner.ts`). Two ways in, with the same result:
 * - a plain line (unquoted fields, plain decimals of at most 15 digits, names
 *   seen before, LF or CRLF) is read in one pass by
 *   {@link TrialsBuilder.readPlainLine}, straight from the bytes into the
 *   typed-array columns: the common case of a large telemetry file;
 * - any other line (quotes, spaces, an exponent, a new name, a bad value)
 *   goes through the scanner's field ranges to {@link TrialsBuilder.row},
 *   which applies the full rules and reports the first bad row.
 * Only fields that need it (a name not seen before, a number with an exponent
 * or spaces, an error message) are decoded to strings. Memory is the columns
 * plus one chunk.
 */
import { type Issue, type Result, error, fail, ok, show, warning } from '../issues.js';
import { CARRIAGE_RETURN, type CsvRecord, CsvScanner, LINE_FEED, MAX_CSV_LINE_BYTES, type PlainLineReader, plainFieldEnd, visibleByte } from './csv-scanner.js';
import { MAX_LATENCY_MS } from './limits.js';
import { NameCodes } from './name-codes.js';
import { RowBuffer } from './row-buffer.js';

export const TRIALS_FORMAT = 'lagparity/trials@1';

export { MAX_CSV_LINE_BYTES } from './csv-scanner.js';
/** Documented limit: a file at most 50 million rows (and one line at most {@link MAX_CSV_LINE_BYTES}). */
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

const KNOWN_COLUMNS = ['latency_ms', 'scale', 'difficulty', 'player', 'hit', 'hits', 'attempts', 'weight'] as const;
type KnownColumn = (typeof KNOWN_COLUMNS)[number];

const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/** A strictly decimal number, or undefined: no hex, no empty string, no `Infinity`. */
export function parseDecimal(text: string): number | undefined {
  const trimmed = text.trim();
  if (!DECIMAL.test(trimmed)) return undefined;
  const value = Number(trimmed);
  return Number.isFinite(value) ? value : undefined;
}

/** The field delimiter of a header line: comma, semicolon or tab. */
export function detectDelimiter(headerLine: string): ',' | ';' | '\t' {
  const counts = { ',': 0, ';': 0, '\t': 0 };
  let quoted = false;
  for (const character of headerLine) {
    if (character === '"') quoted = !quoted;
    else if (!quoted && (character === ',' || character === ';' || character === '\t')) counts[character] += 1;
  }
  if (counts[','] === 0 && counts[';'] > 0) return ';';
  if (counts[','] === 0 && counts['\t'] > 0) return '\t';
  return ',';
}

const DELIMITER_NAMES = { ',': 'comma', ';': 'semicolon', '\t': 'tab' } as const;

/** Powers of ten that are exact in a double (10^0 .. 10^22). */
const POWERS_OF_TEN = Float64Array.from({ length: 23 }, (_, k) => 10 ** k);

const MINUS = 0x2d;
const PLUS = 0x2b;
const DOT = 0x2e;
const DIGIT_0 = 0x30;

/**
 * The value of the last successful {@link scanDecimal}, in a typed array: a
 * double stored in a module variable would be boxed on every store.
 */
const scanned = new Float64Array(1);

/**
 * Scan a plain decimal (`[+-]digits[.digits]`, at most 15 digits) from
 * `bytes[start]`, stopping at the first byte that is not part of one (or at
 * `end`): returns the index after it, with the value in `scanned[0]`, or
 * -1 when there is none or it needs the full rules of {@link parseDecimal}.
 * With at most 15 digits the mantissa and 10^f are exact doubles, so one
 * correctly rounded division gives the same double as `Number(text)`
 * (Clinger 1990, How to read floating point numbers accurately, PLDI, the
 * fast path).
 */
function scanDecimal(bytes: Uint8Array, start: number, end: number): number {
  // Every read stays before `end` (one past the end of `bytes` would deoptimise the caller).
  if (start >= end) return -1;
  let k = start;
  let negative = false;
  const first = bytes[k];
  if (first === MINUS) {
    negative = true;
    k += 1;
  } else if (first === PLUS) k += 1;
  // The whole digits, then (after one dot) the fraction digits, each in a loop of its own.
  let mantissa = 0;
  const whole = k;
  for (; k < end; k += 1) {
    const digit = (bytes[k] as number) - DIGIT_0;
    if (digit < 0 || digit > 9) break;
    mantissa = mantissa * 10 + digit;
  }
  let digits = k - whole;
  let fraction = 0;
  if (k < end && bytes[k] === DOT) {
    k += 1;
    const part = k;
    for (; k < end; k += 1) {
      const digit = (bytes[k] as number) - DIGIT_0;
      if (digit < 0 || digit > 9) break;
      mantissa = mantissa * 10 + digit;
    }
    fraction = k - part;
    digits += fraction;
  }
  if (digits === 0 || digits > 15) return -1;
  const value = mantissa / (POWERS_OF_TEN[fraction] as number);
  scanned[0] = negative ? -value : value;
  return k;
}

/** A field that is exactly a plain decimal (see {@link scanDecimal}), or undefined. */
function plainDecimal(bytes: Uint8Array, start: number, end: number): number | undefined {
  return scanDecimal(bytes, start, end) === end ? (scanned[0] as number) : undefined;
}

/** Whether a field's bytes need no trimming and no unescaping (first and last byte visible ASCII). */
function plainField(record: CsvRecord, index: number): boolean {
  const start = record.starts[index] as number;
  const end = record.ends[index] as number;
  if (end <= start || record.quoting[index] === 2) return false;
  return visibleByte(record.bytes[start] as number) && visibleByte(record.bytes[end - 1] as number);
}

/**
 * Accumulates trial rows into columns. Feed it the header, then each record
 * with its line number; it stops at the first bad row.
 */
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

/** What the plain-line reader does with each field, by its column (see {@link TrialsBuilder.readPlainLine}). */
const enum Role {
  Skip,
  Latency,
  Scale,
  Difficulty,
  Hit,
  Hits,
  Attempts,
  Weight,
  Player,
}

const ROLE_OF: Record<KnownColumn, Role> = {
  latency_ms: Role.Latency,
  scale: Role.Scale,
  difficulty: Role.Difficulty,
  player: Role.Player,
  hit: Role.Hit,
  hits: Role.Hits,
  attempts: Role.Attempts,
  weight: Role.Weight,
};


export class TrialsBuilder implements PlainLineReader {
  readonly file: string;
  /** Rows go to this sink in batches when set (see {@link TrialSinkOptions}); else the builder keeps them. */
  private readonly sinkOptions: TrialSinkOptions | null;
  private sink: TrialRowSink | null = null;
  /** Called with the number of rows read, every million rows. */
  onProgress: ((rows: number) => void) | undefined;
  /** The role of each field, from the header. */
  private roles = new Uint8Array(0);
  private delimiterByte = 0x2c;
  private columnIndex = new Map<KnownColumn, number>();
  private shape: 'per_attempt' | 'per_round' = 'per_attempt';
  /** The rows held: every row, or with a sink the current batch (see {@link pushRow}). */
  private buffer: RowBuffer;
  private readonly capacity: number;
  /** The capacity hint given, passed on to a sink. */
  private readonly expectedRows: number;
  private readonly difficulty = new NameCodes();
  private readonly player = new NameCodes();
  private fieldCount = 0;
  /** Latency, scale, successes, attempts and weight of the row being pushed (see {@link pushRow}). */
  private readonly rowValues = new Float64Array(5);
  // Field index of each column (-1: absent), read once from the header.
  private latencyAt = -1;
  private scaleAt = -1;
  private difficultyAt = -1;
  private hitAt = -1;
  private hitsAt = -1;
  private attemptsAt = -1;
  private weightAt = -1;
  private playerAt = -1;
  readonly warnings: Issue[] = [];
  failure: Issue | undefined;
  rows = 0;

  /**
   * `capacity`: expected rows (e.g. from the file size), so the columns rarely
   * grow; `sink`: hand the rows over in batches instead of keeping them.
   */
  constructor(file: string, capacity = 1024, sink: TrialSinkOptions | null = null) {
    this.file = file;
    this.sinkOptions = sink;
    const size = sink === null ? Math.max(16, Math.min(MAX_TRIAL_ROWS, Math.ceil(capacity))) : sink.batchRows;
    this.capacity = size;
    this.expectedRows = capacity;
    this.buffer = new RowBuffer(0, { weight: false, player: false });
  }

  private where(line: number, column?: string): string {
    return column === undefined ? `${this.file}:${line}` : `${this.file}:${line}:${column}`;
  }
  /** Read the header; returns false (with `failure` set) if it cannot be used. */
  header(fields: readonly string[], line: number, delimiter: ',' | ';' | '\t'): boolean {
    if (delimiter !== ',') {
      this.warnings.push(warning('delimiter_detected', this.where(line), `the file is read as ${DELIMITER_NAMES[delimiter]}-separated (the header has no comma)`));
    }
    const unknown: string[] = [];
    fields.forEach((raw, index) => {
      const name = raw.trim();
      if ((KNOWN_COLUMNS as readonly string[]).includes(name)) {
        if (this.columnIndex.has(name as KnownColumn)) {
          this.failure ??= error('duplicate_column', this.where(line, name), `the header requires each column once, got \`${name}\` twice`);
        }
        this.columnIndex.set(name as KnownColumn, index);
      } else unknown.push(name);
    });
    this.fieldCount = fields.length;
    this.delimiterByte = delimiter.charCodeAt(0);
    this.roles = Uint8Array.from(fields, (_, index) => {
      const entry = [...this.columnIndex].find(([, at]) => at === index);
      return entry === undefined ? Role.Skip : ROLE_OF[entry[0]];
    });
    if (this.failure) return false;
    const missing = (['latency_ms', 'scale', 'difficulty'] as const).filter((name) => !this.columnIndex.has(name));
    const hasHit = this.columnIndex.has('hit');
    const hasRound = this.columnIndex.has('hits') || this.columnIndex.has('attempts');
    if (hasHit && hasRound) {
      this.failure = error('ambiguous_response', this.where(line), 'the header requires either `hit`, or `hits` and `attempts`, got both kinds');
      return false;
    }
    if (!hasHit && !hasRound) missing.push('hit' as never);
    if (hasRound && !this.columnIndex.has('hits')) missing.push('hits' as never);
    if (hasRound && !this.columnIndex.has('attempts')) missing.push('attempts' as never);
    if (missing.length > 0) {
      const names = missing.map((name) => `\`${name}\``).join(', ');
      this.failure = error('missing_column', this.where(line), `the header requires the columns latency_ms, scale, difficulty and hit (or hits and attempts); missing ${names}, got ${show(fields.join(','))}`);
      return false;
    }
    this.shape = hasHit ? 'per_attempt' : 'per_round';
    const at = (name: KnownColumn) => this.columnIndex.get(name) ?? -1;
    this.latencyAt = at('latency_ms');
    this.scaleAt = at('scale');
    this.difficultyAt = at('difficulty');
    this.hitAt = at('hit');
    this.hitsAt = at('hits');
    this.attemptsAt = at('attempts');
    this.weightAt = at('weight');
    this.playerAt = at('player');
    this.buffer = new RowBuffer(this.capacity, { weight: this.weightAt >= 0, player: this.playerAt >= 0 });
    this.sink =
      this.sinkOptions?.open({ file: this.file, shape: this.shape, weight: this.weightAt >= 0, player: this.playerAt >= 0, expectedRows: this.expectedRows }) ?? null;
    if (unknown.length > 0) {
      this.warnings.push(warning('unknown_column', this.where(line), `columns ignored: ${unknown.map((name) => show(name)).join(', ')}`));
    }
    return true;
  }

  private numberField(record: CsvRecord, index: number, column: KnownColumn, line: number): number | undefined {
    const start = record.starts[index] as number;
    const end = record.ends[index] as number;
    if (record.quoting[index] !== 2) {
      const fast = plainDecimal(record.bytes, start, end);
      if (fast !== undefined) return fast;
    }
    const text = record.text(index);
    const value = parseDecimal(text);
    if (value === undefined) {
      const empty = text.trim() === '';
      this.failure = error(empty ? 'empty_field' : 'not_a_number', this.where(line, column), `\`${column}\` requires a finite decimal number, got ${empty ? 'an empty field' : show(text)}`);
    }
    return value;
  }

  private reject(line: number, column: KnownColumn, code: string, expected: string, value: number | string): false {
    this.failure = error(code, this.where(line, column), `\`${column}\` requires ${expected}, got ${show(value)}`);
    return false;
  }

  /** The code of a name field (difficulty, player), by its bytes or its trimmed text (interned if new); -1 when it is empty. */
  private nameField(record: CsvRecord, index: number, names: NameCodes): number {
    if (plainField(record, index)) return names.codeOfPlainBytes(record.bytes, record.starts[index] as number, record.ends[index] as number);
    const text = record.text(index).trim();
    return text === '' ? -1 : names.intern(text);
  }

  /** Add one record; returns false (with `failure` set) at the first bad row. */
  row(record: CsvRecord, line: number): boolean {
    if (record.count !== this.fieldCount) {
      this.failure = error('wrong_field_count', this.where(line), `each row requires ${this.fieldCount} fields like the header, got ${record.count}`);
      return false;
    }
    if (this.rows >= MAX_TRIAL_ROWS) {
      this.failure = error('too_large', this.where(line), `a trials file requires at most ${MAX_TRIAL_ROWS} rows (the documented limit), got more`);
      return false;
    }
    const latency = this.numberField(record, this.latencyAt, 'latency_ms', line);
    if (latency === undefined) return false;
    if (latency < 0 || latency > MAX_LATENCY_MS) return this.reject(line, 'latency_ms', 'out_of_range', `a latency between 0 and ${MAX_LATENCY_MS} ms`, latency);
    const scale = this.numberField(record, this.scaleAt, 'scale', line);
    if (scale === undefined) return false;
    if (scale <= 0) return this.reject(line, 'scale', 'out_of_range', 'a scale above 0', scale);
    const difficulty = this.nameField(record, this.difficultyAt, this.difficulty);
    if (difficulty < 0) {
      this.failure = error('empty_field', this.where(line, 'difficulty'), '`difficulty` requires a number or a level name, got an empty field');
      return false;
    }
    return this.rest(record, line, latency, scale, difficulty);
  }

  private rest(record: CsvRecord, line: number, latency: number, scale: number, difficulty: number): boolean {
    let successes: number;
    let attempts: number;
    if (this.shape === 'per_attempt') {
      const hit = this.numberField(record, this.hitAt, 'hit', line);
      if (hit === undefined) return false;
      if (hit !== 0 && hit !== 1) return this.reject(line, 'hit', 'out_of_range', '0 or 1', hit);
      successes = hit;
      attempts = 1;
    } else {
      const hits = this.numberField(record, this.hitsAt, 'hits', line);
      if (hits === undefined) return false;
      const tries = this.numberField(record, this.attemptsAt, 'attempts', line);
      if (tries === undefined) return false;
      if (!Number.isInteger(tries) || tries < 1) return this.reject(line, 'attempts', 'out_of_range', 'a whole number >= 1', tries);
      if (!Number.isInteger(hits) || hits < 0) return this.reject(line, 'hits', 'out_of_range', 'a whole number >= 0', hits);
      if (hits > tries) return this.reject(line, 'hits', 'out_of_range', `at most \`attempts\` (${tries})`, hits);
      successes = hits;
      attempts = tries;
    }
    let weight = 1;
    if (this.weightAt >= 0) {
      const value = this.numberField(record, this.weightAt, 'weight', line);
      if (value === undefined) return false;
      if (value < 0) return this.reject(line, 'weight', 'out_of_range', 'a weight >= 0', value);
      weight = value;
    }
    const player = this.playerAt >= 0 ? this.nameField(record, this.playerAt, this.player) : 0;
    if (player < 0) {
      this.failure = error('empty_field', this.where(line, 'player'), '`player` requires a player id, got an empty field');
      return false;
    }
    this.setRow(latency, scale, successes, attempts, weight);
    this.pushRow(difficulty, player);
    return true;
  }

  /**
   * A good row into the columns: its numbers (from {@link rowValues}: doubles passed as arguments to a call that is
   * not inlined are boxed, one allocation each per row) and name codes; then the count and progress. Full columns
   * first go to the sink (a full batch) or grow.
   */
  private pushRow(difficulty: number, player: number): void {
    const buffer = this.buffer;
    if (buffer.length === buffer.capacity) {
      if (this.sink !== null) this.flush();
      else buffer.grow();
    }
    const k = buffer.length;
    const values = this.rowValues;
    buffer.latency[k] = values[0] as number;
    buffer.scale[k] = values[1] as number;
    buffer.successes[k] = values[2] as number;
    buffer.attempts[k] = values[3] as number;
    if (this.weightAt >= 0) buffer.weight[k] = values[4] as number;
    buffer.difficulty[k] = difficulty;
    if (this.playerAt >= 0) buffer.player[k] = player;
    buffer.length = k + 1;
    this.rows += 1;
    if (this.onProgress !== undefined && this.rows % 1_000_000 === 0) this.onProgress(this.rows);
  }

  /** The numbers {@link pushRow} takes (small enough to be inlined where it is called, so nothing is boxed). */
  private setRow(latency: number, scale: number, successes: number, attempts: number, weight: number): void {
    const values = this.rowValues;
    values[0] = latency;
    values[1] = scale;
    values[2] = successes;
    values[3] = attempts;
    values[4] = weight;
  }

  /** Hand the rows held to the sink and start the next batch. */
  private flush(): void {
    const buffer = this.buffer;
    const count = buffer.length;
    if (this.sink === null || count === 0) return;
    this.sink.addRows(
      {
        latency: buffer.latency,
        scale: buffer.scale,
        difficulty: buffer.difficulty,
        weight: this.weightAt >= 0 ? buffer.weight : null,
        player: this.playerAt >= 0 ? buffer.player : null,
        successes: buffer.successes,
        attempts: buffer.attempts,
      },
      count,
    );
    buffer.length = 0;
  }

  /**
   * Read one plain line straight from the bytes (see {@link PlainLineReader}):
   * every field unquoted, numbers `[+-]digits[.digits]` of at most 15 digits
   * (read as {@link plainDecimal} reads them), names already known by their
   * bytes, every value in range, and the line ending in LF or CRLF within
   * `length`. Returns the index past the line end, or -1 with nothing taken,
   * so that {@link row} reads the line by the full rules (and reports it if
   * it is bad). The same row comes out either way.
   */
  readPlainLine(bytes: Uint8Array, start: number, length: number): number {
    if (this.rows >= MAX_TRIAL_ROWS) return -1;
    const roles = this.roles;
    const last = roles.length - 1;
    const delimiter = this.delimiterByte;
    let latency = -1;
    let scale = 0;
    let successes = -1;
    let attempts = 1;
    let weight = 1;
    let difficulty = -1;
    let player = -1;
    let i = start;
    for (let field = 0; field <= last; field += 1) {
      const role = roles[field] as Role;
      if (role === Role.Skip) {
        i = plainFieldEnd(bytes, i, length, delimiter);
      } else if (role === Role.Difficulty || role === Role.Player) {
        const names = role === Role.Difficulty ? this.difficulty : this.player;
        // A few known names are compared where they stand; any other field is scanned, then looked up.
        const matchedEnd = names.matchAt(bytes, i, length, delimiter);
        i = matchedEnd >= 0 ? matchedEnd : names.fieldAt(bytes, i, length, delimiter);
        if (i < 0) return -1;
        if (role === Role.Difficulty) difficulty = names.matched;
        else player = names.matched;
      } else {
        i = scanDecimal(bytes, i, length);
        if (i < 0) return -1;
        const value = scanned[0] as number;
        if (role === Role.Latency) latency = value;
        else if (role === Role.Scale) scale = value;
        else if (role === Role.Hit || role === Role.Hits) successes = value;
        else if (role === Role.Attempts) attempts = value;
        else weight = value;
      }
      if (i >= length) return -1;
      const next = bytes[i] as number;
      if (field < last) {
        if (next !== delimiter) return -1;
        i += 1;
      } else if (next === LINE_FEED) i += 1;
      else if (next === CARRIAGE_RETURN && i + 1 < length && bytes[i + 1] === LINE_FEED) i += 2;
      else return -1;
    }
    if (i - start > MAX_CSV_LINE_BYTES) return -1;
    // The checks of `row` and `rest`; a value that fails one is left to them to report.
    if (!(latency >= 0 && latency <= MAX_LATENCY_MS) || !(scale > 0) || !(weight >= 0)) return -1;
    if (this.shape === 'per_attempt') {
      if (successes !== 0 && successes !== 1) return -1;
    } else if (!Number.isInteger(attempts) || attempts < 1 || !Number.isInteger(successes) || successes < 0 || successes > attempts) return -1;
    this.setRow(latency, scale, successes, attempts, weight);
    this.pushRow(difficulty, player);
    return i;
  }
  /** The failure with the number of rows read before it, or no rows, or null. */
  private finalIssue(): Issue | null {
    if (this.failure) return { ...this.failure, message: `${this.failure.message} (stopped after ${this.rows} good rows)` };
    if (this.rows === 0) return error('no_rows', this.file, 'a trials file requires at least one data row after the header, got none');
    return null;
  }

  /** With a sink: the last batch goes to it, then the names and counts (or the failure). */
  finishSource(): Result<TrialsSource> {
    const issue = this.finalIssue();
    if (issue !== null) return fail([issue]);
    this.flush();
    const levels = [...this.difficulty.names];
    const numericLevels = levels.map(parseDecimal);
    return ok(
      {
        file: this.file,
        shape: this.shape,
        rows: this.rows,
        levels,
        numericLevels: numericLevels.every((value) => value !== undefined) ? (numericLevels as number[]) : null,
        players: this.playerAt >= 0 ? [...this.player.names] : null,
      },
      this.warnings,
    );
  }

  /** The columns, or the failure with the number of rows read before it. */
  finish(): Result<Trials> {
    const issue = this.finalIssue();
    if (issue !== null) return fail([issue]);
    const levels = this.difficulty.names;
    const columns = this.buffer.finish();
    const codes = columns.difficulty;
    const numericLevels = levels.map(parseDecimal);
    let difficulty: DifficultyColumn;
    if (numericLevels.every((value) => value !== undefined)) {
      const values = new Float64Array(codes.length);
      for (let index = 0; index < codes.length; index += 1) values[index] = numericLevels[codes[index] ?? 0] ?? 0;
      difficulty = { kind: 'numeric', values };
    } else {
      difficulty = { kind: 'levels', levels: [...levels], codes };
    }
    return ok(
      {
        file: this.file,
        shape: this.shape,
        rows: this.rows,
        latency: columns.latency,
        scale: columns.scale,
        difficulty,
        successes: columns.successes,
        attempts: columns.attempts,
        weight: columns.weight,
        player: columns.player === null ? null : { ids: [...this.player.names], codes: columns.player },
      },
      this.warnings,
    );
  }
}

/** Scan trials CSV bytes, chunk by chunk, into a builder. */
export class TrialsReader {
  readonly builder: TrialsBuilder;
  private readonly scanner: CsvScanner;
  private headerSeen = false;

  /**
   * `capacity`: expected rows; `onProgress`: called every million rows;
   * `plainLines` (default true): read plain lines in one pass (see
   * {@link TrialsBuilder.readPlainLine}); false sends every line through the
   * full rules, with the same result, more slowly (a test compares the two).
   */
  constructor(
    file: string,
    delimiter: ',' | ';' | '\t',
    options: { capacity?: number; onProgress?: (rows: number) => void; plainLines?: boolean; sink?: TrialSinkOptions } = {},
  ) {
    const builder = new TrialsBuilder(file, options.capacity, options.sink ?? null);
    builder.onProgress = options.onProgress;
    this.builder = builder;
    const scanner = new CsvScanner(file, delimiter, (record, line) => {
      if (this.headerSeen) return builder.row(record, line);
      this.headerSeen = true;
      if (!builder.header(record.texts(), line, delimiter)) return false;
      // From here on the builder reads plain lines itself; the scanner keeps the rest.
      if (options.plainLines !== false) scanner.plainLines = builder;
      return true;
    });
    this.scanner = scanner;
  }

  push(chunk: Uint8Array): boolean {
    return this.scanner.push(chunk);
  }

  /** The columns, or the first failure (with the number of good rows before it). */
  finish(): Result<Trials> {
    const issue = this.end();
    return issue === null ? this.builder.finish() : fail([issue]);
  }

  /** With the `sink` option: the names and counts, or the first failure. */
  finishSource(): Result<TrialsSource> {
    const issue = this.end();
    return issue === null ? this.builder.finishSource() : fail([issue]);
  }

  private end(): Issue | null {
    this.scanner.end();
    if (this.scanner.failure !== undefined) return this.scanner.failure;
    if (!this.headerSeen) return error('empty_file', this.builder.file, 'a trials file requires a header line and rows, got an empty file');
    return null;
  }
}

/** Parse trials from CSV text already in memory (tests, small files, payloads). */
export function parseTrialsCsv(text: string, file = 'trials.csv'): Result<Trials> {
  const body = text.replace(/^\uFEFF/, '');
  if (body.trim() === '') {
    return fail([error('empty_file', file, 'a trials file requires a header line and rows, got an empty file')]);
  }
  const reader = new TrialsReader(file, detectDelimiter(body.split(/\r?\n/, 1)[0] ?? ''));
  reader.push(Buffer.from(text, 'utf8'));
  return reader.finish();
}
