/**
 * compileModel's positive semi-definiteness check, against the eigenvalues
 * mathjs computes (mathjs `eigs`, a general-purpose reference from the npm
 * registry): a symmetric matrix is PSD iff its smallest eigenvalue is >= 0.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { eigs } from 'mathjs';
import { join } from 'node:path';
import { compileModel } from '../../src/model/compile.js';
import { MATCHES, readJson } from '../helpers/demo.js';

const demo = readJson(join(MATCHES, 'ground-truth.model.json')) as { coefficients: { covariance: number[][] } };

function accepts(matrix: number[][]): boolean {
  const model = structuredClone(demo);
  model.coefficients.covariance = matrix;
  return compileModel(model).ok;
}

describe('compileModel() covariance check', () => {
  it('agrees with the sign of the smallest eigenvalue from mathjs (fast-check, 300 runs, seed 11)', () => {
    const entry = fc.integer({ min: -4, max: 4 });
    let decided = 0;
    fc.assert(
      fc.property(fc.array(fc.array(entry, { minLength: 6, maxLength: 6 }), { minLength: 6, maxLength: 6 }), fc.integer({ min: 0, max: 6 }), (factor, rank) => {
        // covariance = B B' (PSD, rank <= `rank`) minus a shift that may make it indefinite
        const columns = factor.map((row) => row.slice(0, rank));
        const matrix = columns.map((left) => columns.map((right) => left.reduce((sum, value, index) => sum + value * (right[index] ?? 0), 0)));
        const shift = rank % 2 === 0 ? 0 : 0.5;
        const shifted = matrix.map((row, i) => row.map((value, j) => (i === j ? value - shift : value)));
        const smallest = Math.min(...(eigs(shifted).values as number[]));
        const scale = Math.max(1, ...shifted.map((row, i) => Math.abs(row[i] ?? 0)));
        if (Math.abs(smallest) < 1e-6 * scale) return; // too close to the boundary to call
        decided += 1;
        expect(accepts(shifted)).toBe(smallest > 0);
      }),
      { seed: 11, numRuns: 300 },
    );
    expect(decided).toBeGreaterThan(100);
  });

  it('accepts a singular positive semi-definite covariance (rank 2 of 6)', () => {
    const vectors = [[1, 2, 0, -1, 0, 3], [0, 1, 1, 0, -2, 1]];
    const matrix = Array.from({ length: 6 }, (_, i) => Array.from({ length: 6 }, (__, j) => vectors.reduce((sum, vector) => sum + (vector[i] ?? 0) * (vector[j] ?? 0), 0)));
    expect(Math.min(...(eigs(matrix).values as number[]))).toBeGreaterThan(-1e-9); // mathjs: PSD
    expect(accepts(matrix)).toBe(true);
  });
});
