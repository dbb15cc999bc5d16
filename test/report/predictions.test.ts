import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parseTrialsCsv } from '../../src/formats/trials-csv.js';
import type { Trials } from '../../src/formats/trials-types.js';
import { type CompiledModel, compileModel } from '../../src/model/compile.js';
import { Z_975, calibrationBins, difficultyForModel, hasCovariance, predictWithBand } from '../../src/report/predictions.js';

// R 4.2.2 glm(cbind(killed, n - killed) ~ dose, binomial(logit)) on Bliss's beetle data:
// test/fixtures/glm/beetle_glm_r.csv (estimates, vcov) and beetle_fitted_r.csv (fitted mu); see the README there.
const glm = new Map<string, number>();
for (const line of readFileSync(new URL('../fixtures/glm/beetle_glm_r.csv', import.meta.url), 'utf8').trim().split('\n').slice(1)) {
  const [dataset, model, quantity, term, value] = line.split(',');
  if (dataset === 'beetle' && model === 'logit_mle') glm.set(`${quantity}:${term}`, Number(value));
}
const fitted = readFileSync(new URL('../fixtures/glm/beetle_fitted_r.csv', import.meta.url), 'utf8')
  .trim()
  .split('\n')
  .slice(1)
  .map((line) => line.split(','))
  .filter(([link]) => link === 'logit')
  .map(([, dose, , , mu]) => ({ dose: Number(dose), mu: Number(mu) }));

function value(key: string): number {
  const found = glm.get(key);
  if (found === undefined) throw new Error(`fixture has no ${key}`);
  return found;
}

/** The beetle fit as a model file, with dose in the latency slot (terms intercept + latency). */
function beetleModel(covariance?: number[][]): CompiledModel {
  const compiled = compileModel({
    format: 'lagparity/model@1',
    family: 'binomial',
    link: 'logit',
    terms: ['intercept', 'latency'],
    difficulty: { kind: 'numeric' },
    coefficients: {
      names: ['intercept', 'latency'],
      estimates: [value('estimate:(Intercept)'), value('estimate:dose')],
      covariance: covariance ?? [
        [value('vcov:(Intercept):(Intercept)'), value('vcov:(Intercept):dose')],
        [value('vcov:dose:(Intercept)'), value('vcov:dose:dose')],
      ],
    },
    training: { latency_ms: { min: 1.6, max: 1.9 }, scale: { min: 1, max: 1 }, difficulty: { min: 0, max: 0 }, rows: 8, attempts: 481 },
    provenance: { file: 'beetle.csv', rows: 8, sha256: '0'.repeat(64) },
  });
  if (!compiled.ok) throw new Error(JSON.stringify(compiled.issues));
  return compiled.value;
}

describe('predictWithBand()', () => {
  const model = beetleModel();

  it('reproduces R\'s fitted probabilities (beetle_fitted_r.csv)', () => {
    expect(fitted).toHaveLength(8);
    for (const { dose, mu } of fitted) expect(predictWithBand(model, dose, 1, 0).probability).toBeCloseTo(mu, 9); // R glm()$fitted.values
  });

  it('gives R\'s standard error of the intercept at the design point (1, 0) (beetle_glm_r.csv)', () => {
    expect(predictWithBand(model, 0, 1, 0).standardError).toBeCloseTo(value('std_error:(Intercept)'), 9); // R summary(glm)$coefficients: 5.1807
  });

  it('uses z = qnorm(0.975) of R (normal_r.csv) and the quadratic form x\'Vx', () => {
    expect(Z_975).toBeCloseTo(1.9599639845400538, 14); // R qnorm(0.025) = -1.9599639845400538
    const dose = 1.7842;
    const prediction = predictWithBand(model, dose, 1, 0);
    const variance = value('vcov:(Intercept):(Intercept)') + 2 * dose * value('vcov:(Intercept):dose') + dose * dose * value('vcov:dose:dose');
    expect(prediction.standardError).toBeCloseTo(Math.sqrt(variance), 9);
    const logistic = (x: number) => 1 / (1 + Math.exp(-x));
    expect(prediction.lower).toBeCloseTo(logistic(prediction.linearPredictor - Z_975 * prediction.standardError), 12);
    expect(prediction.upper).toBeCloseTo(logistic(prediction.linearPredictor + Z_975 * prediction.standardError), 12);
    expect(prediction.lower).toBeLessThan(prediction.probability);
    expect(prediction.upper).toBeGreaterThan(prediction.probability);
  });

  it('gives no band for a zero covariance', () => {
    const flat = beetleModel([
      [0, 0],
      [0, 0],
    ]);
    expect(hasCovariance(flat)).toBe(false);
    expect(hasCovariance(model)).toBe(true);
    const prediction = predictWithBand(flat, 1.75, 1, 0);
    expect(prediction.standardError).toBe(0);
    expect(prediction.lower).toBe(prediction.probability);
    expect(prediction.upper).toBe(prediction.probability);
  });
});

function trialsOf(csv: string): Trials {
  const parsed = parseTrialsCsv(csv, 'beetle-trials.csv');
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues));
  return parsed.value;
}

describe('calibrationBins()', () => {
  it('bins the rows by predicted probability and compares with the observed rate (beetle data)', () => {
    // Bliss's beetle data (test/fixtures/glm/beetle.csv) as trials: dose in the latency column.
    const rows = readFileSync(new URL('../fixtures/glm/beetle.csv', import.meta.url), 'utf8').trim().split('\n').slice(1);
    const csv = ['latency_ms,scale,difficulty,hits,attempts', ...rows.map((line) => {
      const [dose, n, killed] = line.split(',');
      return `${dose},1,0,${killed},${n}`;
    })].join('\n');
    const trials = trialsOf(csv);
    const result = calibrationBins(trials, beetleModel(), 10);
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    const bins = result.value;
    expect(bins.reduce((sum, bin) => sum + bin.rows, 0)).toBe(8);
    expect(bins.reduce((sum, bin) => sum + bin.attempts, 0)).toBe(481);
    // A maximum-likelihood logit fit with an intercept reproduces the total: sum of n mu = sum of killed (R fitted values).
    const predicted = bins.reduce((sum, bin) => sum + bin.attempts * bin.mean_predicted, 0);
    const observed = bins.reduce((sum, bin) => sum + bin.attempts * bin.observed, 0);
    expect(predicted).toBeCloseTo(observed, 6);
    for (const bin of bins) {
      expect(bin.mean_predicted).toBeGreaterThanOrEqual(bin.lower);
      expect(bin.mean_predicted).toBeLessThanOrEqual(bin.upper);
    }
  });
});

describe('difficultyForModel()', () => {
  it('refuses a difficulty level the model does not know, naming the column', () => {
    const trials = trialsOf('latency_ms,scale,difficulty,hit\n10,1,nightmare,1\n');
    const result = difficultyForModel(trials, beetleModel());
    expect(result.ok ? [] : result.issues.map((issue) => [issue.code, issue.location])).toEqual([['wrong_difficulty', 'beetle-trials.csv:difficulty']]);
  });
});
