import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { BinomialData, BinomialFit, BinomialFitEstimated, BinomialFitOptions } from '../../src/model/binomial-fit-types.js';
import { binomialScore, fitBinomial } from '../../src/model/fit-binomial.js';
import type { LinkName } from '../../src/model/links.js';
import { designMatrixFromColumns, interceptColumn } from '../../src/numeric/design-matrix.js';
import { numberColumn, readTable, referenceValue, relativeError } from '../helpers/glm-fixtures.js';

function estimated(fit: BinomialFit): BinomialFitEstimated {
  if (fit.status !== 'converged') throw new Error(`expected a converged fit, got ${fit.status}: ${fit.warnings.join('; ')}`);
  return fit;
}

/** Rows of a data file as a binomial data set with an intercept and the named predictors. */
function binomialData(
  file: string,
  predictors: readonly string[],
  successes: (table: ReturnType<typeof readTable>) => number[],
  trials: (table: ReturnType<typeof readTable>) => number[],
): BinomialData {
  const table = readTable(file);
  const design = designMatrixFromColumns([
    interceptColumn(table.rows.length),
    ...predictors.map((name) => ({ name, values: numberColumn(table, name) })),
  ]);
  return { design, successes: successes(table), trials: trials(table) };
}

const beetle = binomialData(
  'beetle.csv',
  ['dose'],
  (table) => numberColumn(table, 'killed'),
  (table) => numberColumn(table, 'n'),
);

/** Challenger DFH 1989 flights without the NA row (flight 4). */
function challengerData(): BinomialData {
  const table = readTable('challenger_dfh1989.csv');
  const rows = table.rows.filter((row) => row[3] !== 'NA');
  const kept = { header: table.header, rows };
  return {
    design: designMatrixFromColumns([interceptColumn(rows.length), { name: 'temp', values: numberColumn(kept, 'temp') }]),
    successes: numberColumn(kept, 'fail'),
    trials: rows.map(() => 1),
  };
}

/** Compare estimates, SEs and the likelihood summaries with one R model of a result file. */
function expectMatchesR(
  fit: BinomialFitEstimated,
  file: string,
  dataset: string,
  model: string,
  seQuantity = 'std_error',
): { estimate: number; standardError: number } {
  let worstEstimate = 0;
  let worstStandardError = 0;
  fit.names.forEach((term, j) => {
    const estimate = referenceValue(file, dataset, model, 'estimate', term); // R 4.2.2 glm (see caller's model name)
    const standardError = referenceValue(file, dataset, model, seQuantity, term); // R 4.2.2 glm, expected information at the MLE
    worstEstimate = Math.max(worstEstimate, relativeError(fit.coefficients[j] as number, estimate));
    worstStandardError = Math.max(worstStandardError, relativeError(fit.standardErrors[j] as number, standardError));
  });
  expect(worstEstimate).toBeLessThan(1e-9); // R 4.2.2 glm estimates at the MLE, `model` row of `file`
  expect(worstStandardError).toBeLessThan(1e-8); // R 4.2.2 glm SEs (expected information at the MLE), `model` row of `file`
  const deviance = referenceValue(file, dataset, model, 'deviance'); // R 4.2.2 glm deviance
  const nullDeviance = referenceValue(file, dataset, model, 'null_deviance'); // R 4.2.2 glm null.deviance
  const logLikelihood = referenceValue(file, dataset, model, 'loglik'); // R 4.2.2 logLik(glm)
  const aic = referenceValue(file, dataset, model, 'aic'); // R 4.2.2 AIC(glm)
  expect(relativeError(fit.deviance, deviance)).toBeLessThan(1e-10); // R 4.2.2 glm deviance, `model` row of `file`
  expect(relativeError(fit.nullDeviance, nullDeviance)).toBeLessThan(1e-10); // R 4.2.2 glm null.deviance, `model` row of `file`
  expect(relativeError(fit.logLikelihood, logLikelihood)).toBeLessThan(1e-10); // R 4.2.2 logLik(glm), `model` row of `file`
  expect(relativeError(fit.aic, aic)).toBeLessThan(1e-10); // R 4.2.2 AIC(glm), `model` row of `file`
  expect(fit.dfResidual).toBe(referenceValue(file, dataset, model, 'df_residual')); // R 4.2.2 glm df.residual
  expect(fit.dfNull).toBe(referenceValue(file, dataset, model, 'df_null')); // R 4.2.2 glm df.null
  return { estimate: worstEstimate, standardError: worstStandardError };
}

