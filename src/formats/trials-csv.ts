/**
 * Trials data (CSV): one row per attempt (`hit` 0/1) or per round (`hits` of
 * `attempts`), with `latency_ms`, `scale`, `difficulty` (a number or a named
 * level), optionally `player` and `weight`. Read into columns of typed arrays,
 * never an object per row, so that millions of rows fit in little memory.
 *
 * The row grammar is `trialRowSchema` (zod) below; the reader applies the same
 * rules by hand in its loop for speed, and a test checks the two agree.
 *
 * The CSV itself (RFC 4180: quoted fields with `""` escapes, LF, CRLF or CR
 * line ends, a UTF-8 byte-order mark) is scanned byte by byte by
 * {@link CsvScanner}: each record is a list of field byte ranges over the
 * chunk being read, plain decimal fields are read into the typed-array
 * columns straight from the bytes, and only fields that need it (a level
 * name not seen before, a number with an exponent or spaces, an error
 * message) are decoded to strings. Memory is the columns plus one chunk.
 */
import { z } from 'zod';
import { type Issue, type Result, error, fail, ok, show, warning } from '../issues.js';
import { MAX_LATENCY_MS } from './lobby-file.js';

export const TRIALS_FORMAT = 'lagparity/trials@1';

/** Documented limits: one line at most 64 KiB, a file at most 50 million rows. */
export const MAX_CSV_LINE_BYTES = 64 * 1024;
export const MAX_TRIAL_ROWS = 50_000_000;

const finite = z.number({ error: 'a finite number' });

/** One row of a trials file, after its fields are read as numbers (for docs and JSON Schema). */
export const trialRowSchema = z
  .object({
    latency_ms: finite.min(0).max(MAX_LATENCY_MS),
    scale: finite.positive(),
    difficulty: z.union([finite, z.string().min(1)]),
    player: z.string().min(1).optional(),
    hit: z.union([z.literal(0), z.literal(1)]).optional(),
    hits: z.number().int().nonnegative().optional(),
    attempts: z.number().int().positive().optional(),
    weight: finite.min(0).optional(),
  })
  .refine((row) => (row.hit !== undefined) !== (row.hits !== undefined && row.attempts !== undefined), {
    error: 'either `hit`, or both `hits` and `attempts`',
  })
  .refine((row) => row.hits === undefined || row.attempts === undefined || row.hits <= row.attempts, {
    error: '`hits` <= `attempts`',
  });

export type TrialRow = z.infer<typeof trialRowSchema>;

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

/**
 * A column of doubles grown by doubling; {@link finish} returns a view of the
 * buffer when it is at least 7/8 full (no copy, so a well-sized column is
 * never held twice), else a trimmed copy.
 */
class FloatColumn {
  private buffer: Float64Array;
  length = 0;

  constructor(capacity: number) {
    this.buffer = new Float64Array(Math.max(16, capacity));
  }

  push(value: number): void {
    if (this.length === this.buffer.length) {
      const next = new Float64Array(this.buffer.length * 2);
      next.set(this.buffer);
      this.buffer = next;
    }
    this.buffer[this.length] = value;
    this.length += 1;
  }

  finish(): Float64Array {
    const filled = this.buffer.subarray(0, this.length);
    return this.length * 8 >= this.buffer.length * 7 ? filled : filled.slice();
  }
}

/** Powers of ten that are exact in a double (10^0 .. 10^22). */
const POWERS_OF_TEN = Float64Array.from({ length: 23 }, (_, k) => 10 ** k);

/**
 * A plain decimal (`[+-]digits[.digits]`, at most 15 digits) read from bytes,
 * or undefined when the field needs the full rules of {@link parseDecimal}. With at
 * most 15 digits the mantissa and 10^f are exact doubles, so one correctly
 * rounded division gives the same double as `Number(text)` (Clinger 1990,
 * How to read floating point numbers accurately, PLDI, the fast path).
 */
