/**
 * Least squares on a per-attempt file is least squares on its 0/1 attempts
 * (the linear probability model), although the fit runs on the attempts
 * collapsed into rows. Reference: weighted least squares computed with
 * mathjs (`inv`, `multiply`, `transpose`) on every attempt as read, with R
 * `lm`'s definitions (R Core Team, `summary.lm`): b = (X'WX)^-1 X'Wy,
 * sigma^2 = sum w e^2 / (N - p) over the N attempts, SE = sqrt(diag(sigma^2
 * (X'WX)^-1)), R^2 = 1 - sum w e^2 / sum w (y - weighted mean)^2. Invented
 * data from a seeded generator (many attempts share their covariates).
 * Cross-checked once by hand against Python statsmodels 0.13 `ols` (Debian)
 * on such a file: model and CR1 standard errors, R^2 and residual SD agreed
 * to all printed digits.
 */
import { inv, multiply, transpose } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { parseTrialsCsv } from '../../src/formats/trials-csv.js';
import type { Trials } from '../../src/formats/trials-types.js';
import { unwrap } from '../../src/issues.js';
import { fitModel } from '../../src/model/fit-model.js';
import { fitLeastSquares } from '../../src/model/fit-least-squares.js';
import { designMatrixFromColumns, interceptColumn } from '../../src/numeric/design-matrix.js';
import { createRandomSource } from '../../src/random.js';

function attemptsCsv(rows: number, seed: number): string {
  const random = createRandomSource(seed);
  const lines = ['player,latency_ms,scale,difficulty,weight,hit'];
  for (let i = 0; i < rows; i += 1) {
    const latency = 10 * (1 + Math.floor(6 * random()));
    const scale = [1, 1.5][i % 2] as number;
    const hard = random() < 0.4;
    const p = 1 / (1 + Math.exp(-(0.6 - 0.02 * latency + Math.log(scale) - (hard ? 0.5 : 0))));
    lines.push(`p${i % 25},${latency},${scale},${hard ? 'hard' : 'easy'},${i % 7 === 0 ? 2 : 1},${random() < p ? 1 : 0}`);
  }
  return `${lines.join('\n')}\n`;
}

/** R lm's weighted least squares on the attempts as read, with mathjs. */
function referenceOnAttempts(trials: Trials) {
  if (trials.difficulty.kind !== 'levels') throw new Error('levels expected');
  const { levels, codes } = trials.difficulty;
  const x: number[][] = [];
  const y: number[] = [];
  const w: number[] = [];
  for (let i = 0; i < trials.rows; i += 1) {
    const latency = trials.latency[i] as number;
    const logScale = Math.log(trials.scale[i] as number);
    // The report's coding: the first level seen is the reference, the other gets an indicator.
    x.push([1, latency, logScale, levels[codes[i] as number] === levels[1] ? 1 : 0, latency * logScale]);
    y.push(trials.successes[i] as number);
    w.push(trials.weight?.[i] ?? 1);
  }
  const xtw = transpose(x).map((column) => column.map((value, i) => value * (w[i] as number)));
  const bread = inv(multiply(xtw, x)) as number[][];
  const b = multiply(bread, multiply(xtw, y)) as number[];
  const fitted = multiply(x, b) as number[];
  const rss = y.reduce((sum, value, i) => sum + (w[i] as number) * (value - (fitted[i] as number)) ** 2, 0);
  const weightSum = w.reduce((sum, value) => sum + value, 0);
  const mean = y.reduce((sum, value, i) => sum + (w[i] as number) * value, 0) / weightSum;
  const tss = y.reduce((sum, value, i) => sum + (w[i] as number) * (value - mean) ** 2, 0);
  const df = y.length - b.length;
  const variance = rss / df;
  return { b, se: bread.map((row, j) => Math.sqrt(variance * (row[j] as number))), r2: 1 - rss / tss, sd: Math.sqrt(variance), df, n: y.length };
}

const relative = (value: number, reference: number) => Math.abs(value - reference) / Math.abs(reference);

describe('least squares on a per-attempt file', () => {
  const trials = unwrap(parseTrialsCsv(attemptsCsv(600, 5), 'attempts.csv'));
  const reference = referenceOnAttempts(trials);
  const terms = ['intercept', 'latency', 'log_scale', 'difficulty', 'latency_x_log_scale'] as const;

  it('is least squares on the 0/1 attempts: coefficients, SEs, R², residual SD and degrees of freedom (mathjs on the attempts as read)', () => {
    const report = fitModel(trials, { family: 'least_squares', terms: [...terms], folds: 0, cluster: 'none' });
    const statistics = report.statistics;
    if (statistics === null) throw new Error('expected statistics');
    expect(statistics.observations).toBe(600);
    expect(statistics.df_residual).toBe(reference.df);
    report.coefficients.forEach((row, j) => {
      expect(relative(row.estimate, reference.b[j] as number)).toBeLessThan(1e-9);
      expect(relative(row.std_error, reference.se[j] as number)).toBeLessThan(1e-9);
    });
    expect(relative(statistics.r_squared as number, reference.r2)).toBeLessThan(1e-9);
    expect(relative(statistics.residual_sd as number, reference.sd)).toBeLessThan(1e-9);
  });

  it("gives the binomial report's baseline the same figures", () => {
    const report = fitModel(trials, { terms: [...terms], folds: 0, likelihoodRatioTests: false });
    expect(report.baseline?.rows).toBe(600);
    expect(relative(report.baseline?.r_squared as number, reference.r2)).toBeLessThan(1e-9);
    expect(relative(report.baseline?.residual_sd as number, reference.sd)).toBeLessThan(1e-9);
    report.baseline?.coefficients.forEach((row, j) => expect(relative(row.std_error as number, reference.se[j] as number)).toBeLessThan(1e-9));
  });

  it('fitLeastSquares with groups equals the fit of the rows they stand for', () => {
    // Two design rows standing for 3 and 2 observations and a third for one, against the six rows written out.
    const expanded = fitLeastSquares({
      design: designMatrixFromColumns([interceptColumn(6), { name: 'x', values: [1, 1, 1, 2, 2, 3] }]),
      response: [1, 1, 0, 0, 1, 1],
    });
    const grouped = fitLeastSquares({
      design: designMatrixFromColumns([interceptColumn(3), { name: 'x', values: [1, 2, 3] }]),
      response: [2 / 3, 1 / 2, 1],
      weights: [3, 2, 1],
      groups: { counts: [3, 2, 1], withinSumOfSquares: [2 - 4 / 3, 1 - 1 / 2, 0] },
    });
    if (expanded.status !== 'fitted' || grouped.status !== 'fitted') throw new Error('fitted');
    expect(grouped.observations).toBe(6);
    expect(grouped.dfResidual).toBe(expanded.dfResidual);
    for (const [a, b] of [
      [grouped.rSquared, expanded.rSquared],
      [grouped.residualStandardDeviation, expanded.residualStandardDeviation],
      [grouped.standardErrors?.[1], expanded.standardErrors?.[1]],
      [grouped.coefficients[1], expanded.coefficients[1]],
    ] as const) {
      expect(relative(a as number, b as number)).toBeLessThan(1e-12);
    }
  });
});
