import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { householderQr, inverseCrossProduct, solveLeastSquares } from '../../src/numeric/householder-qr.js';

/** Column-major values from row arrays. */
function columnMajor(rows: readonly (readonly number[])[]): Float64Array {
  const rowCount = rows.length;
  const columnCount = rows[0]?.length ?? 0;
  const values = new Float64Array(rowCount * columnCount);
  rows.forEach((row, i) => row.forEach((value, j) => (values[j * rowCount + i] = value)));
  return values;
}

describe('householderQr()', () => {
  const line = columnMajor([
    [1, 0],
    [1, 1],
    [1, 2],
  ]);

  it('gives (X\'X)^{-1} of a 3-by-2 design to 15 digits', () => {
    const inverse = inverseCrossProduct(householderQr(line, 3, 2));
    // X'X = [[3, 3], [3, 5]], det 6, so (X'X)^{-1} = [[5/6, -1/2], [-1/2, 1/2]] (exact arithmetic by hand).
    expect(inverse[0]).toBeCloseTo(5 / 6, 15); // exact inverse of [[3, 3], [3, 5]]
    expect(inverse[1]).toBeCloseTo(-1 / 2, 15); // exact inverse of [[3, 3], [3, 5]]
    expect(inverse[2]).toBeCloseTo(-1 / 2, 15); // exact inverse of [[3, 3], [3, 5]]
    expect(inverse[3]).toBeCloseTo(1 / 2, 15); // exact inverse of [[3, 3], [3, 5]]
  });

  it('solves a consistent system exactly to rounding, with zero residuals', () => {
    const solution = solveLeastSquares(householderQr(line, 3, 2), [2, 5, 8]);
    expect(solution.coefficients[0]).toBeCloseTo(2, 14); // y = 2 + 3x by construction
    expect(solution.coefficients[1]).toBeCloseTo(3, 14); // y = 2 + 3x by construction
    solution.residuals.forEach((value) => expect(Math.abs(value)).toBeLessThan(1e-14)); // consistent system: exact residual 0
  });

  it('gives the textbook least-squares line through (0,1), (1,1), (2,4)', () => {
    const solution = solveLeastSquares(householderQr(line, 3, 2), [1, 1, 4]);
    // Normal equations by hand: [[3,3],[3,5]] b = [6, 9] -> b = (1/2, 3/2).
    expect(solution.coefficients[0]).toBeCloseTo(0.5, 14); // exact solution of [[3,3],[3,5]] b = [6,9]
    expect(solution.coefficients[1]).toBeCloseTo(1.5, 14); // exact solution of [[3,3],[3,5]] b = [6,9]
    expect(solution.fitted[2]).toBeCloseTo(3.5, 14); // 0.5 + 1.5 * 2
  });

  it('reports the later of two collinear columns as aliased, keeping order', () => {
    const values = columnMajor([
      [1, 1, 2, 5],
      [1, 2, 4, 3],
      [1, 3, 6, 1],
      [1, 4, 8, 0],
    ]);
    const qr = householderQr(values, 4, 4);
    expect(qr.rank).toBe(3);
    expect(qr.aliased).toEqual([2]);
    expect(Array.from(qr.pivot)).toEqual([0, 1, 3, 2]);
    const inverse = inverseCrossProduct(qr);
    for (let j = 0; j < 4; j += 1) expect(inverse[2 * 4 + j]).toBe(0);
  });

  it('reports a zero column and columns beyond the row count as aliased', () => {
    expect(householderQr(columnMajor([[1, 0], [2, 0], [3, 0]]), 3, 2).aliased).toEqual([1]);
    const wide = householderQr(columnMajor([[1, 2, 3], [4, 5, 7]]), 2, 3);
    expect(wide.rank).toBe(2);
    expect(wide.aliased).toEqual([2]);
  });

  it('is exactly equivariant under power-of-two column scaling', () => {
    const response = [1, 1, 4];
    const base = solveLeastSquares(householderQr(line, 3, 2), response).coefficients;
    const small = Float64Array.from(line);
    for (let i = 3; i < 6; i += 1) small[i] = (small[i] as number) * 2 ** -1000;
    const scaled = solveLeastSquares(householderQr(small, 3, 2), response).coefficients;
    expect(scaled[0]).toBe(base[0]);
    expect((scaled[1] as number) * 2 ** -1000).toBe(base[1]);
  });

  it('keeps the rank of a column of subnormal entries', () => {
    const subnormal = Float64Array.from(line);
    for (let i = 3; i < 6; i += 1) subnormal[i] = (subnormal[i] as number) * 2 ** -1060;
    expect(householderQr(subnormal, 3, 2).rank).toBe(2);
  });

  it('leaves residuals orthogonal to every column (200 seeded runs)', () => {
    const matrix = fc.array(fc.array(fc.integer({ min: -50, max: 50 }), { minLength: 3, maxLength: 3 }), {
      minLength: 5,
      maxLength: 10,
    });
    const property = fc.property(matrix, fc.array(fc.integer({ min: -100, max: 100 }), { minLength: 10, maxLength: 10 }), (rows, y) => {
      const values = columnMajor(rows.map((row) => row.map((value) => value / 10)));
      const qr = householderQr(values, rows.length, 3);
      const response = y.slice(0, rows.length);
      const { residuals } = solveLeastSquares(qr, response);
      for (const j of Array.from(qr.pivot.subarray(0, qr.rank))) {
        let dot = 0;
        let scale = 0;
        for (let i = 0; i < rows.length; i += 1) {
          dot += (values[j * rows.length + i] as number) * (residuals[i] as number);
          scale += Math.abs((values[j * rows.length + i] as number) * (response[i] as number));
        }
        expect(Math.abs(dot)).toBeLessThan(1e-12 * (scale + 1)); // X'r = 0 characterises least squares
      }
    });
    fc.assert(property, { seed: 42, numRuns: 200 });
  });
});
