/**
 * A likelihood-ratio test per factor (latency, scale, difficulty): every term
 * that contains the factor is dropped, the model refitted on the same rows
 * (from R's starting values), and the deviance difference referred to
 * chi-square with the difference in the number of columns as degrees of
 * freedom. The refit reads only the covariates its terms keep and needs no
 * clusters, so it runs on the rows merged over the players and the dropped
 * covariate (`collapseOver`): the same estimates and Bernoulli
 * log-likelihood on far fewer rows, the statistic being twice the
 * difference of the two Bernoulli log-likelihoods (the binomial
 * coefficients and the saturated terms of per-round rows cancel between the
 * two fits of the same data) (Wilks, S. S. (1938), The large-sample distribution of the
 * likelihood ratio for testing composite hypotheses, *Annals of
 * Mathematical Statistics* 9(1), 60-62; McCullagh & Nelder 1989, §4.4.3).
 */
import { chiSquareUpperTail } from '../stats/distributions.js';
import { collapseOver, mergedOverPlayers } from './collapse.js';
import { buildDesign } from './design.js';
import type { LikelihoodRatioTest } from './fit-report-types.js';
import { type Prepared, runBinomial } from './prepared-fit.js';
import { glmRows } from './glm-rows.js';
import { type TermName, termFactors } from './terms.js';

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

/** A factor the tests drop, and the terms that go with it. */
export type TestedFactor = (typeof FACTORS)[number];

/** The factors the terms contain (in report order): one test, and one refit, each. */
export function testedFactors(prepared: Prepared): TestedFactor[] {
  return FACTORS.filter((factor) => prepared.terms.some((term) => term !== 'intercept' && termFactors(term)[factor]));
}

/** What the statistic needs of the full fit. */
export interface FullDeviance {
  /** The full design's columns. */
  readonly columns: number;
  /** -2 x the full fit's Bernoulli log-likelihood (its deviance for a per-attempt fit; see {@link bernoulliDeviance}). */
  readonly bernoulliDeviance: number;
}

/**
 * -2 x the Bernoulli log-likelihood sum w [y log mu + (1 - y) log(1 - mu)] of a fit whose deviance
 * is `deviance`: the deviance itself for the Bernoulli likelihood; for the grouped one, whose
 * deviance is 2 (saturated - that log-likelihood), the deviance less twice the saturated kernel.
 */
export function bernoulliDeviance(prepared: Prepared, deviance: number): number {
  if (prepared.likelihood === 'bernoulli') return deviance;
  const { successes, attempts, weight } = prepared.data;
  return deviance - 2 * glmRows(successes, attempts, weight, null).saturated;
}

/** A reduced model refitted: its columns and -2 x its Bernoulli log-likelihood, or why it was not. */
export type ReducedFit =
  | { readonly factor: TestedFactor; readonly status: 'fitted'; readonly dropped_terms: readonly TermName[]; readonly columns: number; readonly bernoulliDeviance: number }
  | { readonly factor: TestedFactor; readonly status: 'not_tested'; readonly dropped_terms: readonly TermName[]; readonly reason: string };

/**
 * The reduced model without `factor`, refitted on the rows merged over what it does not read, from
 * R's starting values: it needs nothing of the full fit, so it can run while that fit does
 * (`fit-model-threads.ts`).
 */
export function fitReduced(prepared: Prepared, factor: TestedFactor): ReducedFit {
  const dropped = prepared.terms.filter((term) => term !== 'intercept' && termFactors(term)[factor]);
  const kept = prepared.terms.filter((term) => !dropped.includes(term));
  if (kept.length === 0) return { factor, status: 'not_tested', dropped_terms: dropped, reason: 'no term is left once the factor is dropped' };
  const factors = kept.map(termFactors);
  // Merged over the players first (shared with the full fit and the baseline), then over the dropped covariate: the same groups.
  const rows = collapseOver(mergedOverPlayers(prepared.data), {
    latency: factors.some((used) => used.latency),
    scale: factors.some((used) => used.scale),
    difficulty: factors.some((used) => used.difficulty),
  });
  const reducedDesign = buildDesign(rows, kept, prepared.coding);
  const reduced = runBinomial({ ...prepared, likelihood: 'bernoulli' }, rows, reducedDesign, false, null, prepared.link === 'logit' ? REDUCED_TOLERANCE : undefined);
  if (reduced.status !== 'converged') {
    return { factor, status: 'not_tested', dropped_terms: dropped, reason: `the reduced model did not converge (${reduced.status})` };
  }
  // A Bernoulli fit's deviance is -2 x its log-likelihood.
  return { factor, status: 'fitted', dropped_terms: dropped, columns: reduced.coefficients.length, bernoulliDeviance: reduced.deviance };
}

/** The likelihood-ratio test of a reduced model against the full fit. */
export function likelihoodRatioTest(reduced: ReducedFit, full: FullDeviance): LikelihoodRatioTest {
  if (reduced.status === 'not_tested') return reduced;
  const df = full.columns - reduced.columns;
  const statistic = Math.max(0, reduced.bernoulliDeviance - full.bernoulliDeviance);
  return { factor: reduced.factor, status: 'tested', dropped_terms: reduced.dropped_terms, df, statistic, p_value: chiSquareUpperTail(statistic, df) };
}
