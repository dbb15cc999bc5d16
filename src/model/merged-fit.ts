/**
 * The full fit of a per-attempt file whose rows are kept apart by player:
 * the IRLS runs on the rows merged over the players (`collapseOver`: the
 * same estimates, information, Bernoulli log-likelihood and likelihood
 * summaries, on as many rows as distinct points), and one sweep of the
 * players' own rows gives what needs them: each row's fitted probability
 * and, when the fit clusters by player, the CR1 score sums (the same
 * `clusterRobust` as a fit of those rows; McCullagh & Nelder 1989, §4.2
 * for why merging is exact). On the 1M-row bench file the IRLS then runs on
 * about 297,000 rows instead of 984,505.
 *
 * It gives way to the fit of the players' rows themselves (`runBinomial`)
 * whenever it would differ in more than the last digits or save little:
 * a per-round file (its grouped deviance is defined against the rounds),
 * rows without weight, a merge that keeps more than four rows in five, and
 * a fit that is not clean (not converged, or with any warning: their counts
 * of rows at probability 0 or 1 would count merged rows).
 */
import type { BinomialFit } from './binomial-fit-types.js';
import { collapseOver } from './collapse.js';
import { type TermDesign, buildDesign } from './design.js';
import { clusterRobust } from './fit-binomial.js';
import { glmRows } from './glm-rows.js';
import { linkFor } from './links.js';
import { type Prepared, runBinomial } from './prepared-fit.js';
import { multiply } from '../numeric/design-matrix.js';

/** Merged rows must be at most this share of the players' rows for the merged fit to be used. */
const MERGED_SHARE = 0.8;

/** The full fit of `prepared` over its `design` (the players' rows). */
export function fitFullModel(prepared: Prepared, design: TermDesign): BinomialFit {
  const { data } = prepared;
  const direct = () => runBinomial(prepared, data, design);
  if (prepared.likelihood !== 'bernoulli' || data.player === null) return direct();
  for (let i = 0; i < data.rows; i += 1) if (!((data.attempts[i] as number) * (data.weight[i] as number) > 0)) return direct();
  const merged = collapseOver(data, { latency: true, scale: true, difficulty: true });
  if (merged.rows > MERGED_SHARE * data.rows) return direct();
  const fit = runBinomial(prepared, merged, buildDesign(merged, prepared.terms, prepared.coding), false);
  if (fit.status !== 'converged' || fit.warnings.length > 0) return direct();

  // The players' rows at the estimate: fitted probabilities and, for CR1, the score sums by player.
  const link = linkFor(prepared.link);
  const linearPredictor = multiply(design.matrix, fit.coefficients);
  const mu = new Float64Array(data.rows);
  const complement = new Float64Array(data.rows);
  for (let i = 0; i < data.rows; i += 1) {
    const eta = linearPredictor[i] as number;
    mu[i] = link.inverse(eta);
    complement[i] = link.inverseComplement(eta);
  }
  if (!prepared.clustered) return { ...fit, fitted: mu };
  const block = clusterRobust({
    design: design.matrix,
    rows: glmRows(data.successes, data.attempts, data.weight, null),
    state: { mu, complement },
    link,
    linearPredictor,
    clusters: data.player,
    keep: new Uint8Array(data.rows).fill(1),
    covariance: fit.covariance,
    coefficients: fit.coefficients,
    observationCount: fit.observationCount,
  });
  return { ...fit, fitted: mu, robust: block.robust, warnings: block.warning === null ? fit.warnings : [...fit.warnings, block.warning] };
}
