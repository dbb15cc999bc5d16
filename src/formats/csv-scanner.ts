/**
 * A streaming RFC 4180 scanner over UTF-8 bytes (quoted fields with `""`
 * escapes, LF, CRLF or CR line ends, a UTF-8 byte-order mark). Each record is
 * a list of field byte ranges over the chunk being scanned, so nothing is
 * decoded to a string unless its reader asks. A reader that knows its
 * columns can also claim whole plain lines itself ({@link PlainLineReader}),
 * skipping the field ranges; any line it does not claim gets the full rules.
 */
import { foreignEncoding, foreignEncodingMessage } from './text-encoding.js';
import { type Issue, error } from '../issues.js';

/** Documented limit: one line at most 64 KiB. */
export const MAX_CSV_LINE_BYTES = 64 * 1024;

export const QUOTE = 0x22;
export const LINE_FEED = 0x0a;
export const CARRIAGE_RETURN = 0x0d;

/** Whether a byte is visible ASCII (not a space, control or non-ASCII byte): a field that starts and ends with one needs no trimming. */
export function visibleByte(byte: number): boolean {
  return byte > 0x20 && byte < 0x7f;
}

/** The end of an unquoted field at `bytes[start]`: the first delimiter, CR, LF or quote, or `length`. */
export function plainFieldEnd(bytes: Uint8Array, start: number, length: number, delimiter: number): number {
  let i = start;
  while (i < length) {
    const byte = bytes[i] as number;
    if (byte === delimiter || byte === LINE_FEED || byte === CARRIAGE_RETURN || byte === QUOTE) break;
    i += 1;
  }
  return i;
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

/**
 * A streaming RFC 4180 scanner over UTF-8 bytes: feed it chunks in order
 * ({@link push}), then {@link end}. Each record goes to `onRecord` with the
 * line it starts on; empty lines are skipped; a record longer than
 * {@link MAX_CSV_LINE_BYTES} is refused as soon as that many bytes are seen.
 * Only the unfinished last record of a chunk is kept (copied) for the next.
 */
/**
 * A reader that claims whole plain lines before the scanner splits them into
 * fields. `readPlainLine` looks at the line starting at `start` (the bytes
 * end at `length`); if the line is one it reads in full (it ends with LF or
 * CRLF inside the bytes, and every field is one it takes as it stands), it
 * takes the row and returns the index just past the line end; otherwise it
 * returns -1 with nothing taken, and the scanner reads the line by the full
 * rules (quotes, a line end in the next chunk, an error with its line).
 */
export interface PlainLineReader {
  readPlainLine(bytes: Uint8Array, start: number, length: number): number;
}

export class CsvScanner {
  /** Set by the record callback to claim the plain lines that follow (see {@link PlainLineReader}). */
  plainLines: PlainLineReader | null = null;
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
    // A plain Uint8Array view whatever the caller passes (a Buffer, a subarray), so the
    // scanning loops see one kind of array and stay monomorphic.
    let bytes = chunk.constructor === Uint8Array ? chunk : new Uint8Array(chunk.buffer, chunk.byteOffset, chunk.byteLength);
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

  /** Whether the bytes pushed so far end exactly where a record ends (nothing carried over, not stopped). */
  atRecordEnd(): boolean {
    return !this.stopped && !this.first && this.carry === null;
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
      const encoding = foreignEncoding(bytes);
      if (encoding !== null) {
        this.failure = error('wrong_encoding', this.file, foreignEncodingMessage(encoding));
        this.stopped = true;
        return;
      }
      if (bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf) position = 3;
    }
    const length = bytes.length;
    const delimiter = this.delimiter;
    const record = this.record;
    record.bytes = bytes;
    while (position < length) {
      if (this.plainLines !== null) {
        const end = this.plainLines.readPlainLine(bytes, position, length);
        if (end >= 0) {
          this.line += 1;
          position = end;
          continue;
        }
      }
      const recordStart = position;
      const startLine = this.line;
      let lines = 0;
      record.count = 0;
      let i = position;
      let complete = false;
      const limit = recordStart + MAX_CSV_LINE_BYTES;
      // One field per turn.
      for (;;) {
        if (i < length && bytes[i] === QUOTE) {
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
