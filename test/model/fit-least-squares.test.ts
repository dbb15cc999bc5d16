import { describe, expect, it } from 'vitest';
import { fitLeastSquares, type LeastSquaresFitted } from '../../src/model/fit-least-squares.js';
import { designMatrixFromColumns, interceptColumn } from '../../src/numeric/design-matrix.js';
import {
  certifiedValue,
  numberColumn,
  readTable,
  referenceValue,
  relativeError,
} from '../helpers/glm-fixtures.js';

function fitted(fit: ReturnType<typeof fitLeastSquares>): LeastSquaresFitted {
  if (fit.status !== 'fitted') throw new Error(`expected a fit, got ${fit.status}`);
  return fit;
}

function nistFit(file: string, predictors: readonly string[]): LeastSquaresFitted {
  const table = readTable(file);
  const design = designMatrixFromColumns([
    interceptColumn(table.rows.length),
    ...predictors.map((name) => ({ name, values: numberColumn(table, name) })),
  ]);
  return fitted(fitLeastSquares({ design, response: numberColumn(table, 'y') }));
}

describe('fitLeastSquares()', () => {
  it('matches the certified NIST Longley coefficients and SEs to 9 digits', () => {
    const fit = nistFit('longley.csv', ['x1', 'x2', 'x3', 'x4', 'x5', 'x6']);
    for (let j = 0; j < 7; j += 1) {
      const estimate = certifiedValue('longley', 'estimate', `B${j}`); // NIST StRD certified, Longley.dat (nist_certified.csv)
      const standardError = certifiedValue('longley', 'std_error', `B${j}`); // NIST StRD certified, Longley.dat (nist_certified.csv)
      expect(relativeError(fit.coefficients[j] as number, estimate)).toBeLessThan(1e-9); // NIST StRD certified Longley estimate, nist_certified.csv
      expect(relativeError(fit.standardErrors?.[j] as number, standardError)).toBeLessThan(1e-9); // NIST StRD certified Longley SD of estimate, nist_certified.csv
    }
  });

  it('matches the certified NIST Longley residual SD and R² to 9 digits', () => {
    const fit = nistFit('longley.csv', ['x1', 'x2', 'x3', 'x4', 'x5', 'x6']);
    const residualSd = certifiedValue('longley', 'residual_sd'); // NIST StRD certified, Longley.dat (nist_certified.csv)
    const rSquared = certifiedValue('longley', 'r_squared'); // NIST StRD certified, Longley.dat (nist_certified.csv)
    expect(relativeError(fit.residualStandardDeviation as number, residualSd)).toBeLessThan(1e-9); // NIST StRD certified Longley residual SD, nist_certified.csv
    expect(relativeError(fit.rSquared as number, rSquared)).toBeLessThan(1e-9); // NIST StRD certified Longley R², nist_certified.csv
    expect(fit.dfResidual).toBe(9); // NIST StRD certified residual df, Longley.dat
  });

  it('matches the certified NIST Norris coefficients to 12 digits and SEs, residual SD, R² to 10', () => {
    const fit = nistFit('norris.csv', ['x']);
    for (let j = 0; j < 2; j += 1) {
      const estimate = certifiedValue('norris', 'estimate', `B${j}`); // NIST StRD certified, Norris.dat (nist_certified.csv)
      const standardError = certifiedValue('norris', 'std_error', `B${j}`); // NIST StRD certified, Norris.dat (nist_certified.csv)
      expect(relativeError(fit.coefficients[j] as number, estimate)).toBeLessThan(1e-12); // NIST StRD certified Norris estimate, nist_certified.csv
      expect(relativeError(fit.standardErrors?.[j] as number, standardError)).toBeLessThan(1e-10); // NIST StRD certified Norris SD of estimate, nist_certified.csv
    }
    const residualSd = certifiedValue('norris', 'residual_sd'); // NIST StRD certified, Norris.dat (nist_certified.csv)
    const rSquared = certifiedValue('norris', 'r_squared'); // NIST StRD certified, Norris.dat (nist_certified.csv)
    expect(relativeError(fit.residualStandardDeviation as number, residualSd)).toBeLessThan(1e-10); // NIST StRD certified Norris residual SD, nist_certified.csv
    expect(relativeError(fit.rSquared as number, rSquared)).toBeLessThan(1e-12); // NIST StRD certified Norris R², nist_certified.csv
  });

  it('matches R sandwich CR1 standard errors on the clustered data to 1e-8', () => {
    const table = readTable('clustered_binomial.csv');
    const design = designMatrixFromColumns([
      interceptColumn(table.rows.length),
      { name: 'x1', values: numberColumn(table, 'x1') },
      { name: 'x2', values: numberColumn(table, 'x2') },
    ]);
    const fit = fitted(
      fitLeastSquares({ design, response: numberColumn(table, 'yc'), clusters: numberColumn(table, 'g') }),
    );
    const model = 'ols_yc~x1+x2';
    const terms = ['(Intercept)', 'x1', 'x2'];
    terms.forEach((term, j) => {
      const estimate = referenceValue('clustered_robust_r.csv', 'clustered', model, 'estimate', term); // R 4.2.2 lm, clustered_robust_r.csv
      const modelSe = referenceValue('clustered_robust_r.csv', 'clustered', model, 'se_model_based', term); // R 4.2.2 lm, clustered_robust_r.csv
      const robustSe = referenceValue('clustered_robust_r.csv', 'clustered', model, 'se_CR1_G_and_n_adjust', term); // R sandwich 3.0-2 vcovCL HC1, clustered_robust_r.csv
      expect(relativeError(fit.coefficients[j] as number, estimate)).toBeLessThan(1e-12); // R 4.2.2 lm estimate, clustered_robust_r.csv
      expect(relativeError(fit.standardErrors?.[j] as number, modelSe)).toBeLessThan(1e-10); // R 4.2.2 lm model-based SE, clustered_robust_r.csv
      expect(relativeError(fit.robust?.standardErrors[j] as number, robustSe)).toBeLessThan(1e-8); // R sandwich 3.0-2 vcovCL HC1 (CR1), clustered_robust_r.csv
    });
    expect(fit.robust?.clusters).toBe(12); // reference README §3e: G = 12
    terms.forEach((row, a) =>
      terms.forEach((column, b) => {
        const value = referenceValue('clustered_robust_r.csv', 'clustered', model, 'vcov_CR1_G_and_n_adjust', `${row}:${column}`); // R sandwich 3.0-2 vcovCL HC1, clustered_robust_r.csv
        expect(Math.abs((fit.robust?.covariance[a * 3 + b] as number) - value)).toBeLessThan(1e-8 * Math.abs(value) + 1e-15); // R sandwich 3.0-2 vcovCL HC1 (CR1) covariance, clustered_robust_r.csv
      }),
    );
  });

  it('reports a duplicated column as aliased instead of fitting', () => {
    const x = [1, 2, 3, 4, 5, 6];
    const design = designMatrixFromColumns([
      interceptColumn(6),
      { name: 'x', values: x },
      { name: 'twice_x', values: x.map((value) => 2 * value) },
    ]);
    const fit = fitLeastSquares({ design, response: [1, 3, 2, 5, 4, 6] });
    expect(fit.status).toBe('rank_deficient');
    expect(fit.aliased).toEqual(['twice_x']);
    expect(fit.rank).toBe(2);
  });

  it('drops rows of weight 0 and equals the fit without them', () => {
    const x = [1, 2, 3, 4, 5, 6];
    const y = [1.5, 3.1, 2.2, 5.4, 4.3, 6.9];
    const all = designMatrixFromColumns([interceptColumn(6), { name: 'x', values: x }]);
    const weighted = fitted(fitLeastSquares({ design: all, response: y, weights: [1, 1, 1, 1, 0, 1] }));
    const subset = designMatrixFromColumns([interceptColumn(5), { name: 'x', values: [1, 2, 3, 4, 6] }]);
    const direct = fitted(fitLeastSquares({ design: subset, response: [1.5, 3.1, 2.2, 5.4, 6.9] }));
    expect(weighted.dfResidual).toBe(3);
    expect(weighted.coefficients[1]).toBeCloseTo(direct.coefficients[1] as number, 12); // same fit computed on the 5 kept rows
    expect(weighted.standardErrors?.[0]).toBeCloseTo(direct.standardErrors?.[0] as number, 12); // same fit computed on the 5 kept rows
  });

  it('rejects a response of the wrong length with a length_mismatch issue', () => {
    const design = designMatrixFromColumns([interceptColumn(3)]);
    expect(() => fitLeastSquares({ design, response: [1, 2] })).toThrowError(/length_mismatch/);
  });
});
