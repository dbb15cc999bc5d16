import { lusolve } from 'mathjs';
import { describe, expect, it } from 'vitest';
import type { BinomialFitEstimated } from '../../src/model/binomial-fit-types.js';
import { fitBinomial } from '../../src/model/fit-binomial.js';
import { linkFor } from '../../src/model/links.js';
import type { DesignByRow } from '../../src/model/design.js';
import { foldStarts } from '../../src/model/refit-starts.js';
import { type DesignMatrix, designMatrixFromColumns, interceptColumn } from '../../src/numeric/design-matrix.js';
import { createRandomSource } from '../../src/random.js';

/** Seeded logistic rows (simulated here; the references below are mathjs's linear algebra and fitBinomial itself). */
function rows(count: number, seed: number): { design: DesignMatrix; successes: Float64Array; trials: Float64Array } {
  const random = createRandomSource(seed);
  const latency = Float64Array.from({ length: count }, () => 200 * random());
  const logScale = Float64Array.from({ length: count }, (_, i) => Math.log([1, 1.5, 2][i % 3] as number));
  const hard = Float64Array.from({ length: count }, (_, i) => i % 2);
  const successes = Float64Array.from({ length: count }, (_, i) => {
    const eta = 0.8 - 0.01 * (latency[i] as number) + 1.2 * (logScale[i] as number) - 0.6 * (hard[i] as number);
    return random() < 1 / (1 + Math.exp(-eta)) ? 1 : 0;
  });
  const design = designMatrixFromColumns([interceptColumn(count), { name: 'latency', values: latency }, { name: 'log_scale', values: logScale }, { name: 'hard', values: hard }]);
  return { design, successes, trials: new Float64Array(count).fill(1) };
}

/** A design matrix's rows, one at a time (what foldStarts reads). */
function rowsOfMatrix(design: DesignMatrix): DesignByRow {
  const { rows, columns, values } = design;
  return {
    rows,
    columns,
    rowAt: (row, out) => {
      for (let j = 0; j < columns; j += 1) out[j] = values[j * rows + row] as number;
    },
  };
}

function estimated(fit: ReturnType<typeof fitBinomial>): BinomialFitEstimated {
  if (fit.status !== 'converged') throw new Error(`expected convergence, got ${fit.status}`);
  return fit;
}

describe('foldStarts()', () => {
  const data = rows(4000, 12);
  const full = estimated(fitBinomial(data));
  const folds = 4;
  const fold = Int32Array.from({ length: 4000 }, (_, i) => (i * 7) % folds);

  it('is one Newton step b + (I - I_f)^-1 (U - U_f), with I and U summed here and solved by mathjs lusolve (reference)', () => {
    const starts = foldStarts({ ...data, design: rowsOfMatrix(data.design), priorWeights: new Float64Array(4000).fill(1) }, linkFor('logit'), full.coefficients, fold, folds);
    const n = 4000;
    for (let f = 0; f < folds; f += 1) {
      const information = Array.from({ length: 4 }, () => [0, 0, 0, 0]);
      const score = [0, 0, 0, 0];
      for (let i = 0; i < n; i += 1) {
        if (fold[i] === f) continue;
        const x = [0, 1, 2, 3].map((j) => data.design.values[j * n + i] as number);
        const eta = x.reduce((sum, value, j) => sum + value * (full.coefficients[j] as number), 0);
        const mu = 1 / (1 + Math.exp(-eta));
        x.forEach((left, a) => {
          score[a] = (score[a] as number) + left * ((data.successes[i] as number) - mu);
          x.forEach((right, b) => ((information[a] as number[])[b] = ((information[a] as number[])[b] as number) + mu * (1 - mu) * left * right));
        });
      }
      const step = (lusolve(information, score) as number[][]).map((row) => row[0] as number);
      const start = starts[f] as Float64Array;
      for (let j = 0; j < 4; j += 1) expect(start[j]).toBeCloseTo((full.coefficients[j] as number) + (step[j] as number), 10);
    }
  });

  it('leaves each fold a shorter way to its own estimate than the full estimate does, and the fold fit ends at the same estimate', () => {
    const starts = foldStarts({ ...data, design: rowsOfMatrix(data.design), priorWeights: new Float64Array(4000).fill(1) }, linkFor('logit'), full.coefficients, fold, folds);
    for (let f = 0; f < folds; f += 1) {
      const keep = Array.from(fold, (value) => value !== f);
      const indices = keep.flatMap((kept, i) => (kept ? [i] : []));
      const columns = [0, 1, 2, 3].map((j) => Float64Array.from(indices, (i) => data.design.values[j * 4000 + i] as number));
      const design = designMatrixFromColumns(columns.map((values, j) => ({ name: full.names[j] as string, values })));
      const training = { design, successes: Float64Array.from(indices, (i) => data.successes[i] as number), trials: new Float64Array(indices.length).fill(1) };
      const fromStart = estimated(fitBinomial(training, { start: starts[f] as Float64Array }));
      const fromFull = estimated(fitBinomial(training, { start: full.coefficients }));
      for (const [j, value] of fromFull.coefficients.entries()) expect(fromStart.coefficients[j]).toBeCloseTo(value, 10);
      expect(fromStart.iterations).toBeLessThanOrEqual(fromFull.iterations);
      const distance = (point: ArrayLike<number>) => Math.max(...Array.from({ length: 4 }, (_, j) => Math.abs((point[j] as number) - (fromFull.coefficients[j] as number)) / (fromFull.standardErrors[j] as number)));
      expect(distance(starts[f] as Float64Array)).toBeLessThan(distance(full.coefficients) / 10);
    }
  });
});
