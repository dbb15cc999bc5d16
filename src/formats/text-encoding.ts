/**
 * Recognising text that is not UTF-8 by its first bytes, so that a file
 * saved as UTF-16 (a common default of some editors) is named as such
 * instead of failing as garbled JSON or CSV: by its byte-order mark (Unicode
 * Standard, section 23.8: FF FE little-endian, FE FF big-endian; FF FE 00 00
 * and 00 00 FE FF for UTF-32), or without one by NUL bytes where ASCII text
 * has them: three of every four bytes in UTF-32, every other byte in UTF-16.
 */

export type ForeignEncoding = 'UTF-16 little-endian' | 'UTF-16 big-endian' | 'UTF-32';

export function foreignEncoding(bytes: Uint8Array): ForeignEncoding | null {
  const [a, b, c, d] = bytes;
  if ((a === 0xff && b === 0xfe && c === 0 && d === 0) || (a === 0 && b === 0 && c === 0xfe && d === 0xff)) return 'UTF-32';
  if (a === 0xff && b === 0xfe) return 'UTF-16 little-endian';
  if (a === 0xfe && b === 0xff) return 'UTF-16 big-endian';
  if (utf32WithoutMark(bytes)) return 'UTF-32';
  const length = Math.min(bytes.length, 64) & ~1;
  if (length < 4) return null;
  let evenZeros = 0;
  let oddZeros = 0;
  for (let index = 0; index < length; index += 2) {
    if (bytes[index] === 0) evenZeros += 1;
    if (bytes[index + 1] === 0) oddZeros += 1;
  }
  const pairs = length / 2;
  if (oddZeros >= pairs * 0.75 && evenZeros === 0) return 'UTF-16 little-endian';
  if (evenZeros >= pairs * 0.75 && oddZeros === 0) return 'UTF-16 big-endian';
  return null;
}

/** ASCII characters as UTF-32 (either byte order): in each group of four bytes, three NULs and one other byte, always in the same place. */
function utf32WithoutMark(bytes: Uint8Array): boolean {
  const length = Math.min(bytes.length, 64) & ~3;
  if (length < 8) return false;
  let littleEndian = true;
  let bigEndian = true;
  for (let index = 0; index < length; index += 4) {
    const [a, b, c, d] = bytes.subarray(index, index + 4);
    if (!(b === 0 && c === 0)) return false;
    littleEndian &&= a !== 0 && d === 0;
    bigEndian &&= a === 0 && d !== 0;
  }
  return littleEndian || bigEndian;
}

/** The message of a file in another encoding. */
export function foreignEncodingMessage(encoding: ForeignEncoding): string {
  return `the file requires UTF-8 text, got ${encoding} text: save it as UTF-8 (in most editors, "Save with encoding")`;
}

/**
 * Offset of the first byte that does not begin a well-formed UTF-8 sequence
 * (Unicode Standard, Table 3-7: no overlong forms, no surrogates, nothing
 * above U+10FFFF, no truncated sequence), or -1 when every byte does.
 * Decoding such bytes silently yields U+FFFD, so two different ids could
 * read the same, or an id differ from what the file's author sees.
 */
export function firstInvalidUtf8(bytes: Uint8Array): number {
  const length = bytes.length;
  let at = 0;
  while (at < length) {
    const lead = bytes[at] as number;
    if (lead < 0x80) {
      at += 1;
      continue;
    }
    let size: number;
    let low = 0x80;
    let high = 0xbf;
    if (lead >= 0xc2 && lead <= 0xdf) size = 2;
    else if (lead >= 0xe0 && lead <= 0xef) {
      size = 3;
      if (lead === 0xe0) low = 0xa0;
      else if (lead === 0xed) high = 0x9f;
    } else if (lead >= 0xf0 && lead <= 0xf4) {
      size = 4;
      if (lead === 0xf0) low = 0x90;
      else if (lead === 0xf4) high = 0x8f;
    } else return at;
    if (at + size > length) return at;
    const second = bytes[at + 1] as number;
    if (second < low || second > high) return at;
    for (let next = 2; next < size; next += 1) {
      const byte = bytes[at + next] as number;
      if (byte < 0x80 || byte > 0xbf) return at;
    }
    at += size;
  }
  return -1;
}

const strictUtf8 = new TextDecoder('utf-8', { fatal: true, ignoreBOM: true });

/** The text of UTF-8 bytes, or the offset of the first byte that is not UTF-8. */
export function decodeUtf8(bytes: Uint8Array): { text: string } | { invalidAt: number } {
  try {
    return { text: strictUtf8.decode(bytes) };
  } catch {
    return { invalidAt: Math.max(0, firstInvalidUtf8(bytes)) };
  }
}

/** The message of a file with bytes that are not UTF-8, at `line` (1-based) and byte `offset`. */
export function invalidUtf8Message(bytes: Uint8Array, offset: number): { line: number; message: string } {
  let line = 1;
  for (let index = 0; index < offset; index += 1) if (bytes[index] === 10) line += 1;
  const shown = Array.from(bytes.subarray(offset, Math.min(offset + 4, bytes.length)), (byte) => byte.toString(16).toUpperCase().padStart(2, '0')).join(' ');
  return { line, message: `the file requires UTF-8 text, got bytes that are not UTF-8 at byte ${offset} (${shown}): save it as UTF-8 (in most editors, "Save with encoding")` };
}
