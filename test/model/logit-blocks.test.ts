import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { glmRows } from '../../src/model/glm-rows.js';
import { logitPass } from '../../src/model/irls-passes.js';
import { LOGIT_BLOCKS } from '../../src/model/logit-blocks.js';
import type { DesignMatrix } from '../../src/numeric/design-matrix.js';
import { RowTriangle } from '../../src/numeric/row-reduction.js';
import { createRandomSource } from '../../src/random.js';
import { MAX_COLUMNS, logitBlocksSource } from '../../tools/generate-logit-blocks.js';
import { ROOT } from '../helpers/demo.js';

describe('src/model/logit-blocks.ts', () => {
  it('is the generator\'s output (npm run logit-blocks:generate)', () => {
    expect(readFileSync(join(ROOT, 'src', 'model', 'logit-blocks.ts'), 'utf8')).toBe(logitBlocksSource());
  });

  // The written-out blocks against the general block (the reference here is the project's own general code:
  // the claim is bit-for-bit sameness, so any difference, however small, fails).
  for (let k = 1; k <= MAX_COLUMNS; k += 1) {
    it(`gives the general pass's triangle, deviance and linear predictor bit for bit with ${k} column(s)`, () => {
      const random = createRandomSource(1000 + k);
      const n = 9000; // more than two blocks of rows
      const values = new Float64Array(n * k);
      for (let j = 0; j < k; j += 1) {
        for (let i = 0; i < n; i += 1) {
          // Column 0 an intercept; others mixed: indicators (many zeros), wide-range values, small values.
          values[j * n + i] = j === 0 ? 1 : j % 3 === 1 ? (random() < 0.4 ? 1 : 0) : j % 3 === 2 ? 200 * random() : random() - 0.5;
        }
      }
      const design: DesignMatrix = { rows: n, columns: k, names: Array.from({ length: k }, (_, j) => `c${j}`), values };
      const trials = Float64Array.from({ length: n }, (_, i) => (i % 7 === 0 ? 0 : 1 + Math.floor(5 * random())));
      const successes = Float64Array.from(trials, (count) => Math.floor(count * random() * 1.2) % (count + 1));
      const priorWeights = Float64Array.from({ length: n }, () => 0.5 + random());
      const offset = Float64Array.from({ length: n }, () => random() - 0.5);
      const factors = Float64Array.from({ length: k }, (_, j) => (j % 3 === 2 ? 2 ** -7 : 1));
      for (const withOffset of [false, true]) {
        const rows = glmRows(successes, trials, priorWeights, withOffset ? offset : null);
        // R's start (null), then coefficients with a zero among them (skipped in eta).
        for (const coefficients of [null, Float64Array.from({ length: k }, (_, j) => (j === 1 ? 0 : 0.3 - 0.01 * j))]) {
          const general = { triangle: new RowTriangle(k), predictor: new Float64Array(n) };
          const written = { triangle: new RowTriangle(k), predictor: new Float64Array(n) };
          const generalDeviance = logitPass(design, rows, coefficients, general.predictor, general.triangle, factors, null);
          const writtenDeviance = logitPass(design, rows, coefficients, written.predictor, written.triangle, factors, LOGIT_BLOCKS[k] ?? null);
          expect(writtenDeviance).toBe(generalDeviance);
          expect(Array.from(written.triangle.diagonal)).toEqual(Array.from(general.triangle.diagonal));
          expect(Array.from(written.triangle.upper)).toEqual(Array.from(general.triangle.upper));
          expect(Array.from(written.triangle.theta)).toEqual(Array.from(general.triangle.theta));
          expect(written.triangle.residualSumOfSquares).toBe(general.triangle.residualSumOfSquares);
          expect(Array.from(written.predictor)).toEqual(Array.from(general.predictor));
        }
      }
    });
  }

  it(`leaves designs of more than ${MAX_COLUMNS} columns to the general block`, () => {
    expect(LOGIT_BLOCKS[MAX_COLUMNS + 1]).toBeUndefined();
    expect(LOGIT_BLOCKS[0]).toBeUndefined();
  });
});