function plainDecimal(bytes: Uint8Array, start: number, end: number): number | undefined {
  let k = start;
  let negative = false;
  const first = bytes[k];
  if (first === 0x2d) {
    negative = true;
    k += 1;
  } else if (first === 0x2b) k += 1;
  let mantissa = 0;
  let digits = 0;
  let fraction = 0;
  let dot = false;
  for (; k < end; k += 1) {
    const byte = bytes[k] as number;
    if (byte >= 0x30 && byte <= 0x39) {
      mantissa = mantissa * 10 + (byte - 0x30);
      digits += 1;
      if (dot) fraction += 1;
    } else if (byte === 0x2e && !dot) dot = true;
    else return undefined;
  }
  if (digits === 0 || digits > 15) return undefined;
  const value = mantissa / (POWERS_OF_TEN[fraction] as number);
  return negative ? -value : value;
}

/** One CSV record: field byte ranges over the bytes being scanned (valid only during the callback). */
export class CsvRecord {
  bytes: Uint8Array = new Uint8Array(0);
  count = 0;
  starts = new Int32Array(16);
  ends = new Int32Array(16);
  /** 0: unquoted, 1: quoted, 2: quoted with `""` escapes. */
  quoting = new Uint8Array(16);

  /** Append a field (used by the scanner). */
  add(start: number, end: number, quoting: number): void {
    if (this.count === this.starts.length) {
      const grow = <T extends Int32Array | Uint8Array>(old: T, next: T): T => {
        next.set(old);
        return next;
      };
      this.starts = grow(this.starts, new Int32Array(this.count * 2));
      this.ends = grow(this.ends, new Int32Array(this.count * 2));
      this.quoting = grow(this.quoting, new Uint8Array(this.count * 2));
    }
    this.starts[this.count] = start;
    this.ends[this.count] = end;
    this.quoting[this.count] = quoting;
    this.count += 1;
  }

  /** Field `index` as text (UTF-8, `""` unescaped). */
  text(index: number): string {
    const text = Buffer.from(this.bytes.buffer, this.bytes.byteOffset, this.bytes.byteLength).toString('utf8', this.starts[index], this.ends[index]);
    return this.quoting[index] === 2 ? text.replaceAll('""', '"') : text;
  }

  texts(): string[] {
    return Array.from({ length: this.count }, (_, index) => this.text(index));
  }
}

/** Whether a field's bytes need no trimming and no unescaping (first and last byte visible ASCII). */
function plainField(record: CsvRecord, index: number): boolean {
  const start = record.starts[index] as number;
  const end = record.ends[index] as number;
  if (end <= start || record.quoting[index] === 2) return false;
  const first = record.bytes[start] as number;
  const last = record.bytes[end - 1] as number;
  return first > 0x20 && first < 0x7f && last > 0x20 && last < 0x7f;
}

/**
 * Names interned to codes in order of first appearance, looked up from a
 * record's bytes: the last name and up to 16 names are compared as bytes, so
 * the usual few difficulty levels never become a string per row.
 */
class NameCodes {
  readonly names: string[] = [];
  private readonly index = new Map<string, number>();
  private readonly known: Uint8Array[] = [];
  private last = -1;
  private codes: Int32Array;
  length = 0;

  constructor(capacity: number) {
    this.codes = new Int32Array(Math.max(16, capacity));
  }

  private pushCode(code: number): void {
    if (this.length === this.codes.length) {
      const next = new Int32Array(this.codes.length * 2);
      next.set(this.codes);
      this.codes = next;
    }
    this.codes[this.length] = code;
    this.length += 1;
  }

  private matches(code: number, bytes: Uint8Array, start: number, end: number): boolean {
    const name = this.known[code];
    if (name === undefined || name.length !== end - start) return false;
    for (let k = 0; k < name.length; k += 1) if (name[k] !== bytes[start + k]) return false;
    return true;
  }

