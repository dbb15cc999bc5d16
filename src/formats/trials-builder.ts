/**
 * The trials reader's row rules: the header (known columns, the file's shape,
 * the delimiter named in errors), each row by the full rules
 * ({@link TrialsBuilder.row}, the grammar of `trialRowSchema` in
 * `trials-schema.ts`, applied by hand for speed), and a plain line read in
 * one pass straight from the bytes into the typed-array columns
 * ({@link TrialsBuilder.readPlainLine}); rows kept in columns or handed to a
 * sink in batches. See `trials-csv.ts` for the two ways in.
 */
import { type Issue, type Result, error, fail, ok, show, warning } from '../issues.js';
import { CARRIAGE_RETURN, type CsvRecord, LINE_FEED, MAX_CSV_LINE_BYTES, type PlainLineReader, plainFieldEnd, visibleByte } from './csv-scanner.js';
import { MAX_LATENCY_MS } from './limits.js';
import { NameCodes } from './name-codes.js';
import { parseDecimal, plainDecimal, scanDecimal, scanned } from './plain-decimal.js';
import { RowBuffer } from './row-buffer.js';
import { type DifficultyColumn, MAX_TRIAL_ROWS, type TrialBatch, type TrialRowSink, type TrialSinkOptions, type Trials, type TrialsSource } from './trials-types.js';

const KNOWN_COLUMNS = ['latency_ms', 'scale', 'difficulty', 'player', 'hit', 'hits', 'attempts', 'weight'] as const;
type KnownColumn = (typeof KNOWN_COLUMNS)[number];

const DELIMITER_NAMES = { ',': 'comma', ';': 'semicolon', '\t': 'tab' } as const;

/** Whether a field's bytes need no trimming and no unescaping (first and last byte visible ASCII). */
function plainField(record: CsvRecord, index: number): boolean {
  const start = record.starts[index] as number;
  const end = record.ends[index] as number;
  if (end <= start || record.quoting[index] === 2) return false;
  return visibleByte(record.bytes[start] as number) && visibleByte(record.bytes[end - 1] as number);
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

/**
 * Accumulates trial rows into columns. Feed it the header, then each record
 * with its line number; it stops at the first bad row.
 */
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

  /** Whether the rows go to a sink that keeps them as they come (see `TrialRowSink.keepsRows`). */
  sinkKeepsRows(): boolean {
    return this.sink?.keepsRows?.() ?? false;
  }

  /** Difficulty level names and player ids so far, by code (the player list is empty without a player column). */
  names(): { readonly difficulty: readonly string[]; readonly player: readonly string[] } {
    return { difficulty: this.difficulty.names, player: this.player.names };
  }

  /** The code of a difficulty level or player id, interned (in order of first appearance) if it is new. */
  codeOf(kind: 'difficulty' | 'player', name: string): number {
    return (kind === 'difficulty' ? this.difficulty : this.player).intern(name);
  }

  /**
   * Rows another builder read from later lines of the same file (`io/split-read.ts`), as if this
   * builder had read them: each row's difficulty and player code goes through `difficultyCodes` /
   * `playerCodes` (that builder's code -> this one's, see {@link codeOf}), then into the columns or
   * the sink's batches like every row here. False, with nothing taken, when the rows would pass
   * {@link MAX_TRIAL_ROWS} (the caller reads the file again, line by line, for the error's line).
   */
  addReadRows(batch: TrialBatch, count: number, difficultyCodes: Int32Array, playerCodes: Int32Array | null): boolean {
    if (this.rows + count > MAX_TRIAL_ROWS) return false;
    const { latency, scale, successes, attempts, weight, difficulty, player } = batch;
    for (let k = 0; k < count; k += 1) {
      this.setRow(latency[k] as number, scale[k] as number, successes[k] as number, attempts[k] as number, weight === null ? 1 : (weight[k] as number));
      this.pushRow(difficultyCodes[difficulty[k] as number] as number, player === null || playerCodes === null ? 0 : (playerCodes[player[k] as number] as number));
    }
    return true;
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
