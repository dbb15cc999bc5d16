import { describe, expect, it } from 'vitest';
import { fieldValue } from '../helpers/field-fixtures.js';
import { relativeError } from '../helpers/glm-fixtures.js';
import { fixtureReport } from './reference-fixture.js';

// Every reference value: test/fixtures/field/field_r.csv, from R 4.2.2 glm and sandwich 3.0-2
// (vcovCL, type "HC1", cadjust TRUE: CR1) by tools/crosscheck/field-reference.R.
const rounds = await fixtureReport('live-rounds.csv');
const attempts = await fixtureReport('live-attempts.csv');

describe('checkField() calibration against R glm', () => {
  it.each([
    ['rounds', rounds],
    ['attempts', attempts],
  ] as const)('calibration-in-the-large on %s: estimate, model-based and CR1 errors to 1e-8', (dataset, report) => {
    const value = report.calibration.in_the_large;
    expect(relativeError(value?.estimate ?? 0, fieldValue(dataset, 'citl', 'estimate', '(Intercept)'))).toBeLessThan(1e-8); // R glm(y ~ 1, offset = logit(p))
    expect(relativeError(value?.model_std_error ?? 0, fieldValue(dataset, 'citl', 'se_model', '(Intercept)'))).toBeLessThan(1e-8); // R vcov(glm)
    expect(relativeError(value?.std_error ?? 0, fieldValue(dataset, 'citl', 'se_CR1', '(Intercept)'))).toBeLessThan(1e-8); // sandwich vcovCL HC1
  });

  it.each([
    ['rounds', rounds],
    ['attempts', attempts],
  ] as const)('the calibration slope on %s: estimate, model-based and CR1 errors to 1e-8', (dataset, report) => {
    const value = report.calibration.slope;
    expect(relativeError(value?.estimate ?? 0, fieldValue(dataset, 'slope', 'estimate', 'eta0'))).toBeLessThan(1e-8); // R glm(y ~ logit(p))
    expect(relativeError(value?.model_std_error ?? 0, fieldValue(dataset, 'slope', 'se_model', 'eta0'))).toBeLessThan(1e-8); // R vcov(glm)
    expect(relativeError(value?.std_error ?? 0, fieldValue(dataset, 'slope', 'se_CR1', 'eta0'))).toBeLessThan(1e-8); // sandwich vcovCL HC1
  });

  it('the residual latency trend (GLS of the band departures on latency) to 1e-8', () => {
    const value = rounds.compensation.residual_latency_per_100ms;
    expect(relativeError(value?.estimate ?? 0, fieldValue('rounds', 'bands', 'trend_per_100ms'))).toBeLessThan(1e-8); // R, GLS by hand on coef(glm) and vcovCL
    expect(relativeError(value?.std_error ?? 0, fieldValue('rounds', 'bands', 'trend_se_per_100ms'))).toBeLessThan(1e-8); // R
  });
});

describe('checkField() bands against R glm', () => {
  it('observed rates, and gaps to the first band at the file\'s difficulty mix with CR1 delta-method errors', () => {
    for (const band of rounds.bands) {
      expect(relativeError(band.observed ?? 0, fieldValue('rounds', 'bands', 'observed', String(band.index)))).toBeLessThan(1e-12); // hits / attempts, R
      if (band.index === 0) continue;
      const gap = band.gap;
      expect(relativeError(gap?.estimate ?? 0, fieldValue('rounds', 'bands', 'gap_at_mix', String(band.index)))).toBeLessThan(1e-9); // R, marginal standardisation by hand
      // The table's interval is the TOST's (90%): its half-width is z_0.95 times the CR1 error.
      const halfWidth = ((gap?.upper ?? 0) - (gap?.lower ?? 0)) / 2;
      expect(relativeError(halfWidth / 1.6448536269514722, fieldValue('rounds', 'bands', 'gap_at_mix_se_CR1', String(band.index)))).toBeLessThan(1e-8); // R, delta method on vcovCL
    }
    const worst = rounds.compensation.gap;
    const worstBand = String(rounds.compensation.worst_band);
    expect(relativeError(worst?.estimate ?? 0, fieldValue('rounds', 'bands', 'gap_at_mix', worstBand))).toBeLessThan(1e-9); // R
    expect(relativeError(worst?.std_error ?? 0, fieldValue('rounds', 'bands', 'gap_at_mix_se_CR1', worstBand))).toBeLessThan(1e-8); // R
  });

  it('each band fit rate equals the observed rate (the score equation), as R fits it', () => {
    for (const band of rounds.bands) {
      expect(relativeError(fieldValue('rounds', 'bands', 'fitted_rate', String(band.index)), band.observed ?? 0)).toBeLessThan(1e-10); // R fitted(glm) by band
    }
  });
});

describe('checkField() refit against R glm', () => {
  const names = ['(Intercept)', 'latency_ms', 'log(scale)', 'difficultyveteran', 'latency_ms:log(scale)'];

  it('refits the model terms: estimates and CR1 errors to 1e-8', () => {
    rounds.calibration.coefficients.forEach((row, j) => {
      const term = names[j] as string;
      expect(relativeError(row.refit ?? 0, fieldValue('rounds', 'refit', 'estimate', term))).toBeLessThan(1e-8); // R glm refit
      expect(relativeError(row.robust_std_error ?? 0, fieldValue('rounds', 'refit', 'se_CR1', term))).toBeLessThan(1e-8); // sandwich vcovCL HC1
    });
  });

  it('the likelihood-ratio test and its Rao-Scott adjustment', () => {
    const test = rounds.calibration.likelihood_ratio;
    if (test.status !== 'tested') throw new Error(test.reason);
    expect(relativeError(test.statistic, fieldValue('rounds', 'refit', 'lr_statistic'))).toBeLessThan(1e-8); // R deviance(at model) - deviance(refit)
    expect(test.df).toBe(fieldValue('rounds', 'refit', 'lr_df'));
    expect(relativeError(test.p_value, fieldValue('rounds', 'refit', 'lr_p'))).toBeLessThan(1e-6); // R pchisq
    const adjusted = test.adjusted;
    expect(relativeError(adjusted?.mean_design_effect ?? 0, fieldValue('rounds', 'refit', 'rao_scott_mean_eigenvalue'))).toBeLessThan(1e-8); // R eigen(solve(vcov) %*% vcovCL)
    expect(relativeError(adjusted?.a_squared ?? 0, fieldValue('rounds', 'refit', 'rao_scott_a2'))).toBeLessThan(1e-7); // R, from the eigenvalues
    expect(relativeError(adjusted?.statistic ?? 0, fieldValue('rounds', 'refit', 'rao_scott_statistic'))).toBeLessThan(1e-7);
    expect(relativeError(adjusted?.df ?? 0, fieldValue('rounds', 'refit', 'rao_scott_df'))).toBeLessThan(1e-7);
    expect(relativeError(adjusted?.p_value ?? 0, fieldValue('rounds', 'refit', 'rao_scott_p'))).toBeLessThan(1e-5); // R pchisq with fractional df
    expect(rounds.recommendation).toBe('refit'); // the fixture's truth is 25% steeper in latency
  });
});