  /** Push a plain field (see {@link plainField}) by its bytes. */
  pushBytes(bytes: Uint8Array, start: number, end: number): void {
    if (this.last >= 0 && this.matches(this.last, bytes, start, end)) return this.pushCode(this.last);
    for (let code = 0; code < this.known.length; code += 1) {
      if (this.matches(code, bytes, start, end)) {
        this.last = code;
        return this.pushCode(code);
      }
    }
    const name = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength).toString('utf8', start, end);
    this.push(name);
    const code = this.codes[this.length - 1] as number;
    if (code === this.known.length && this.known.length < 16) this.known.push(new Uint8Array(bytes.subarray(start, end)));
    this.last = code < this.known.length ? code : -1;
  }

  push(name: string): void {
    let code = this.index.get(name);
    if (code === undefined) {
      code = this.names.length;
      this.names.push(name);
      this.index.set(name, code);
    }
    this.pushCode(code);
  }

  finish(): Int32Array {
    const filled = this.codes.subarray(0, this.length);
    return this.length * 8 >= this.codes.length * 7 ? filled : filled.slice();
  }
}

/**
 * Accumulates trial rows into columns. Feed it the header, then each record
 * with its line number; it stops at the first bad row.
 */
export class TrialsBuilder {
  readonly file: string;
  private columnIndex = new Map<KnownColumn, number>();
  private shape: 'per_attempt' | 'per_round' = 'per_attempt';
  private readonly latency: FloatColumn;
  private readonly scale: FloatColumn;
  private readonly successes: FloatColumn;
  private readonly attempts: FloatColumn;
  private weight: FloatColumn;
  private readonly capacity: number;
  private readonly difficulty: NameCodes;
  private readonly player: NameCodes;
  private fieldCount = 0;
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

  /** `capacity`: expected rows (e.g. from the file size), so the columns rarely grow. */
  constructor(file: string, capacity = 1024) {
    this.file = file;
    const size = Math.max(16, Math.min(MAX_TRIAL_ROWS, Math.ceil(capacity)));
    this.capacity = size;
    this.latency = new FloatColumn(size);
    this.scale = new FloatColumn(size);
    this.successes = new FloatColumn(size);
    this.attempts = new FloatColumn(size);
    this.weight = new FloatColumn(16);
    this.difficulty = new NameCodes(size);
    this.player = new NameCodes(16);
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
    if (this.weightAt >= 0) this.weight = new FloatColumn(this.capacity);
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

  /** Push a name field (difficulty, player) by its bytes, or trimmed text; false when it is empty. */
  private nameField(record: CsvRecord, index: number, codes: NameCodes): boolean {
    if (plainField(record, index)) {
      codes.pushBytes(record.bytes, record.starts[index] as number, record.ends[index] as number);
      return true;
    }
    const text = record.text(index).trim();
    if (text === '') return false;
    codes.push(text);
    return true;
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
    // The difficulty is pushed now and taken back if a later field of the row is bad.
    if (!this.nameField(record, this.difficultyAt, this.difficulty)) {
      this.failure = error('empty_field', this.where(line, 'difficulty'), '`difficulty` requires a number or a level name, got an empty field');
      return false;
    }
    if (!this.rest(record, line, latency, scale)) {
      this.difficulty.length = this.rows;
      return false;
    }
    return true;
  }

  private rest(record: CsvRecord, line: number, latency: number, scale: number): boolean {
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
    if (this.playerAt >= 0 && !this.nameField(record, this.playerAt, this.player)) {
      this.failure = error('empty_field', this.where(line, 'player'), '`player` requires a player id, got an empty field');
      return false;
    }
    this.latency.push(latency);
    this.scale.push(scale);
    this.successes.push(successes);
    this.attempts.push(attempts);
    if (this.weightAt >= 0) this.weight.push(weight);
    this.rows += 1;
    return true;
  }
  /** The columns, or the failure with the number of rows read before it. */
  finish(): Result<Trials> {
    if (this.failure) {
      const failure = { ...this.failure, message: `${this.failure.message} (stopped after ${this.rows} good rows)` };
      return fail([failure]);
    }
    if (this.rows === 0) {
      return fail([error('no_rows', this.file, 'a trials file requires at least one data row after the header, got none')]);
    }
    const levels = this.difficulty.names;
    const codes = this.difficulty.finish();
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
        latency: this.latency.finish(),
        scale: this.scale.finish(),
        difficulty,
        successes: this.successes.finish(),
        attempts: this.attempts.finish(),
        weight: this.columnIndex.has('weight') ? this.weight.finish() : null,
        player: this.columnIndex.has('player') ? { ids: [...this.player.names], codes: this.player.finish() } : null,
      },
      this.warnings,
    );
  }
}

