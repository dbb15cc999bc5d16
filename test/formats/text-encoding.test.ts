import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { decodeUtf8, firstInvalidUtf8, foreignEncoding, invalidUtf8Message } from '../../src/formats/text-encoding.js';

const bytes = (...values: number[]) => Uint8Array.from(values);

describe('firstInvalidUtf8()', () => {
  it.each([
    ['a lone continuation byte', [0x61, 0x80], 1],
    ['an overlong slash (C0 AF)', [0x61, 0xc0, 0xaf], 1],
    ['an overlong three-byte form (E0 80 AF)', [0xe0, 0x80, 0xaf], 0],
    ['a UTF-16 surrogate encoded in UTF-8 (ED A0 80)', [0x7b, 0xed, 0xa0, 0x80], 1],
    ['a code point above U+10FFFF (F4 90 80 80)', [0xf4, 0x90, 0x80, 0x80], 0],
    ['a sequence cut off at the end', [0x22, 0xe2, 0x82], 1],
    ['Latin-1 text (E9 for "é")', [0x63, 0x61, 0x66, 0xe9, 0x22], 3],
    ['FF', [0xff], 0],
  ])('finds %s', (_name, input, offset) => {
    expect(firstInvalidUtf8(bytes(...input))).toBe(offset);
  });

  it('accepts ASCII, two-, three- and four-byte characters and a byte-order mark', () => {
    expect(firstInvalidUtf8(new TextEncoder().encode('\uFEFF{"id": "é€𝄞"}'))).toBe(-1);
  });

  it('agrees with the platform decoder in fatal mode on random bytes (fast-check, 2,000 runs)', () => {
    const fatal = new TextDecoder('utf-8', { fatal: true });
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 24 }), (input) => {
        let valid = true;
        try {
          fatal.decode(input);
        } catch {
          valid = false;
        }
        expect(firstInvalidUtf8(input) === -1).toBe(valid);
      }),
      { seed: 15, numRuns: 2000 },
    );
  });
});

describe('decodeUtf8()', () => {
  it('keeps a byte-order mark for the JSON reader to strip, and names the first bad byte', () => {
    expect(decodeUtf8(bytes(0xef, 0xbb, 0xbf, 0x31))).toEqual({ text: '\uFEFF1' });
    expect(decodeUtf8(bytes(0x31, 0x0a, 0x32, 0xff))).toEqual({ invalidAt: 3 });
  });
});

describe('invalidUtf8Message()', () => {
  it('gives the line and the bytes found', () => {
    const found = invalidUtf8Message(bytes(0x7b, 0x0a, 0x0a, 0x22, 0xc0, 0xaf, 0x22), 4);
    expect(found.line).toBe(3);
    expect(found.message).toMatch(/requires UTF-8 text, got bytes that are not UTF-8 at byte 4 \(C0 AF 22\)/);
  });
});

describe('foreignEncoding()', () => {
  it('names UTF-16 and UTF-32 by their byte-order marks and UTF-16 without one', () => {
    expect(foreignEncoding(bytes(0xff, 0xfe, 0x7b, 0x00))).toBe('UTF-16 little-endian');
    expect(foreignEncoding(bytes(0xfe, 0xff, 0x00, 0x7b))).toBe('UTF-16 big-endian');
    expect(foreignEncoding(bytes(0x00, 0x00, 0xfe, 0xff))).toBe('UTF-32');
    expect(foreignEncoding(bytes(0x7b, 0x00, 0x22, 0x00, 0x61, 0x00))).toBe('UTF-16 little-endian');
    expect(foreignEncoding(new TextEncoder().encode('{"a": 1}'))).toBeNull();
  });

  it('names UTF-32 without a byte-order mark in either byte order (it was read as UTF-16)', () => {
    const text = '{"format": "x"}';
    const little = new Uint8Array(text.length * 4);
    const big = new Uint8Array(text.length * 4);
    for (let index = 0; index < text.length; index += 1) {
      little[4 * index] = text.charCodeAt(index);
      big[4 * index + 3] = text.charCodeAt(index);
    }
    expect(foreignEncoding(little)).toBe('UTF-32');
    expect(foreignEncoding(big)).toBe('UTF-32');
    expect(foreignEncoding(bytes(0x7b, 0x00, 0x22, 0x00, 0x61, 0x00, 0x22, 0x00))).toBe('UTF-16 little-endian');
  });
});
