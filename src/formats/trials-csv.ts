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
 *
 * This file: the delimiter, the reader that feeds the scanner's records to
 * the builder, and the in-memory parse. The row rules and the plain line:
 * `trials-builder.ts`; plain decimals: `plain-decimal.ts`; the column types,
 * the sink's types and the limits: `trials-types.ts`.
 */
import { type Issue, type Result, error, fail } from '../issues.js';
import { CsvScanner } from './csv-scanner.js';
import { TrialsBuilder } from './trials-builder.js';
import type { TrialSinkOptions, Trials, TrialsSource } from './trials-types.js';

export { MAX_CSV_LINE_BYTES } from './csv-scanner.js';

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

  /**
   * Whether the bytes pushed so far hold the header and end exactly at the end of a line, with no
   * failure: rows read elsewhere from the lines after may be added then (see
   * `TrialsBuilder.addReadRows`).
   */
  atLineEnd(): boolean {
    return this.headerSeen && this.builder.failure === undefined && this.scanner.atRecordEnd();
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