const QUOTE = 0x22;
const LINE_FEED = 0x0a;
const CARRIAGE_RETURN = 0x0d;

/**
 * A streaming RFC 4180 scanner over UTF-8 bytes: feed it chunks in order
 * ({@link push}), then {@link end}. Each record goes to `onRecord` with the
 * line it starts on; empty lines are skipped; a record longer than
 * {@link MAX_CSV_LINE_BYTES} is refused as soon as that many bytes are seen.
 * Only the unfinished last record of a chunk is kept (copied) for the next.
 */
export class CsvScanner {
  private readonly file: string;
  private readonly delimiter: number;
  private readonly onRecord: (record: CsvRecord, line: number) => boolean;
  private readonly record = new CsvRecord();
  private carry: Uint8Array | null = null;
  private work = new Uint8Array(0);
  private line = 1;
  private first = true;
  private stopped = false;
  failure: Issue | undefined;

  constructor(file: string, delimiter: ',' | ';' | '\t', onRecord: (record: CsvRecord, line: number) => boolean) {
    this.file = file;
    this.delimiter = delimiter.charCodeAt(0);
    this.onRecord = onRecord;
  }

  /** Scan one chunk; false once scanning has stopped (a failure, or `onRecord` returned false). */
  push(chunk: Uint8Array): boolean {
    if (this.stopped) return false;
    let bytes = chunk;
    if (this.carry !== null) {
      // The unfinished record, then the chunk, in one reused buffer.
      const needed = this.carry.length + chunk.length;
      if (this.work.length < needed) this.work = new Uint8Array(needed + (needed >> 2));
      this.work.set(this.carry);
      this.work.set(chunk, this.carry.length);
      bytes = this.work.subarray(0, needed);
      this.carry = null;
    }
    this.scan(bytes, false);
    return !this.stopped;
  }

  /** The end of the input: the last record may lack a line end. */
  end(): boolean {
    if (this.stopped) return false;
    const bytes = this.carry ?? new Uint8Array(0);
    this.carry = null;
    this.scan(bytes, true);
    return !this.stopped;
  }

  private fail(code: string, line: number, message: string): void {
    this.failure = error(code, `${this.file}:${line}`, message);
    this.stopped = true;
  }

