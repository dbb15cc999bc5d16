import fc from 'fast-check';
import { inv, multiply } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { waldTest } from '../../src/plan/wald-test.js';

describe('waldTest()', () => {
  it('is z squared for one coefficient (0.5 with SE 0.25: W = 4, p = 0.0455)', () => {
    const test = waldTest([1, 0.5], [1, 0, 0, 0.0625], [1]);
    expect(test?.statistic).toBeCloseTo(4, 12);
    expect(test?.pValue).toBeCloseTo(0.0455003, 6); // 2 (1 - pnorm(2)) = 0.04550026 (R: 2 * pnorm(-2))
  });

  it("equals b' V^-1 b computed with mathjs's inverse (property, 100 runs)", () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: -3, max: 3, noNaN: true }), { minLength: 3, maxLength: 3 }), fc.array(fc.double({ min: -1, max: 1, noNaN: true }), { minLength: 9, maxLength: 9 }), (b, entries) => {
        // V = A A' + I: symmetric positive definite.
        const a = [entries.slice(0, 3), entries.slice(3, 6), entries.slice(6, 9)];
        const v = a.map((row, i) => a.map((other, j) => row.reduce((sum, value, k) => sum + value * (other[k] as number), 0) + (i === j ? 1 : 0)));
        const expected = multiply(multiply(b, inv(v)), b) as unknown as number; // mathjs (npm) as the reference
        const test = waldTest([0, ...b], [1, 0, 0, 0, 0, ...v[0] as number[], 0, ...v[1] as number[], 0, ...v[2] as number[]], [1, 2, 3]);
        expect(test?.df).toBe(3);
        expect(test?.statistic).toBeCloseTo(expected, 8);
      }),
      { seed: 2303, numRuns: 100 },
    );
  });

  it('returns null for a covariance that is not positive definite', () => {
    expect(waldTest([1, 1], [1, 1, 1, 1], [0, 1])).toBeNull();
  });
});
