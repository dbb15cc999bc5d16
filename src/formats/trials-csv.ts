/**
 * Trials data (CSV): one row per attempt (`hit` 0/1) or per round (`hits` of
 * `attempts`), with `latency_ms`, `scale`, `difficulty` (a number or a named
 * level), optionally `player` and `weight`. Read into columns of typed arrays,
 * never an object per row, so that millions of rows fit in little memory.
 *
 * The row grammar is `trialRowSchema` (zod) below; the reader applies the same
 * rules by hand in its loop for speed, and a test checks the two agree.
 */
import { parse as parseCsvSync } from 'csv-parse/sync';
import { z } from 'zod';
import { type Issue, type Result, error, fail, ok, show, warning } from '../issues.js';
import { MAX_LATENCY_MS } from './lobby-file.js';
import { GrowableFloat64, StringCodes } from './growable.js';

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
 * Accumulates trial rows into columns. Feed it the header, then each record
 * with its line number; it stops at the first bad row.
 */
export class TrialsBuilder {
  private readonly file: string;
  private columnIndex = new Map<KnownColumn, number>();
  private shape: 'per_attempt' | 'per_round' = 'per_attempt';
  private readonly latency = new GrowableFloat64();
  private readonly scale = new GrowableFloat64();
  private readonly successes = new GrowableFloat64();
  private readonly attempts = new GrowableFloat64();
  private readonly weight = new GrowableFloat64();
  private readonly difficulty = new StringCodes();
  private readonly player = new StringCodes();
  private fieldCount = 0;
  readonly warnings: Issue[] = [];
  failure: Issue | undefined;
  rows = 0;

  constructor(file: string) {
    this.file = file;
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
    if (unknown.length > 0) {
      this.warnings.push(warning('unknown_column', this.where(line), `columns ignored: ${unknown.map((name) => show(name)).join(', ')}`));
    }
    return true;
  }

  private numberField(fields: readonly string[], column: KnownColumn, line: number): number | undefined {
    const index = this.columnIndex.get(column);
    const text = index === undefined ? undefined : fields[index];
    const value = text === undefined ? undefined : parseDecimal(text);
    if (value === undefined) {
      const got = text === undefined || text.trim() === '' ? 'an empty field' : show(text);
      this.failure = error(text === undefined || text.trim() === '' ? 'empty_field' : 'not_a_number', this.where(line, column), `\`${column}\` requires a finite decimal number, got ${got}`);
    }
    return value;
  }

  private reject(line: number, column: KnownColumn, code: string, expected: string, value: number | string): false {
    this.failure = error(code, this.where(line, column), `\`${column}\` requires ${expected}, got ${show(value)}`);
    return false;
  }

