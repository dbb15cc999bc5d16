import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { jainIndex } from '../../src/stats/jain-index.js';

describe('jainIndex()', () => {
  it.each([1, 2, 7, 100])('is 1 for %s equal shares', (count) => {
    expect(jainIndex(new Array<number>(count).fill(0.37))).toBe(1); // definition: (n x)² / (n · n x²) = 1
  });

  it.each([2, 3, 10, 64])('is 1/n when one of %s players takes everything', (count) => {
    const shares = new Array<number>(count).fill(0);
    shares[count - 1] = 5;
    expect(jainIndex(shares)).toBeCloseTo(1 / count, 15); // definition: x² / (n x²) = 1/n
  });

  it.each([
    [1, 4],
    [3, 4],
    [2, 5],
    [7, 10],
  ])('is k/n when %s of %s players share equally and the rest get nothing', (sharing, count) => {
    const shares = Array.from({ length: count }, (_, index) => (index < sharing ? 2.5 : 0));
    expect(jainIndex(shares)).toBeCloseTo(sharing / count, 15); // definition: (k x)² / (n k x²) = k/n
  });

  it('does not depend on the scale of the shares, even near overflow and underflow', () => {
    const shares = [1, 2, 3, 4];
    const expected = 100 / (4 * 30); // definition: (1 + 2 + 3 + 4)² / (4 (1 + 4 + 9 + 16))
    expect(jainIndex(shares)).toBeCloseTo(expected, 15);
    expect(jainIndex(shares.map((share) => share * 1e300))).toBeCloseTo(expected, 15); // same definition; Σx² would overflow unscaled
    expect(jainIndex(shares.map((share) => share * 1e-300))).toBeCloseTo(expected, 15); // same definition; Σx² would underflow unscaled
  });

  it('defines all-zero shares as 1 (every share is equal)', () => {
    expect(jainIndex([0, 0, 0])).toBe(1);
  });

  it('property (300 seeded runs): lies in [1/n, 1] and is unchanged by permutation', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: 0, max: 1e6, noNaN: true }), { minLength: 1, maxLength: 40 }), (shares) => {
        const index = jainIndex(shares);
        expect(index).toBeLessThanOrEqual(1);
        expect(index).toBeGreaterThanOrEqual(1 / shares.length - 1e-15);
        expect(jainIndex([...shares].reverse())).toBeCloseTo(index, 12);
      }),
      { seed: 1984, numRuns: 300 },
    );
  });

  it('throws a RangeError for empty, negative and non-finite input', () => {
    expect(() => jainIndex([])).toThrow(new RangeError('`values` requires at least one number, got an empty list'));
    expect(() => jainIndex([1, -0.5])).toThrow(new RangeError('`values[1]` requires a finite number >= 0, got -0.5'));
    expect(() => jainIndex([Number.POSITIVE_INFINITY])).toThrow(new RangeError('`values[0]` requires a finite number >= 0, got Infinity'));
    expect(() => jainIndex([Number.NaN])).toThrow(new RangeError('`values[0]` requires a finite number >= 0, got NaN'));
  });
});
