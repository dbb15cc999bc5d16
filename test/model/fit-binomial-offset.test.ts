import { describe, expect, it } from 'vitest';
import type { BinomialFit, BinomialFitEstimated } from '../../src/model/binomial-fit-types.js';
import { binomialScore, fitBinomial } from '../../src/model/fit-binomial.js';
import { designMatrixFromColumns, interceptColumn } from '../../src/numeric/design-matrix.js';
import { normalQuantile } from '../../src/stats/distributions.js';
import { fieldValue, liveRounds } from '../helpers/field-fixtures.js';
import { relativeError } from '../helpers/glm-fixtures.js';

function estimated(fit: BinomialFit): BinomialFitEstimated {
  if (fit.status !== 'converged') throw new Error(`expected a converged fit, got ${fit.status}`);
  return fit;
}

const live = liveRounds();
const rows = live.latency.length;

describe('fitBinomial() with an offset', () => {
  it('matches R glm(y ~ latency_ms, offset = eta0) with CR1 errors by player to 1e-9', () => {
    const fit = estimated(
      fitBinomial({
        design: designMatrixFromColumns([interceptColumn(rows), { name: 'latency_ms', values: live.latency }]),
        successes: live.hits,
        trials: live.attempts,
        offset: live.linearPredictor,
        clusters: live.cluster,
      }),
    );
    ['(Intercept)', 'latency_ms'].forEach((term, j) => {
      expect(relativeError(fit.coefficients[j] as number, fieldValue('rounds', 'linear', 'estimate', term))).toBeLessThan(1e-9); // R 4.2.2 glm, field_r.csv
      expect(relativeError(fit.standardErrors[j] as number, fieldValue('rounds', 'linear', 'se_model', term))).toBeLessThan(1e-8); // R 4.2.2 vcov(glm)
      expect(relativeError(fit.robust?.standardErrors[j] as number, fieldValue('rounds', 'linear', 'se_CR1', term))).toBeLessThan(1e-8); // sandwich 3.0-2 vcovCL(type = "HC1", cadjust = TRUE)
    });
    expect(relativeError(fit.deviance, fieldValue('rounds', 'linear', 'deviance'))).toBeLessThan(1e-10); // R 4.2.2 deviance(glm)
    // R fits the null model (intercept and offset) for the null deviance of a fit with an offset.
    expect(relativeError(fit.nullDeviance, fieldValue('rounds', 'linear', 'null_deviance'))).toBeLessThan(1e-9); // R 4.2.2 glm null.deviance
    expect(relativeError(fit.logLikelihood, fieldValue('rounds', 'linear', 'loglik'))).toBeLessThan(1e-11); // R 4.2.2 logLik(glm)
  });

  it('takes the null deviance of an intercept-only fit with an offset from the fit itself, as R does', () => {
    const fit = estimated(fitBinomial({ design: designMatrixFromColumns([interceptColumn(rows)]), successes: live.hits, trials: live.attempts, offset: live.linearPredictor }));
    expect(relativeError(fit.coefficients[0] as number, fieldValue('rounds', 'citl', 'estimate', '(Intercept)'))).toBeLessThan(1e-9); // R 4.2.2 glm(y ~ 1, offset = eta0)
    expect(relativeError(fit.nullDeviance, fieldValue('rounds', 'citl', 'null_deviance'))).toBeLessThan(1e-10); // R 4.2.2 glm null.deviance
  });

  it('takes the null deviance at the offset alone without an intercept, as R does', () => {
    const band = live.latency.map((value) => (value < 80 ? 1 : 0));
    const fit = estimated(
      fitBinomial({
        design: designMatrixFromColumns([
          { name: 'low', values: band },
          { name: 'high', values: band.map((value) => 1 - value) },
        ]),
        successes: live.hits,
        trials: live.attempts,
        offset: live.linearPredictor,
      }),
    );
    let deviance = 0;
    live.hits.forEach((hits, i) => {
      const attempts = live.attempts[i] as number;
      const mu = 1 / (1 + Math.exp(-(live.linearPredictor[i] as number)));
      const y = hits / attempts;
      if (y > 0) deviance += 2 * attempts * y * Math.log(y / mu);
      if (y < 1) deviance += 2 * attempts * (1 - y) * Math.log((1 - y) / (1 - mu));
    });
    // R: the null deviance of a fit without an intercept is the deviance at eta = offset;
    // field_r.csv's deviance at the model's coefficients is that deviance.
    expect(relativeError(fit.nullDeviance, fieldValue('rounds', 'refit', 'deviance_at_model'))).toBeLessThan(1e-10); // R 4.2.2 deviance(glm(y ~ 0, offset = eta0))
    expect(relativeError(deviance, fieldValue('rounds', 'refit', 'deviance_at_model'))).toBeLessThan(1e-10); // the definition, by hand
  });

  it('matches R for the probit link with an offset (the generic IRLS pass) to 1e-9', () => {
    // The offset is qnorm(plogis(eta0)); the project's normal quantile is checked against R's qnorm elsewhere.
    const offset = live.linearPredictor.map((eta) => normalQuantile(1 / (1 + Math.exp(-eta))));
    expect(relativeError(offset[0] as number, fieldValue('rounds', 'probit_offset', 'offset_first'))).toBeLessThan(1e-13); // R 4.2.2 qnorm(plogis(eta0))[1]
    const fit = estimated(
      fitBinomial(
        {
          design: designMatrixFromColumns([interceptColumn(rows), { name: 'latency_ms', values: live.latency }]),
          successes: live.hits,
          trials: live.attempts,
          offset,
          clusters: live.cluster,
        },
        { link: 'probit' },
      ),
    );
    ['(Intercept)', 'latency_ms'].forEach((term, j) => {
      expect(relativeError(fit.coefficients[j] as number, fieldValue('rounds', 'probit_offset', 'estimate', term))).toBeLessThan(1e-9); // R 4.2.2 glm(binomial(probit), offset)
      expect(relativeError(fit.standardErrors[j] as number, fieldValue('rounds', 'probit_offset', 'se_model', term))).toBeLessThan(1e-7); // R 4.2.2 vcov (weights of the last iteration, see fit-binomial.ts)
      expect(relativeError(fit.robust?.standardErrors[j] as number, fieldValue('rounds', 'probit_offset', 'se_CR1', term))).toBeLessThan(1e-7); // sandwich 3.0-2 vcovCL HC1
    });
    expect(relativeError(fit.nullDeviance, fieldValue('rounds', 'probit_offset', 'null_deviance'))).toBeLessThan(1e-9); // R 4.2.2 glm null.deviance (null model with the offset)
  });

  it('has a zero score at the estimate with the offset', () => {
    const data = {
      design: designMatrixFromColumns([interceptColumn(rows), { name: 'latency_ms', values: live.latency }]),
      successes: live.hits,
      trials: live.attempts,
      offset: live.linearPredictor,
    };
    const fit = estimated(fitBinomial(data));
    const score = binomialScore(data, fit.coefficients);
    expect(Math.abs(score[0] as number)).toBeLessThan(1e-7); // the MLE's defining equation
    expect(Math.abs(score[1] as number)).toBeLessThan(1e-5);
  });
});
