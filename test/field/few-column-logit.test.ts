/**
 * The field check's few-column logistic fits (band indicators, calibration in
 * the large, the calibration slope) against `fitBinomial` on the same design
 * written out as columns, with the same offset, clusters and CR1 N (the fit
 * the field check ran before; `fitBinomial` is held to R glm and sandwich in
 * test/model, and the field figures to R glm in check-field-reference.test.ts).
 * Invented rows from a seeded generator: counts of several attempts, prior
 * weights, players who play in several bands, a band left out (-1).
 */
import { describe, expect, it } from 'vitest';
import { fitIndicatorLogit, fitLineLogit } from '../../src/field/few-column-logit.js';
import type { FieldRows } from '../../src/field/field-fit.js';
import { fitBinomial } from '../../src/model/fit-binomial.js';
import { designMatrixFromColumns, interceptColumn } from '../../src/numeric/design-matrix.js';
import { createRandomSource } from '../../src/random.js';

function liveRows(count: number, seed: number, perRound: boolean) {
  const random = createRandomSource(seed);
  const successes = new Float64Array(count);
  const trials = new Float64Array(count);
  const priorWeights = new Float64Array(count);
  const clusters = new Int32Array(count);
  const offset = new Float64Array(count);
  const band = new Int32Array(count);
  for (let i = 0; i < count; i += 1) {
    const player = Math.floor(random() * 40);
    clusters[i] = player;
    band[i] = (player + Math.floor(random() * 2)) % 5 === 4 ? -1 : (player + Math.floor(random() * 2)) % 4;
    offset[i] = 0.8 - 0.01 * (10 + 3 * player) + 0.3 * (random() - 0.5);
    trials[i] = 1 + Math.floor(random() * 6);
    priorWeights[i] = i % 7 === 0 ? 2 : 1;
    const p = 1 / (1 + Math.exp(-(offset[i] as number) - 0.1 * (band[i] as number) - ((player % 5) - 2) * 0.1));
    let hits = 0;
    for (let t = 0; t < (trials[i] as number); t += 1) if (random() < p) hits += 1;
    successes[i] = hits;
  }
  const rows: FieldRows = { successes, trials, priorWeights, clusters, observationCount: perRound ? count : null };
  return { rows, offset, band };
}

const relative = (value: number, reference: number) => Math.abs(value - reference) / Math.max(Math.abs(reference), 1e-300);

function expectClose(values: ArrayLike<number>, reference: ArrayLike<number>, tolerance: number): void {
  expect(values.length).toBe(reference.length);
  for (let j = 0; j < values.length; j += 1) expect(relative(values[j] as number, reference[j] as number)).toBeLessThan(tolerance);
}

describe('few-column logistic fits against fitBinomial on the written-out design', () => {
  for (const perRound of [false, true]) {
    it(`band indicators with an offset: estimates, model and CR1 covariance (${perRound ? 'per round' : 'per attempt'})`, () => {
      const { rows, offset, band } = liveRows(3000, 11, perRound);
      const k = 4;
      const columns = Array.from({ length: k }, (_, j) => ({ name: `band_${j}`, values: Float64Array.from(band, (b) => (b === j ? 1 : 0)) }));
      // The rows of no band carry no weight in the written-out fit.
      const priorWeights = Float64Array.from(rows.priorWeights, (w, i) => (band[i] === -1 ? 0 : w));
      const reference = fitBinomial(
        { design: designMatrixFromColumns(columns), successes: rows.successes, trials: rows.trials, priorWeights, clusters: rows.clusters, offset },
        { likelihood: 'bernoulli', tolerance: 1e-12, ...(rows.observationCount === null ? {} : { observationCount: rows.observationCount }) },
      );
      const fit = fitIndicatorLogit(rows, offset, band, k, columns.map((column) => column.name));
      if (!fit.ok || reference.status !== 'converged' || reference.robust === null) throw new Error('both fits must converge');
      expectClose(fit.coefficients, reference.coefficients, 1e-9);
      expectClose(Array.from({ length: k }, (_, j) => fit.covariance[j * k + j] as number), Array.from({ length: k }, (_, j) => reference.covariance[j * k + j] as number), 1e-7);
      expectClose(fit.robustCovariance ?? [], reference.robust.covariance, 1e-7);
      expect(fit.robustCovariance?.[1]).not.toBe(0); // players in two bands: the bands' CR1 covariance is joint
    });
  }

  it('calibration in the large (one indicator over every row) and the slope (intercept and covariate)', () => {
    const { rows, offset } = liveRows(2500, 5, false);
    const intercept = designMatrixFromColumns([interceptColumn(offset.length)]);
    const base = { successes: rows.successes, trials: rows.trials, priorWeights: rows.priorWeights, clusters: rows.clusters };
    const inTheLarge = fitBinomial({ ...base, design: intercept, offset }, { likelihood: 'bernoulli', tolerance: 1e-12 });
    const one = fitIndicatorLogit(rows, offset, null, 1, ['(Intercept)']);
    if (!one.ok || inTheLarge.status !== 'converged' || inTheLarge.robust === null) throw new Error('both fits must converge');
    expectClose(one.coefficients, inTheLarge.coefficients, 1e-9);
    expectClose(one.covariance, inTheLarge.covariance, 1e-7);
    expectClose(one.robustCovariance ?? [], inTheLarge.robust.covariance, 1e-7);

    const line = designMatrixFromColumns([interceptColumn(offset.length), { name: 'logit_prediction', values: offset }]);
    const slope = fitBinomial({ ...base, design: line }, { likelihood: 'bernoulli', tolerance: 1e-12 });
    const two = fitLineLogit(rows, null, offset, [0, 1], ['(Intercept)', 'logit_prediction']);
    if (!two.ok || slope.status !== 'converged' || slope.robust === null) throw new Error('both fits must converge');
    expectClose(two.coefficients, slope.coefficients, 1e-9);
    expectClose(two.covariance, slope.covariance, 1e-7);
    expectClose(two.robustCovariance ?? [], slope.robust.covariance, 1e-7);
  });

  it('says why it has no estimate: a covariate that never varies, outcomes a line separates, one player', () => {
    const { rows, offset } = liveRows(400, 9, false);
    const constant = new Float64Array(offset.length).fill(0.3);
    const aliased = fitLineLogit(rows, null, constant, [0, 1], ['(Intercept)', 'logit_prediction']);
    expect(aliased).toMatchObject({ ok: false, aliased: ['logit_prediction'] });

    const separated: FieldRows = { ...rows, successes: Float64Array.from(offset, (q, i) => (q > 0.3 ? (rows.trials[i] as number) : 0)) };
    const apart = fitLineLogit(separated, null, offset, [0, 1], ['(Intercept)', 'logit_prediction']);
    expect(apart.ok).toBe(false);
    if (!apart.ok) expect(apart.reason).toMatch(/separate/);

    const alone: FieldRows = { ...rows, clusters: new Int32Array(offset.length) };
    const single = fitIndicatorLogit(alone, offset, null, 1, ['(Intercept)']);
    expect(single.ok && single.robustCovariance).toBe(null);
  });
});
