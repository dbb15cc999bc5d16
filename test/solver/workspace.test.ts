import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { EXCESS_OVER_ONE, PLAIN, SQUARES, orderFreeSum } from '../../src/solver/workspace.js';

describe('orderFreeSum()', () => {
  it('property (300 seeded runs): equals the exact sum (bigint rationals) rounded once, in any order', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: 1, maxLength: 200 }), fc.integer({ min: 0, max: 1000 }), (values, shift) => {
        // Exact reference: every double in [0, 1] is an integer multiple of 2^-1074.
        const exact = values.reduce((sum, value) => sum + toScaled(value), 0n);
        const reference = scaledToNumber(exact);
        const rotated = values.map((_, index) => values[(index + shift) % values.length] as number);
        const sum = orderFreeSum(Float64Array.from(values), values.length, PLAIN);
        expect(orderFreeSum(Float64Array.from(rotated), rotated.length, PLAIN)).toBe(sum);
        expect(Math.abs(sum - reference)).toBeLessThanOrEqual(2 * Number.EPSILON * Math.max(reference, Number.MIN_VALUE)); // exact rational sum
      }),
      { seed: 4401, numRuns: 300 },
    );
  });

  it('adds squares and excesses over 1 as their definitions say', () => {
    expect(orderFreeSum([0.5, 0.25], 2, SQUARES)).toBe(0.3125); // 1/4 + 1/16
    expect(orderFreeSum([0.8, 1.25, 2], 3, EXCESS_OVER_ONE)).toBe(1.25); // 0 + 0.25 + 1
    expect(orderFreeSum([3, 4, 99], 2, PLAIN)).toBe(7); // only the first `count`
  });
});

/** value x 2^1074 as a bigint (exact for every double). */
function toScaled(value: number): bigint {
  if (value === 0) return 0n;
  let exponent = 0;
  let mantissa = value;
  while (!Number.isInteger(mantissa)) {
    mantissa *= 2;
    exponent += 1;
  }
  return BigInt(mantissa) * 2n ** BigInt(1074 - exponent);
}

/** A bigint multiple of 2^-1074 back to the nearest double (60 leading bits, then one rounding). */
function scaledToNumber(scaled: bigint): number {
  const bits = scaled.toString(2).length;
  if (bits <= 53) return Number(scaled) * Number.MIN_VALUE;
  const drop = bits - 60;
  return Number(scaled >> BigInt(drop)) * 2 ** (drop - 537) * 2 ** -537;
}