describe('fitBinomial()', () => {
  describe.each(['logit', 'probit', 'cloglog'] as const)('Bliss beetle data, %s link', (link) => {
    const fit = estimated(fitBinomial(beetle, { link }));

    it('matches the R *_mle estimates to 9 digits and SEs to 8', () => {
      expectMatchesR(fit, 'beetle_glm_r.csv', 'beetle', `${link}_mle`);
    });

    it('matches the R covariance, z values and Pearson X² at the MLE', () => {
      fit.names.forEach((row, a) => {
        fit.names.forEach((column, b) => {
          const value = referenceValue('beetle_glm_r.csv', 'beetle', `${link}_mle`, 'vcov', `${row}:${column}`); // R 4.2.2 vcov(glm), *_mle row, beetle_glm_r.csv
          expect(relativeError(fit.covariance[a * 2 + b] as number, value)).toBeLessThan(1e-8); // R 4.2.2 vcov(glm), *_mle row, beetle_glm_r.csv
        });
        const z = referenceValue('beetle_glm_r.csv', 'beetle', `${link}_mle`, 'z_value', row); // R 4.2.2 summary.glm z, *_mle row
        expect(relativeError(fit.zValues[a] as number, z)).toBeLessThan(1e-8); // R 4.2.2 summary.glm z value, *_mle row, beetle_glm_r.csv
      });
      const pearson = referenceValue('beetle_glm_r.csv', 'beetle', `${link}_mle`, 'pearson_chi2'); // R 4.2.2 sum(residuals(fit, "pearson")^2)
      expect(relativeError(fit.pearsonChiSquare, pearson)).toBeLessThan(1e-9); // R 4.2.2 Pearson X², *_mle row, beetle_glm_r.csv
    });

    it('matches the R fitted probabilities to 10 digits', () => {
      const table = readTable('beetle_fitted_r.csv');
      const mus = table.rows.filter((row) => row[0] === link).map((row) => Number(row[4]));
      expect(mus).toHaveLength(8);
      mus.forEach((mu, i) => expect(relativeError(fit.fitted[i] as number, mu)).toBeLessThan(1e-10)); // R 4.2.2 fitted(glm), beetle_fitted_r.csv
    });
  });

  it('agrees with the published Dobson & Barnett beetle values to their 4 digits', () => {
    const logit = estimated(fitBinomial(beetle));
    expect(logit.coefficients[0]).toBeCloseTo(-60.72, 2); // Dobson & Barnett §7.3, logistic b1
    expect(logit.coefficients[1]).toBeCloseTo(34.27, 2); // Dobson & Barnett §7.3, logistic b2
    expect(logit.standardErrors[0]).toBeCloseTo(5.18, 2); // Dobson & Barnett §7.3, SE(b1)
    expect(logit.standardErrors[1]).toBeCloseTo(2.91, 2); // Dobson & Barnett §7.3, SE(b2)
    expect(logit.deviance).toBeCloseTo(11.23, 2); // Dobson & Barnett §7.3, logistic D
    expect(logit.dfResidual).toBe(6); // Dobson & Barnett §7.3, 6 df
    expect(estimated(fitBinomial(beetle, { link: 'probit' })).deviance).toBeCloseTo(10.12, 2); // Dobson & Barnett §7.3, probit D
    expect(estimated(fitBinomial(beetle, { link: 'cloglog' })).deviance).toBeCloseTo(3.45, 2); // Dobson & Barnett §7.3, extreme-value D
  });

  it('matches R on the Challenger DFH 1989 flights (logit and probit) and the published 4 digits', () => {
    const data = challengerData();
    const logit = estimated(fitBinomial(data));
    expectMatchesR(logit, 'binary_glm_r.csv', 'challenger_dfh1989', 'logit_fail~temp');
    const probit = estimated(fitBinomial(data, { link: 'probit' }));
    expectMatchesR(probit, 'binary_glm_r.csv', 'challenger_dfh1989', 'probit_fail~temp', 'std_error_expected_info_at_estimate');
    expect(logit.coefficients[0]).toBeCloseTo(15.0429, 4); // Macalester STAT 155 notes, R glm on vcd::SpaceShuttle
    expect(logit.coefficients[1]).toBeCloseTo(-0.2322, 4); // Macalester STAT 155 notes
    expect(logit.standardErrors[0]).toBeCloseTo(7.38, 2); // Macalester STAT 155 notes
    expect(logit.standardErrors[1]).toBeCloseTo(0.108, 3); // Macalester STAT 155 notes
  });

  it('matches R and the published Minitab output on Montgomery & Runger 0/1 rows', () => {
    const data = binomialData(
      'oring_montgomery_runger.csv',
      ['temp'],
      (table) => numberColumn(table, 'failure'),
      (table) => table.rows.map(() => 1),
    );
    const fit = estimated(fitBinomial(data));
    expectMatchesR(fit, 'binary_glm_r.csv', 'oring_montgomery_runger', 'logit_failure~temp');
    const likelihoodRatio = referenceValue('binary_glm_r.csv', 'oring_montgomery_runger', 'logit_failure~temp', 'G_lr_statistic'); // R 4.2.2 null - residual deviance
    expect(relativeError(fit.nullDeviance - fit.deviance, likelihoodRatio)).toBeLessThan(1e-9); // R 4.2.2 G = null - residual deviance, binary_glm_r.csv
    expect(fit.coefficients[0]).toBeCloseTo(10.875, 3); // Montgomery & Runger S11-9, Minitab constant
    expect(fit.coefficients[1]).toBeCloseTo(-0.17132, 5); // Montgomery & Runger S11-9, Minitab temperature
    expect(fit.standardErrors[0]).toBeCloseTo(5.703, 3); // Montgomery & Runger S11-9, Minitab SE constant
    expect(fit.standardErrors[1]).toBeCloseTo(0.08344, 5); // Montgomery & Runger S11-9, Minitab SE temperature
    expect(fit.logLikelihood).toBeCloseTo(-11.515, 3); // Montgomery & Runger S11-9, Minitab log-likelihood
    expect(fit.nullDeviance - fit.deviance).toBeCloseTo(5.944, 3); // Montgomery & Runger S11-9, Minitab G
  });

  describe.each(['logit', 'probit'] as const)('Spector & Mazzeo, %s', (link) => {
    const data = binomialData(
      'spector_mazzeo.csv',
      ['gpa', 'tuce', 'psi'],
      (table) => numberColumn(table, 'grade'),
      (table) => table.rows.map(() => 1),
    );
    it('matches the R MLE to 9 digits with expected-information SEs to 8', () => {
      const fit = estimated(fitBinomial(data, { link }));
      expectMatchesR(fit, 'binary_glm_r.csv', 'spector_mazzeo', `${link}_grade~gpa+tuce+psi`, 'std_error_expected_info_at_estimate');
    });
  });

  it('agrees with the published Stata logit for Spector & Mazzeo to Stata precision (1e-6)', () => {
    const data = binomialData(
      'spector_mazzeo.csv',
      ['gpa', 'tuce', 'psi'],
      (table) => numberColumn(table, 'grade'),
      (table) => table.rows.map(() => 1),
    );
    const fit = estimated(fitBinomial(data));
    const stata = [-13.0213483201, 2.82611297201, 0.0951576702557, 2.37868772835]; // Stata 11 via statsmodels results_discrete.py class Spector
    stata.forEach((value, j) => expect(relativeError(fit.coefficients[j] as number, value)).toBeLessThan(1e-6)); // Stata 11 Spector logit (statsmodels results_discrete.py), to Stata precision
  });

  describe('O-ring counts, grouped versus expanded rows', () => {
    const counts = readTable('oring_counts.csv');
    const temperatures = numberColumn(counts, 'temp');
    const damaged = numberColumn(counts, 'damaged');
    const undamaged = numberColumn(counts, 'undamaged');
    const grouped: BinomialData = {
      design: designMatrixFromColumns([interceptColumn(temperatures.length), { name: 'temp', values: temperatures }]),
      successes: damaged,
      trials: damaged.map((value, i) => value + (undamaged[i] as number)),
    };
    const expandedTemperatures: number[] = [];
    const expandedOutcomes: number[] = [];
    temperatures.forEach((temperature, i) => {
      for (let r = 0; r < (damaged[i] as number); r += 1) {
        expandedTemperatures.push(temperature);
        expandedOutcomes.push(1);
      }
      for (let r = 0; r < (undamaged[i] as number); r += 1) {
        expandedTemperatures.push(temperature);
        expandedOutcomes.push(0);
      }
    });
    const expanded: BinomialData = {
      design: designMatrixFromColumns([
        interceptColumn(expandedTemperatures.length),
        { name: 'temp', values: expandedTemperatures },
      ]),
      successes: expandedOutcomes,
      trials: expandedOutcomes.map(() => 1),
    };

    it('matches R on the grouped counts (deviance 16.91 on 21 df)', () => {
      const fit = estimated(fitBinomial(grouped));
      expectMatchesR(fit, 'binary_glm_r.csv', 'oring_counts', 'logit_binomial_counts', 'std_error_expected_info_at_estimate');
    });

    it('gives the same estimates and SEs from grouped and expanded rows', () => {
      const groupedFit = estimated(fitBinomial(grouped));
      const expandedFit = estimated(fitBinomial(expanded));
      for (let j = 0; j < 2; j += 1) {
        expect(relativeError(groupedFit.coefficients[j] as number, expandedFit.coefficients[j] as number)).toBeLessThan(1e-12); // same likelihood kernel (reference README §3c: R agrees to 5e-15)
        expect(relativeError(groupedFit.standardErrors[j] as number, expandedFit.standardErrors[j] as number)).toBeLessThan(1e-12); // same information matrix
      }
    });

    it('matches R on the 138 expanded 0/1 rows, with either likelihood', () => {
      for (const likelihood of ['grouped', 'bernoulli'] as const) {
        const fit = estimated(fitBinomial(expanded, { likelihood }));
        expectMatchesR(fit, 'binary_glm_r.csv', 'oring_counts', 'logit_expanded_0_1_rows', 'std_error_expected_info_at_estimate');
      }
    });

    it("gives the expanded rows' Bernoulli deviance 54.76 on 136 df from the collapsed counts", () => {
      const collapsed = estimated(fitBinomial(grouped, { likelihood: 'bernoulli' }));
      const groupedFit = estimated(fitBinomial(grouped));
      expectMatchesR(collapsed, 'binary_glm_r.csv', 'oring_counts', 'logit_expanded_0_1_rows', 'std_error_expected_info_at_estimate');
      expect(collapsed.observationCount).toBe(138); // 23 flights x 6 O-rings, oring_counts.csv
      expect(collapsed.deviance).toBeCloseTo(54.76, 2); // reference README §3c, R deviance of the expanded rows
      expect(groupedFit.deviance).toBeCloseTo(16.91, 2); // reference README §3c, R deviance of the grouped counts
      const expandedFit = estimated(fitBinomial(expanded));
      expect(relativeError(collapsed.bic, expandedFit.bic)).toBeLessThan(1e-12); // same n = 138 as the expanded fit (R BIC convention)
      expect(relativeError(collapsed.mcfaddenR2 as number, groupedFit.mcfaddenR2 as number)).toBeLessThan(1e-12); // McFadden uses Bernoulli log-likelihoods in both modes
      expect(relativeError(collapsed.tjurR2 as number, expandedFit.tjurR2 as number)).toBeLessThan(1e-12); // trial-weighted: collapsed = expanded rows
      expect(relativeError(collapsed.brierScore, expandedFit.brierScore)).toBeLessThan(1e-12); // per-trial: collapsed = expanded rows
    });
  });

  describe('clustered constructed data (reference README §3e)', () => {
    /** Regenerate the data from the README's integer formulas. */
    function regenerate(): { g: number[]; x1: number[]; x2: number[]; y: number[]; yc: number[] } {
      const out = { g: [] as number[], x1: [] as number[], x2: [] as number[], y: [] as number[], yc: [] as number[] };
      let i = 0;
      for (let g = 0; g < 12; g += 1) {
        const clusterEffect = (5 * g) % 7;
        for (let r = 0; r < 3 + (g % 5); r += 1, i += 1) {
          const k = (7 * i) % 13;
          out.g.push(g);
          out.x1.push((k - 6) / 4);
          out.x2.push((g % 3) - 1);
          out.y.push(k + clusterEffect + ((3 * i) % 5) >= 11 ? 1 : 0);
          out.yc.push(k / 2 + clusterEffect + ((3 * i) % 5) - ((11 * i) % 7) / 4);
        }
      }
      return out;
    }
    const table = readTable('clustered_binomial.csv');
    const clusters = numberColumn(table, 'g');
    const data: BinomialData = {
      design: designMatrixFromColumns([
        interceptColumn(table.rows.length),
        { name: 'x1', values: numberColumn(table, 'x1') },
        { name: 'x2', values: numberColumn(table, 'x2') },
      ]),
      successes: numberColumn(table, 'y'),
      trials: table.rows.map(() => 1),
      clusters: Int32Array.from(clusters),
    };

    it('equals the CSV when regenerated from the integer formulas', () => {
      const regenerated = regenerate();
      expect(regenerated.g).toEqual(clusters);
      expect(regenerated.x1).toEqual(numberColumn(table, 'x1'));
      expect(regenerated.x2).toEqual(numberColumn(table, 'x2'));
      expect(regenerated.y).toEqual(numberColumn(table, 'y'));
      expect(regenerated.yc).toEqual(numberColumn(table, 'yc'));
      expect(regenerated.y.filter((value) => value === 1)).toHaveLength(31); // reference README §3e: 31 ones
    });

    it.each([
      ['logit', 'logit_y~x1+x2'],
      ['probit', 'probit_y~x1+x2'],
    ] as const)('matches R sandwich CR1 (expected-information bread) for %s to 1e-8', (link, model) => {
      const fit = estimated(fitBinomial(data, { link }));
      const robust = fit.robust;
      if (robust === null) throw new Error('expected a robust block');
      expect(robust.kind).toBe('CR1');
      expect(robust.clusters).toBe(12); // reference README §3e: G = 12
      fit.names.forEach((term, j) => {
        const estimate = referenceValue('clustered_robust_r.csv', 'clustered', model, 'estimate', term); // R 4.2.2 glm, clustered_robust_r.csv
        const modelSe = referenceValue('clustered_robust_r.csv', 'clustered', model, 'se_model_based', term); // R 4.2.2 glm expected information, clustered_robust_r.csv
        const robustSe = referenceValue('clustered_robust_r.csv', 'clustered', model, 'se_CR1_G_and_n_adjust', term); // R sandwich 3.0-2 vcovCL(type = "HC1", cadjust = TRUE)
        expect(relativeError(fit.coefficients[j] as number, estimate)).toBeLessThan(1e-9); // R 4.2.2 glm estimate, clustered_robust_r.csv
        expect(relativeError(fit.standardErrors[j] as number, modelSe)).toBeLessThan(1e-8); // R 4.2.2 glm model-based SE, clustered_robust_r.csv
        expect(relativeError(robust.standardErrors[j] as number, robustSe)).toBeLessThan(1e-8); // R sandwich 3.0-2 vcovCL HC1 (CR1), clustered_robust_r.csv
        fit.names.forEach((other, b) => {
          const value = referenceValue('clustered_robust_r.csv', 'clustered', model, 'vcov_CR1_G_and_n_adjust', `${term}:${other}`); // R sandwich 3.0-2 vcovCL HC1, clustered_robust_r.csv
          expect(Math.abs((robust.covariance[j * 3 + b] as number) - value)).toBeLessThan(1e-8 * Math.abs(value) + 1e-15); // R sandwich 3.0-2 vcovCL HC1 (CR1) covariance, clustered_robust_r.csv
        });
      });
    });

    it('omits the robust block when `robust: false`', () => {
      expect(estimated(fitBinomial(data, { robust: false })).robust).toBeNull();
    });
  });

  describe('status', () => {
    const x = [1, 2, 3, 4, 5, 6, 7, 8];
    const design = designMatrixFromColumns([interceptColumn(8), { name: 'latency_ms', values: x }]);
    const ones = x.map(() => 1);

    it.each(['logit', 'probit', 'cloglog'] as const)(
      "returns 'separation' naming both coefficients for completely separated data (%s)",
      (link) => {
        const fit = fitBinomial({ design, successes: [0, 0, 0, 0, 1, 1, 1, 1], trials: ones }, { link });
        expect(fit.status).toBe('separation');
        if (fit.status !== 'separation') return;
        expect(fit.divergingCoefficients).toEqual(['(Intercept)', 'latency_ms']);
        expect(fit.boundaryRows).toBeGreaterThan(0);
      },
    );

    it("returns 'separation' naming only the diverging dummy for quasi-complete separation", () => {
      const dummy = [0, 0, 0, 0, 0, 1, 1, 1];
      const quasi = designMatrixFromColumns([
        interceptColumn(8),
        { name: 'latency_ms', values: [3, 1, 4, 1, 5, 9, 2, 6] },
        { name: 'high_scale', values: dummy },
      ]);
      const fit = fitBinomial({ design: quasi, successes: [0, 1, 0, 1, 1, 1, 1, 1], trials: ones });
      expect(fit.status).toBe('separation');
      if (fit.status !== 'separation') return;
      expect(fit.divergingCoefficients).toEqual(['high_scale']);
    });

    it("returns 'rank_deficient' naming a scale column that is constant (aliased with the intercept)", () => {
      const constantScale = designMatrixFromColumns([
        interceptColumn(8),
        { name: 'latency_ms', values: x },
        { name: 'scale', values: x.map(() => 0.5) },
      ]);
      const fit = fitBinomial({ design: constantScale, successes: [0, 1, 0, 1, 1, 0, 1, 1], trials: ones });
      expect(fit.status).toBe('rank_deficient');
      expect(fit.aliased).toEqual(['scale']);
    });

    it("returns 'rank_deficient' naming a duplicated column", () => {
      const duplicated = designMatrixFromColumns([
        interceptColumn(8),
        { name: 'latency_ms', values: x },
        { name: 'latency_copy', values: x },
      ]);
      const fit = fitBinomial({ design: duplicated, successes: [0, 1, 0, 1, 1, 0, 1, 1], trials: ones });
      expect(fit.status).toBe('rank_deficient');
      expect(fit.aliased).toEqual(['latency_copy']);
    });

    it("returns 'iteration_limit' with finite last-iterate numbers when maxIterations is 1", () => {
      const fit = fitBinomial(beetle, { maxIterations: 1 });
      expect(fit.status).toBe('iteration_limit');
      if (fit.status !== 'iteration_limit') return;
      expect(fit.iterations).toBe(1);
      expect(fit.warnings.join(' ')).toMatch(/maxIterations/);
      expect([...fit.coefficients, ...fit.standardErrors, fit.deviance].every(Number.isFinite)).toBe(true);
    });

    it('rejects successes above trials with a successes_exceed_trials issue', () => {
      expect(() => fitBinomial({ design, successes: [2, 0, 0, 0, 1, 1, 1, 1], trials: ones })).toThrowError(
        /successes_exceed_trials/,
      );
    });

    it('leaves rows with zero trials out of the fit but still predicts them', () => {
      const full = fitBinomial(beetle);
      const withEmptyRow = fitBinomial({
        design: designMatrixFromColumns([interceptColumn(9), { name: 'dose', values: [...numberColumn(readTable('beetle.csv'), 'dose'), 1.9] }]),
        successes: [...Array.from(beetle.successes), 0],
        trials: [...Array.from(beetle.trials), 0],
      });
      const a = estimated(full);
      const b = estimated(withEmptyRow);
      expect(b.dfResidual).toBe(a.dfResidual);
      expect(relativeError(b.coefficients[1] as number, a.coefficients[1] as number)).toBeLessThan(1e-13); // same data, zero-trial row ignored
      expect(b.fitted).toHaveLength(9);
      expect(b.fitted[8]).toBeGreaterThan(a.fitted[7] as number);
    });
  });

  describe('properties', () => {
    const links: LinkName[] = ['logit', 'probit', 'cloglog'];
    /** Small well-posed data: 6-12 grouped rows, two covariates, both outcomes in every row. */
    const dataArbitrary = fc.record({
      link: fc.constantFrom(...links),
      rows: fc.array(
        fc.record({
          // A grid of well-scaled covariates; degenerate scales are fixed regression cases below.
          latency: fc.integer({ min: -40, max: 40 }).map((value) => value / 20),
          difficulty: fc.integer({ min: -40, max: 40 }).map((value) => value / 20),
          trials: fc.integer({ min: 2, max: 40 }),
          fraction: fc.double({ min: 0.05, max: 0.95, noNaN: true }),
        }),
        { minLength: 6, maxLength: 12 },
      ),
    });

    it("returns 'rank_deficient', never NaN, for subnormal covariates (sweep regression cases)", () => {
      // Found by a wider fast-check sweep (seed 42) over arbitrary doubles.
      const zeros = [0, 0, 0, 0, 0];
      const collinear: BinomialData = {
        design: designMatrixFromColumns([
          interceptColumn(6),
          { name: 'latency', values: [...zeros, 7.687083529312534e-155] },
          { name: 'difficulty', values: [...zeros, -5e-324] },
        ]),
        successes: [1, 1, 1, 1, 1, 1],
        trials: [2, 2, 2, 2, 2, 7],
      };
      const collinearFit = fitBinomial(collinear);
      expect(collinearFit.status).toBe('rank_deficient');
      expect(collinearFit.aliased).toEqual(['difficulty']);
      const tiny: BinomialData = {
        design: designMatrixFromColumns([
          interceptColumn(6),
          { name: 'latency', values: [0, 0, 0, 0, 0, 5e-324] },
          { name: 'difficulty', values: [0, 0, 0, 0, -5e-324, 0] },
        ]),
        successes: [1, 1, 1, 1, 1, 1],
        trials: [2, 2, 2, 2, 2, 2],
      };
      const tinyFit = fitBinomial(tiny);
      expect(tinyFit.status).toBe('rank_deficient');
      expect(tinyFit.aliased).toEqual(['latency', 'difficulty']);
    });

    it('never returns NaN or Infinity and has a ~0 score at a converged estimate (200 seeded runs)', () => {
      const property = fc.property(dataArbitrary, ({ link, rows }) => {
        const trials = rows.map((row) => row.trials);
        // At least one success and one failure per row keeps the MLE finite.
        const successes = rows.map((row) => Math.min(row.trials - 1, Math.max(1, Math.round(row.fraction * row.trials))));
        const data: BinomialData = {
          design: designMatrixFromColumns([
            interceptColumn(rows.length),
            { name: 'latency', values: rows.map((row) => row.latency) },
            { name: 'difficulty', values: rows.map((row) => row.difficulty) },
          ]),
          successes,
          trials,
        };
        const options: BinomialFitOptions = { link };
        const fit = fitBinomial(data, options);
        if (fit.status === 'rank_deficient') return true; // covariates drawn collinear: a legitimate outcome
        expect(fit.status).toBe('converged');
        if (fit.status !== 'converged') return false;
        const numbers = [
          ...fit.coefficients,
          ...fit.standardErrors,
          ...fit.covariance,
          ...fit.pValues,
          ...fit.fitted,
          fit.deviance,
          fit.nullDeviance,
          fit.logLikelihood,
          fit.aic,
          fit.bic,
          fit.brierScore,
        ];
        expect(numbers.every(Number.isFinite)).toBe(true);
        const score = binomialScore(data, fit.coefficients, link);
        // Score in units of its own scale: |U_j| * SE_j is dimensionless.
        score.forEach((value, j) => expect(Math.abs(value) * (fit.standardErrors[j] as number)).toBeLessThan(1e-9)); // score at the MLE is 0 by definition (McCullagh & Nelder §2.5)
        return true;
      });
      fc.assert(property, { seed: 42, numRuns: 200 });
    });
  });
});

