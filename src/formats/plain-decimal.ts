/**
 * Decimal numbers in trials fields: the strict grammar every field is held to
 * (no hex, no empty string, no `Infinity`), and a byte-level scan of plain
 * decimals (at most 15 digits) for the reader's one-pass plain lines, exact
 * by the fast path of Clinger, W. D. (1990), How to read floating point
 * numbers accurately, *PLDI '90*, 92-101: with at most 15 digits the
 * mantissa and 10^f are exact doubles, so one correctly rounded division
 * gives the same double as `Number(text)`.
 */

const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/** A strictly decimal number, or undefined: no hex, no empty string, no `Infinity`. */
export function parseDecimal(text: string): number | undefined {
  const trimmed = text.trim();
  if (!DECIMAL.test(trimmed)) return undefined;
  const value = Number(trimmed);
  return Number.isFinite(value) ? value : undefined;
}

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
export const scanned = new Float64Array(1);

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
export function scanDecimal(bytes: Uint8Array, start: number, end: number): number {
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
export function plainDecimal(bytes: Uint8Array, start: number, end: number): number | undefined {
  return scanDecimal(bytes, start, end) === end ? (scanned[0] as number) : undefined;
}