  private scan(bytes: Uint8Array, final: boolean): void {
    let position = 0;
    if (this.first) {
      if (bytes.length < 3 && !final) {
        this.carry = new Uint8Array(bytes); // a copy (Buffer#slice would be a view)
        return;
      }
      this.first = false;
      if (bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf) position = 3;
    }
    const length = bytes.length;
    const delimiter = this.delimiter;
    const record = this.record;
    record.bytes = bytes;
    while (position < length) {
      const recordStart = position;
      const startLine = this.line;
      let lines = 0;
      record.count = 0;
      let i = position;
      let complete = false;
      const limit = recordStart + MAX_CSV_LINE_BYTES;
      // One field per turn.
      for (;;) {
        if (bytes[i] === QUOTE && i < length) {
          i += 1;
          const start = i;
          let quoting = 1;
          let closed = -1;
          while (i < length) {
            const byte = bytes[i] as number;
            if (byte === QUOTE) {
              if (bytes[i + 1] === QUOTE) {
                quoting = 2;
                i += 2;
                continue;
              }
              if (i + 1 >= length && !final) break; // the next byte decides
              closed = i;
              i += 1;
              break;
            }
            if (byte === LINE_FEED) lines += 1;
            i += 1;
            if (i > limit) break;
          }
          if (i > limit) {
            this.fail('line_too_long', startLine, `a line requires at most ${MAX_CSV_LINE_BYTES} bytes (the documented limit), got a longer one`);
            return;
          }
          if (closed < 0) {
            if (final) this.fail('invalid_csv', startLine, 'the file requires well-formed CSV: a quoted field is not closed before the end of the file');
            break;
          }
          record.add(start, closed, quoting);
        } else {
          const start = i;
          const stop = Math.min(length, limit + 1);
          while (i < stop) {
            const byte = bytes[i] as number;
            if (byte === delimiter || byte === LINE_FEED || byte === CARRIAGE_RETURN) break;
            if (byte === QUOTE) {
              this.fail('invalid_csv', startLine, 'the file requires well-formed CSV: a quote may only open a field, got one inside an unquoted field');
              return;
            }
            i += 1;
          }
          if (i > limit) {
            this.fail('line_too_long', startLine, `a line requires at most ${MAX_CSV_LINE_BYTES} bytes (the documented limit), got a longer one`);
            return;
          }
          record.add(start, i, 0);
        }
        if (i >= length) {
          complete = final;
          break;
        }
        const next = bytes[i] as number;
        if (next === delimiter) {
          i += 1;
          continue;
        }
        if (next === LINE_FEED) {
          i += 1;
          lines += 1;
          complete = true;
          break;
        }
        if (next === CARRIAGE_RETURN) {
          if (i + 1 >= length && !final) break; // a CRLF split across chunks
          i += bytes[i + 1] === LINE_FEED ? 2 : 1;
          lines += 1;
          complete = true;
          break;
        }
        this.fail('invalid_csv', startLine, 'the file requires well-formed CSV: a closing quote must be followed by a delimiter or a line end');
        return;
      }
      if (this.stopped) return;
      if (!complete) {
        if (i - recordStart > MAX_CSV_LINE_BYTES) {
          this.fail('line_too_long', startLine, `a line requires at most ${MAX_CSV_LINE_BYTES} bytes (the documented limit), got a longer one`);
          return;
        }
        this.carry = new Uint8Array(bytes.subarray(recordStart)); // a copy: the caller may reuse the chunk
        return;
      }
      this.line = startLine + lines;
      position = i;
      // An empty line is one empty unquoted field.
      if (record.count === 1 && record.quoting[0] === 0 && record.starts[0] === record.ends[0]) continue;
      if (!this.onRecord(record, startLine)) {
        this.stopped = true;
        return;
      }
    }
  }
}

/** Scan trials CSV bytes, chunk by chunk, into a builder. */
export class TrialsReader {
  readonly builder: TrialsBuilder;
  private readonly scanner: CsvScanner;
  private headerSeen = false;
  private readonly onProgress: ((rows: number) => void) | undefined;

  constructor(file: string, delimiter: ',' | ';' | '\t', options: { capacity?: number; onProgress?: (rows: number) => void } = {}) {
    this.builder = new TrialsBuilder(file, options.capacity);
    this.onProgress = options.onProgress;
    this.scanner = new CsvScanner(file, delimiter, (record, line) => {
      if (!this.headerSeen) {
        this.headerSeen = true;
        return this.builder.header(record.texts(), line, delimiter);
      }
      if (!this.builder.row(record, line)) return false;
      if (this.onProgress !== undefined && this.builder.rows % 1_000_000 === 0) this.onProgress(this.builder.rows);
      return true;
    });
  }

  push(chunk: Uint8Array): boolean {
    return this.scanner.push(chunk);
  }

  /** The columns, or the first failure (with the number of good rows before it). */
  finish(): Result<Trials> {
    this.scanner.end();
    const file = this.builder.file;
    if (this.scanner.failure !== undefined) return fail([this.scanner.failure]);
    if (!this.headerSeen) return fail([error('empty_file', file, 'a trials file requires a header line and rows, got an empty file')]);
    return this.builder.finish();
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
