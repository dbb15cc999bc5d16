/**
 * The live rows every field fit shares, and the refit of the model's columns
 * through `fitBinomial` (the band, in-the-large and slope fits, of one or two
 * columns, run on few-column-logit.ts): the live rows' counts and prior weights, cluster-robust
 * CR1 errors by player with N in the CR1 factor as a fit of the same file
 * takes it (`fitModel`): the attempts of a per-attempt file, the rounds of a
 * per-round file. The likelihood is always the Bernoulli kernel (the same
 * estimates and errors as the grouped one; it skips the log binomial
 * coefficients, which only the grouped log-likelihood and AIC need), with
 * `observationCount` set to the rounds for a per-round file.
 */
import type { BinomialFit, BinomialFitEstimated } from '../model/binomial-fit-types.js';
import { fitBinomial } from '../model/fit-binomial.js';
import type { CollapsedTrials } from '../model/collapsed-trials.js';
import type { LinkName } from '../model/links.js';
import type { DesignMatrix } from '../numeric/design-matrix.js';
import { normalQuantile } from '../stats/distributions.js';

/** The rows every field fit shares. */
export interface FieldRows {
  readonly successes: Float64Array;
  readonly trials: Float64Array;
  readonly priorWeights: Float64Array;
  readonly clusters: Int32Array;
  /** N of the CR1 factor: the rounds of a per-round file; null for the attempts (a per-attempt file). */
  readonly observationCount: number | null;
}

/** The rows of live groups for the field fits. */
export function fieldRows(data: CollapsedTrials, shape: 'per_attempt' | 'per_round'): FieldRows {
  return {
    successes: data.successes,
    trials: data.attempts,
    priorWeights: data.weight,
    clusters: data.player as Int32Array,
    observationCount: shape === 'per_attempt' ? null : data.rows,
  };
}

/**
 * The field fits stop once a step is at most this many standard errors (the fit's own default is
 * 1e-10): a Newton step that small leaves the next iterate within about its square of the maximum,
 * so nothing reported moves, and each fit saves its last pass over the rows.
 */
export const FIELD_TOLERANCE = 1e-7;

export type FieldFit =
  | { readonly ok: true; readonly fit: BinomialFitEstimated }
  | { readonly ok: false; readonly reason: string; /** Columns the data cannot estimate, on a rank-deficient design. */ readonly aliased?: readonly string[] };

/** Fit `design` (with an optional offset and start) to the rows; a fit without estimates, or stopped at the iteration limit, is a reason. */
export function fitField(
  rows: FieldRows,
  design: DesignMatrix,
  options: { readonly offset?: ArrayLike<number>; readonly start?: ArrayLike<number>; readonly link?: LinkName } = {},
): FieldFit {
  const fit: BinomialFit = fitBinomial(
    {
      design,
      successes: rows.successes,
      trials: rows.trials,
      priorWeights: rows.priorWeights,
      clusters: rows.clusters,
      ...(options.offset === undefined ? {} : { offset: options.offset }),
    },
    {
      likelihood: 'bernoulli',
      ...(rows.observationCount === null ? {} : { observationCount: rows.observationCount }),
      link: options.link ?? 'logit',
      tolerance: FIELD_TOLERANCE,
      ...(options.start === undefined ? {} : { start: options.start }),
    },
  );
  if (fit.status === 'converged') return { ok: true, fit };
  if (fit.status === 'iteration_limit') return { ok: false, reason: 'the fit did not converge within its iteration limit' };
  if (fit.status === 'separation') return { ok: false, reason: `the data separate: ${fit.divergingCoefficients.join(', ')} diverge` };
  return { ok: false, reason: `the live data cannot estimate ${fit.aliased.join(', ')} (aliased with other columns)`, aliased: fit.aliased };
}

/** z of a two-sided interval at `level`. */
export function twoSidedCritical(level: number): number {
  return normalQuantile(1 - (1 - level) / 2);
}
