import { describe, expect, it } from 'vitest';
import { choleskySolve } from '../../src/numeric/cholesky.js';

describe('choleskySolve()', () => {
  it('solves a 2-by-2 positive definite system', () => {
    // [[4, 2], [2, 3]]^{-1} = [[3, -2], [-2, 4]] / 8, times (2, 1) = (0.5, 0) (by hand).
    const solution = choleskySolve(Float64Array.of(4, 2, 2, 3), [2, 1]);
    expect(solution?.[0]).toBeCloseTo(0.5, 15); // exact inverse by hand
    expect(solution?.[1]).toBeCloseTo(0, 15); // exact inverse by hand
  });

  it('returns null for an indefinite matrix', () => {
    expect(choleskySolve(Float64Array.of(1, 2, 2, 1), [1, 1])).toBeNull();
  });
});
