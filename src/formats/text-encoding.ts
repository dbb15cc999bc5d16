/**
 * Recognising text that is not UTF-8 by its first bytes, so that a file
 * saved as UTF-16 (a common default of some editors) is named as such
 * instead of failing as garbled JSON or CSV: by its byte-order mark (Unicode
 * Standard, section 23.8: FF FE little-endian, FE FF big-endian; FF FE 00 00
 * and 00 00 FE FF for UTF-32), or without one by NUL bytes in every other
 * position of the first characters, as ASCII text has in UTF-16.
 */

export type ForeignEncoding = 'UTF-16 little-endian' | 'UTF-16 big-endian' | 'UTF-32';

export function foreignEncoding(bytes: Uint8Array): ForeignEncoding | null {
  const [a, b, c, d] = bytes;
  if ((a === 0xff && b === 0xfe && c === 0 && d === 0) || (a === 0 && b === 0 && c === 0xfe && d === 0xff)) return 'UTF-32';
  if (a === 0xff && b === 0xfe) return 'UTF-16 little-endian';
  if (a === 0xfe && b === 0xff) return 'UTF-16 big-endian';
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

/** The message of a file in another encoding. */
export function foreignEncodingMessage(encoding: ForeignEncoding): string {
  return `the file requires UTF-8 text, got ${encoding} text: save it as UTF-8 (in most editors, "Save with encoding")`;
}