describe('fitBinomial() on many rows', () => {
  /** Uniform latencies in [0, 200), three scales in turn, and the seeded generator to draw outcomes with next. */
  const seededRows = (rows: number) => {
    let state = 12345;
    const random = () => {
      state = (Math.imul(state, 1103515245) + 12345) >>> 0;
      return state / 2 ** 32;
    };
    const latency = Float64Array.from({ length: rows }, () => 200 * random());
    const logScale = Float64Array.from({ length: rows }, (_, i) => Math.log([1, 1.5, 2][i % 3] as number));
    return { latency, logScale, random };
  };

  /**
   * The default fit (from its sample-fit start) and a fit from zero coefficients, both converged,
   * agree to 1e-10 on the estimates and to `standardErrorTolerance` on the SEs; returns the default fit.
   */
  const expectSameAsFromZero = (data: Parameters<typeof fitBinomial>[0], standardErrorTolerance: number) => {
    const fit = fitBinomial(data);
    const fromZero = fitBinomial(data, { start: new Array(data.design.columns).fill(0) });
    if (fit.status !== 'converged' || fromZero.status !== 'converged') throw new Error('expected convergence');
    for (let j = 0; j < data.design.columns; j += 1) {
      expect(relativeError(fit.coefficients[j] as number, fromZero.coefficients[j] as number)).toBeLessThan(1e-10);
      expect(relativeError(fit.standardErrors[j] as number, fromZero.standardErrors[j] as number)).toBeLessThan(standardErrorTolerance);
    }
    return fit;
  };

  it('reaches the same estimate from its sample-fit start as from zero coefficients, with a zero score there', () => {
    // 80,000 rows of a seeded logistic model: above the 65,536 rows where a logit fit starts from a sample fit.
    const rows = 80_000;
    const { latency, logScale, random } = seededRows(rows);
    const successes = Float64Array.from({ length: rows }, (_, i) => (random() < 1 / (1 + Math.exp(-(0.8 - 0.01 * (latency[i] as number) + 1.2 * (logScale[i] as number)))) ? 1 : 0));
    const design = designMatrixFromColumns([interceptColumn(rows), { name: 'latency', values: Array.from(latency) }, { name: 'log_scale', values: Array.from(logScale) }]);
    const data = { design, successes, trials: new Float64Array(rows).fill(1) };
    const sampled = expectSameAsFromZero(data, 1e-10);
    // The score X'(y - mu) at the estimate is zero to rounding (common practice: the likelihood equations).
    const score = binomialScore(data, sampled.coefficients);
    for (let j = 0; j < 3; j += 1) expect(Math.abs(score[j] as number) / (sampled.standardErrors[j] as number) ** -1).toBeLessThan(1e-8);
    // The log-likelihood and deviance of 0/1 rows at the estimate, summed here in one plain loop
    // (sum y log mu + (1 - y) log(1 - mu); deviance -2 log L, the saturated log-likelihood being 0):
    // the fit sums its passes in blocks of rows, and a row lost or counted twice at a block's edge shows.
    let logLikelihood = 0;
    for (let i = 0; i < rows; i += 1) {
      const eta = (sampled.coefficients[0] as number) + (sampled.coefficients[1] as number) * (latency[i] as number) + (sampled.coefficients[2] as number) * (logScale[i] as number);
      const mu = 1 / (1 + Math.exp(-eta));
      logLikelihood += successes[i] === 1 ? Math.log(mu) : Math.log(1 - mu);
    }
    expect(relativeError(sampled.logLikelihood, logLikelihood)).toBeLessThan(1e-12);
    expect(relativeError(sampled.deviance, -2 * logLikelihood)).toBeLessThan(1e-12);
  });

  it('fits many rows whose sample is separated (a rare level with only hits among the sampled rows) to the estimate from zero coefficients', () => {
    // 70,000 rows; a rare indicator on rows i % 1000 in {0, 1}: hits on the even ones, misses on the odd ones.
    // The sample takes every 2nd row (the even ones), where the rare level only hits: no start from that fit.
    const rows = 70_000;
    const { latency, random } = seededRows(rows);
    const rare = Float64Array.from({ length: rows }, (_, i) => (i % 1000 <= 1 ? 1 : 0));
    const successes = Float64Array.from({ length: rows }, (_, i) =>
      rare[i] === 1 ? (i % 2 === 0 ? 1 : 0) : random() < 1 / (1 + Math.exp(-(0.5 - 0.01 * (latency[i] as number)))) ? 1 : 0,
    );
    const design = designMatrixFromColumns([interceptColumn(rows), { name: 'latency', values: Array.from(latency) }, { name: 'rare', values: Array.from(rare) }]);
    const data = { design, successes, trials: new Float64Array(rows).fill(1) };
    const fit = expectSameAsFromZero(data, 1e-9);
    expect(Math.abs(fit.coefficients[2] as number)).toBeLessThan(1); // half hits, half misses: the rare level's odds are about even
  });

  it('stops a pass early on the contraction of its steps, within the tolerance of the fully iterated estimate', () => {
    // 80,000 seeded rows with an interaction column: the steps from the sample-fit start contract
    // fast enough that the third step is taken without a pass at its result (3 iterations; the
    // rule switched off, the same fit takes 4).
    const rows = 80_000;
    const { latency, logScale, random } = seededRows(rows);
    const product = latency.map((value, i) => value * (logScale[i] as number));
    const truth = (i: number) => 0.8 - 0.01 * (latency[i] as number) + 1.2 * (logScale[i] as number) + 0.004 * (product[i] as number);
    const successes = Float64Array.from({ length: rows }, (_, i) => (random() < 1 / (1 + Math.exp(-truth(i))) ? 1 : 0));
    const design = designMatrixFromColumns([
      interceptColumn(rows),
      { name: 'latency', values: Array.from(latency) },
      { name: 'log_scale', values: Array.from(logScale) },
      { name: 'latency_x_log_scale', values: Array.from(product) },
    ]);
    const data = { design, successes, trials: new Float64Array(rows).fill(1) };
    const fit = fitBinomial(data);
    // Tolerance 1e-300 never stops on a step size: this one iterates to the rounding floor.
    const iterated = fitBinomial(data, { tolerance: 1e-300 });
    if (fit.status !== 'converged' || iterated.status !== 'converged') throw new Error('expected convergence');
    expect(fit.iterations).toBe(3);
    for (let j = 0; j < 4; j += 1) {
      const se = iterated.standardErrors[j] as number;
      expect(Math.abs((fit.coefficients[j] as number) - (iterated.coefficients[j] as number)) / se).toBeLessThan(1e-10); // the default tolerance, in SEs
      expect(relativeError(fit.standardErrors[j] as number, se)).toBeLessThan(1e-9); // the COVARIANCE_SHIFT bound
    }
  });
});
