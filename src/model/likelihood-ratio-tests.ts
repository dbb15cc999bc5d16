/**
 * A likelihood-ratio test per factor (latency, scale, difficulty): every term
 * that contains the factor is dropped, the model refitted on the same rows
 * (from the constrained one-step start of `refit-starts.ts`), and the deviance difference referred to
 * chi-square with the difference in the number of columns as degrees of
 * freedom (Wilks, S. S. (1938), The large-sample distribution of the
 * likelihood ratio for testing composite hypotheses, *Annals of
 * Mathematical Statistics* 9(1), 60-62; McCullagh & Nelder 1989, §4.4.3).
 */
import { chiSquareUpperTail } from '../stats/distributions.js';
import type { BinomialFitEstimated } from './binomial-fit-types.js';
import { buildDesign } from './design.js';
import type { LikelihoodRatioTest } from './fit-report-types.js';
import { type Prepared, runBinomial } from './prepared-fit.js';
import { reducedStart } from './refit-starts.js';
import { termFactors } from './terms.js';

const FACTORS = ['latency', 'scale', 'difficulty'] as const;

/**
 * A logit reduced fit stops once a step is at most this many standard errors
 * (a fit's own default is 1e-10). Only its deviance is used, and logit steps
 * are Newton steps: the step's result is then within about the square of it
 * of the maximum (scaled by 1 / sqrt(n)), where the deviance is flat to
 * second order, so the statistic does not move in any printed digit; on the
 * 1M-row bench file each reduced fit saves its last pass over the rows.
 */
const REDUCED_TOLERANCE = 1e-5;

export function likelihoodRatios(prepared: Prepared, full: BinomialFitEstimated, progress: (stage: string) => void): LikelihoodRatioTest[] {
  const tests: LikelihoodRatioTest[] = [];
  for (const factor of FACTORS) {
    const dropped = prepared.terms.filter((term) => term !== 'intercept' && termFactors(term)[factor]);
    if (dropped.length === 0) continue;
    const kept = prepared.terms.filter((term) => !dropped.includes(term));
    if (kept.length === 0) {
      tests.push({ factor, status: 'not_tested', dropped_terms: dropped, reason: 'no term is left once the factor is dropped' });
      continue;
    }
    progress(`likelihood ratio: ${factor}`);
    const reducedDesign = buildDesign(prepared.data, kept, prepared.coding);
    // Started from the constrained one-step estimate (refit-starts.ts), else from the full fit's
    // estimates of the columns it keeps: closer starts than R's, the same optimum.
    const start =
      reducedStart(full, reducedDesign.matrix.names) ??
      Float64Array.from(reducedDesign.matrix.names, (name) => full.coefficients[full.names.indexOf(name)] ?? 0);
    const reduced = runBinomial(prepared, prepared.data, reducedDesign, false, start, prepared.link === 'logit' ? REDUCED_TOLERANCE : undefined);
    if (reduced.status !== 'converged') {
      tests.push({ factor, status: 'not_tested', dropped_terms: dropped, reason: `the reduced model did not converge (${reduced.status})` });
      continue;
    }
    const df = full.coefficients.length - reduced.coefficients.length;
    const statistic = Math.max(0, reduced.deviance - full.deviance);
    tests.push({ factor, status: 'tested', dropped_terms: dropped, df, statistic, p_value: chiSquareUpperTail(statistic, df) });
  }
  return tests;
}
