import { describe, expect, it } from 'vitest';
import { designMatrixFromColumns, interceptColumn } from '../../src/numeric/design-matrix.js';
import { householderQr, inverseCrossProduct, solveLeastSquares } from '../../src/numeric/householder-qr.js';
import { reduceWeightedRows } from '../../src/numeric/row-reduction.js';
import { certifiedValue, numberColumn, readTable, relativeError } from '../helpers/glm-fixtures.js';

function longley() {
  const table = readTable('longley.csv');
  const design = designMatrixFromColumns([
    interceptColumn(table.rows.length),
    ...['x1', 'x2', 'x3', 'x4', 'x5', 'x6'].map((name) => ({ name, values: numberColumn(table, name) })),
  ]);
  return { design, response: numberColumn(table, 'y') };
}

describe('reduceWeightedRows()', () => {
  it('solves NIST Longley to the certified coefficients within 1e-9 through the k-by-k triangle', () => {
    const { design, response } = longley();
    const reduced = reduceWeightedRows(design, null, response);
    const coefficients = solveLeastSquares(reduced.qr, reduced.effects).coefficients;
    for (let j = 0; j < 7; j += 1) {
      const certified = certifiedValue('longley', 'estimate', `B${j}`); // NIST StRD certified, Longley.dat (nist_certified.csv)
      expect(relativeError(coefficients[j] as number, certified)).toBeLessThan(1e-9); // NIST StRD certified Longley estimate
    }
    const residualSd = certifiedValue('longley', 'residual_sd'); // NIST StRD certified, Longley.dat (nist_certified.csv)
    expect(relativeError(Math.sqrt(reduced.residualSumOfSquares / (16 - 7)), residualSd)).toBeLessThan(1e-9); // NIST StRD certified residual SD
  });

  it('gives the certified Longley standard errors from (R\'R)^{-1} of the triangle', () => {
    const { design, response } = longley();
    const reduced = reduceWeightedRows(design, null, response);
    const unscaled = inverseCrossProduct(reduced.qr);
    const variance = reduced.residualSumOfSquares / 9;
    for (let j = 0; j < 7; j += 1) {
      const certified = certifiedValue('longley', 'std_error', `B${j}`); // NIST StRD certified, Longley.dat (nist_certified.csv)
      expect(relativeError(Math.sqrt(variance * (unscaled[j * 7 + j] as number)), certified)).toBeLessThan(1e-9); // NIST StRD certified SD of estimate
    }
  });

  it('agrees with the Householder QR of the sqrt-weighted rows on weighted data', () => {
    const x = Array.from({ length: 40 }, (_, i) => i / 3);
    const weights = x.map((_, i) => 1 + (i % 5));
    const response = x.map((value, i) => 2 - 0.5 * value + 0.01 * value * value + ((i * 7) % 3) / 10);
    const design = designMatrixFromColumns([interceptColumn(40), { name: 'x', values: x }, { name: 'x2', values: x.map((v) => v * v) }]);
    const reduced = reduceWeightedRows(design, weights, response);
    const scaled = new Float64Array(design.values.length);
    for (let j = 0; j < 3; j += 1) for (let i = 0; i < 40; i += 1) scaled[j * 40 + i] = (design.values[j * 40 + i] as number) * Math.sqrt(weights[i] as number);
    const direct = solveLeastSquares(householderQr(scaled, 40, 3), response.map((value, i) => value * Math.sqrt(weights[i] as number))).coefficients;
    const viaTriangle = solveLeastSquares(reduced.qr, reduced.effects).coefficients;
    for (let j = 0; j < 3; j += 1) expect(relativeError(viaTriangle[j] as number, direct[j] as number)).toBeLessThan(1e-12); // Householder QR of W^{1/2}X (Golub & Van Loan §5.3.3)
  });

  it('reports the later of two collinear columns as aliased, as the Householder QR of the rows does', () => {
    const x = Array.from({ length: 10 }, (_, i) => i);
    const design = designMatrixFromColumns([interceptColumn(10), { name: 'x', values: x }, { name: 'twice', values: x.map((v) => 2 * v + 1) }]);
    expect(reduceWeightedRows(design, null, null).qr.aliased).toEqual(householderQr(design.values, 10, 3).aliased);
    expect(reduceWeightedRows(design, null, null).qr.aliased).toEqual([2]);
  });
});