  /** Add one record; returns false (with `failure` set) at the first bad row. */
  row(fields: readonly string[], line: number): boolean {
    if (fields.length !== this.fieldCount) {
      this.failure = error('wrong_field_count', this.where(line), `each row requires ${this.fieldCount} fields like the header, got ${fields.length}`);
      return false;
    }
    if (this.rows >= MAX_TRIAL_ROWS) {
      this.failure = error('too_large', this.where(line), `a trials file requires at most ${MAX_TRIAL_ROWS} rows (the documented limit), got more`);
      return false;
    }
    const latency = this.numberField(fields, 'latency_ms', line);
    if (latency === undefined) return false;
    if (latency < 0 || latency > MAX_LATENCY_MS) return this.reject(line, 'latency_ms', 'out_of_range', `a latency between 0 and ${MAX_LATENCY_MS} ms`, latency);
    const scale = this.numberField(fields, 'scale', line);
    if (scale === undefined) return false;
    if (scale <= 0) return this.reject(line, 'scale', 'out_of_range', 'a scale above 0', scale);
    const difficultyText = (fields[this.columnIndex.get('difficulty') ?? -1] ?? '').trim();
    if (difficultyText === '') {
      this.failure = error('empty_field', this.where(line, 'difficulty'), '`difficulty` requires a number or a level name, got an empty field');
      return false;
    }
    let successes: number;
    let attempts: number;
    if (this.shape === 'per_attempt') {
      const hit = this.numberField(fields, 'hit', line);
      if (hit === undefined) return false;
      if (hit !== 0 && hit !== 1) return this.reject(line, 'hit', 'out_of_range', '0 or 1', hit);
      successes = hit;
      attempts = 1;
    } else {
      const hits = this.numberField(fields, 'hits', line);
      if (hits === undefined) return false;
      const tries = this.numberField(fields, 'attempts', line);
      if (tries === undefined) return false;
      if (!Number.isInteger(tries) || tries < 1) return this.reject(line, 'attempts', 'out_of_range', 'a whole number >= 1', tries);
      if (!Number.isInteger(hits) || hits < 0) return this.reject(line, 'hits', 'out_of_range', 'a whole number >= 0', hits);
      if (hits > tries) return this.reject(line, 'hits', 'out_of_range', `at most \`attempts\` (${tries})`, hits);
      successes = hits;
      attempts = tries;
    }
    let weight = 1;
    if (this.columnIndex.has('weight')) {
      const value = this.numberField(fields, 'weight', line);
      if (value === undefined) return false;
      if (value < 0) return this.reject(line, 'weight', 'out_of_range', 'a weight >= 0', value);
      weight = value;
    }
    if (this.columnIndex.has('player')) {
      const id = (fields[this.columnIndex.get('player') ?? -1] ?? '').trim();
      if (id === '') {
        this.failure = error('empty_field', this.where(line, 'player'), '`player` requires a player id, got an empty field');
        return false;
      }
      this.player.push(id);
    }
    this.latency.push(latency);
    this.scale.push(scale);
    this.difficulty.push(difficultyText);
    this.successes.push(successes);
    this.attempts.push(attempts);
    if (this.columnIndex.has('weight')) this.weight.push(weight);
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

/** The csv-parse options every trials read uses. */
export function csvOptions(delimiter: ',' | ';' | '\t') {
  return {
    bom: true,
    delimiter,
    info: true,
    skip_empty_lines: true,
    relax_column_count: true,
    max_record_size: MAX_CSV_LINE_BYTES,
  } as const;
}

/** Turn a csv-parse error into an issue that names the file and line. */
export function csvErrorIssue(file: string, cause: unknown): Issue {
  const record = cause as { code?: string; lines?: number; message?: string };
  const line = record.lines ?? 0;
  if (record.code === 'CSV_MAX_RECORD_SIZE') {
    return error('line_too_long', `${file}:${line}`, `a line requires at most ${MAX_CSV_LINE_BYTES} bytes (the documented limit), got a longer one`);
  }
  return error('invalid_csv', `${file}:${line}`, `the file requires well-formed CSV: ${record.message ?? String(cause)}`);
}

interface ParsedRecord {
  record: string[];
  info: { lines: number };
}

/** Parse trials from CSV text already in memory (tests, small files, payloads). */
export function parseTrialsCsv(text: string, file = 'trials.csv'): Result<Trials> {
  const firstLine = text.replace(/^\uFEFF/, '').split(/\r?\n/, 1)[0] ?? '';
  if (text.replace(/^\uFEFF/, '').trim() === '') {
    return fail([error('empty_file', file, 'a trials file requires a header line and rows, got an empty file')]);
  }
  const delimiter = detectDelimiter(firstLine);
  const builder = new TrialsBuilder(file);
  let records: ParsedRecord[];
  try {
    records = parseCsvSync(text, csvOptions(delimiter)) as unknown as ParsedRecord[];
  } catch (cause) {
    return fail([csvErrorIssue(file, cause)]);
  }
  const [head, ...rest] = records;
  if (head === undefined) return fail([error('empty_file', file, 'a trials file requires a header line and rows, got an empty file')]);
  if (!builder.header(head.record, head.info.lines, delimiter)) return builder.finish();
  for (const { record, info } of rest) {
    if (!builder.row(record, info.lines)) break;
  }
  return builder.finish();
}
