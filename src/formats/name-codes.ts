/**
 * Names (difficulty levels, player ids) interned to integer codes in order of
 * first appearance, looked up from raw field bytes so that a repeated name
 * never becomes a string per row.
 *
 * The byte lookup is an open-addressing table (linear probing, Knuth, TAOCP
 * vol. 3, §6.4) on an FNV-1a hash of the bytes, holding each name's UTF-8
 * bytes for an exact comparison; it is kept at most half full and doubled as
 * names arrive. Names past {@link MAX_BYTE_NAMES} are found by their string
 * only (a file of that many distinct players is rare and still correct).
 */

import { CARRIAGE_RETURN, LINE_FEED, QUOTE, plainFieldEnd, visibleByte } from './csv-scanner.js';

/** Up to this many names are compared in turn rather than hashed. */
const FEW_NAMES = 8;

/** Names held in the byte table; later names are looked up as strings. */
const MAX_BYTE_NAMES = 1 << 16;

function hashBytes(bytes: Uint8Array, start: number, end: number): number {
  let hash = 0x811c9dc5;
  for (let k = start; k < end; k += 1) hash = Math.imul(hash ^ (bytes[k] as number), 0x01000193);
  return hash >>> 0;
}

/** Whether a name can be matched where it stands in a line: visible first and last bytes, no delimiter, quote or line end inside. */
function comparedInPlace(bytes: Uint8Array): boolean {
  if (bytes.length === 0) return false;
  if (!visibleByte(bytes[0] as number) || !visibleByte(bytes[bytes.length - 1] as number)) return false;
  for (const byte of bytes) if (byte === 0x2c || byte === 0x3b || byte === 0x09 || byte === QUOTE || byte === LINE_FEED || byte === CARRIAGE_RETURN) return false;
  return true;
}

export class NameCodes {
  readonly names: string[] = [];
  private readonly index = new Map<string, number>();
  /** UTF-8 bytes of each name in the byte table, by code. */
  private readonly known: Uint8Array[] = [];
  /** Slots of code + 1 (0: empty). */
  private table = new Int32Array(32);
  private last = -1;
  /** Names that {@link matchAt} compares where they stand (see there), and their codes. */
  private readonly direct: Uint8Array[] = [];
  private readonly directCodes: number[] = [];
  /** The code {@link matchAt} or {@link fieldAt} found. */
  matched = -1;

  private matches(code: number, bytes: Uint8Array, start: number, end: number): boolean {
    const name = this.known[code];
    if (name === undefined || name.length !== end - start) return false;
    for (let k = 0; k < name.length; k += 1) if (name[k] !== bytes[start + k]) return false;
    return true;
  }

  /** The code of the name whose UTF-8 bytes are `bytes[start, end)`, or -1 if the byte table does not hold it. */
  codeOfBytes(bytes: Uint8Array, start: number, end: number): number {
    const last = this.last;
    if (last >= 0 && this.matches(last, bytes, start, end)) return last;
    const known = this.known;
    if (known.length <= FEW_NAMES) {
      // A few names (difficulty levels): compared in turn, most rejected by length or first byte.
      const length = end - start;
      const first = bytes[start];
      for (let code = 0; code < known.length; code += 1) {
        const name = known[code] as Uint8Array;
        if (name.length === length && name[0] === first && this.matches(code, bytes, start, end)) {
          this.last = code;
          return code;
        }
      }
      return -1;
    }
    return this.probe(bytes, start, end);
  }

  private probe(bytes: Uint8Array, start: number, end: number): number {
    const mask = this.table.length - 1;
    for (let slot = hashBytes(bytes, start, end) & mask; ; slot = (slot + 1) & mask) {
      const entry = this.table[slot] as number;
      if (entry === 0) return -1;
      if (this.matches(entry - 1, bytes, start, end)) {
        this.last = entry - 1;
        return entry - 1;
      }
    }
  }

  /**
   * Index past a plain field at `bytes[start]` that holds a known name, with
   * its code in {@link matched}; -1 when the field is not plain (it needs
   * trimming, or a quote ends it) or its name is not known by its bytes.
   * The field ends at the first delimiter, CR, LF or quote (or `length`).
   * Try {@link matchAt} first: it compares a few names where they stand.
   */
  fieldAt(bytes: Uint8Array, start: number, length: number, delimiter: number): number {
    const end = plainFieldEnd(bytes, start, length, delimiter);
    if (end === start || !visibleByte(bytes[start] as number) || !visibleByte(bytes[end - 1] as number)) return -1;
    const code = this.codeOfBytes(bytes, start, end);
    if (code < 0) return -1;
    this.matched = code;
    return end;
  }

  /**
   * Index past the field when one of the first {@link FEW_NAMES} names
   * stands at `bytes[start]` followed by `delimiter`, CR or LF before
   * `length`, with its code in {@link matched}; else -1. Only names with
   * visible first and last bytes and none of `,;\t"` CR LF inside are
   * compared, so a match is exactly the field that scanning to the next
   * delimiter would give.
   */
  matchAt(bytes: Uint8Array, start: number, length: number, delimiter: number): number {
    // Every read stays inside `bytes`: one past the end would send the optimised code back to the interpreter.
    if (start >= length) return -1;
    const direct = this.direct;
    const first = bytes[start];
    for (let k = 0; k < direct.length; k += 1) {
      const name = direct[k] as Uint8Array;
      if (name[0] !== first) continue;
      const end = start + name.length;
      if (end >= length) continue;
      let at = 1;
      while (at < name.length && name[at] === bytes[start + at]) at += 1;
      if (at < name.length) continue;
      const next = bytes[end];
      if (next === delimiter || next === LINE_FEED || next === CARRIAGE_RETURN) {
        this.matched = this.directCodes[k] as number;
        return end;
      }
    }
    return -1;
  }

  private remember(code: number, bytes: Uint8Array): void {
    if (code !== this.known.length || code >= MAX_BYTE_NAMES) return;
    if (code < FEW_NAMES && comparedInPlace(bytes)) {
      this.direct.push(bytes);
      this.directCodes.push(code);
    }
    this.known.push(bytes);
    if (2 * this.known.length > this.table.length) {
      this.table = new Int32Array(this.table.length * 2);
      this.known.forEach((name, known) => this.place(known, name));
    } else this.place(code, bytes);
  }

  private place(code: number, bytes: Uint8Array): void {
    const mask = this.table.length - 1;
    let slot = hashBytes(bytes, 0, bytes.length) & mask;
    while (this.table[slot] !== 0) slot = (slot + 1) & mask;
    this.table[slot] = code + 1;
  }

  /** The code of a plain field (no trimming or unescaping needed) by its bytes, interned if new. */
  codeOfPlainBytes(bytes: Uint8Array, start: number, end: number): number {
    const code = this.codeOfBytes(bytes, start, end);
    return code >= 0 ? code : this.intern(Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength).toString('utf8', start, end));
  }

  /** The code of a name, interned (in order of first appearance) if it is new. */
  intern(name: string): number {
    let code = this.index.get(name);
    if (code === undefined) {
      code = this.names.length;
      this.names.push(name);
      this.index.set(name, code);
      this.remember(code, Buffer.from(name, 'utf8'));
    }
    return code;
  }

}
