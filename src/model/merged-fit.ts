/**
 * The full fit of a per-attempt file whose rows are kept apart by player:
 * the IRLS runs on the rows merged over the players (`collapseOver`: the
 * same estimates, information, Bernoulli log-likelihood and likelihood
 * summaries, on as many rows as distinct points), and one sweep of the
 * players' own rows gives what needs them: each row's fitted probability
 * and, when the fit clusters by player, the CR1 score sums (each row's
 * factor from `scoreFactor` and the block from `robustBlock`, as a fit of
 * those rows makes them; McCullagh & Nelder 1989, §4.2 for why merging is
 * exact). On the 1M-row bench file the IRLS then runs on
 * about 297,000 rows instead of 984,505.
 *
 * It gives way to the fit of the players' rows themselves (`runBinomial`)
 * whenever it would differ in more than the last digits or save little:
 * a per-round file (its grouped deviance is defined against the rounds),
 * rows without weight, a merge that keeps more than four rows in five, and
 * a fit that is not clean (not converged, or with any warning: their counts
 * of rows at probability 0 or 1 would count merged rows).
 */
import type { BinomialFitEstimated, BinomialFitRankDeficient, BinomialFitSeparated } from './binomial-fit-types.js';
import { mergedOverPlayers } from './collapse.js';
import { type TermDesign, buildDesign, designRowsOf, rowPredictor } from './design.js';
import { robustBlock, scoreFactor } from './fit-binomial.js';
import { linkFor } from './links.js';
import { type Prepared, runBinomial } from './prepared-fit.js';
import { compactClustersOfAll } from '../numeric/cluster-sandwich.js';
import { CalibrationBins, calibrationBins, calibrationTable } from './cross-validation.js';
import type { CalibrationBin } from './fit-report-types.js';

/**
 * The full fit without each row's fitted probability (8 bytes a row, needed only for the calibration
 * table, which is computed from them as they come) and with that table.
 */
export type FullFit = (Omit<BinomialFitEstimated, 'fitted'> & { readonly calibration: CalibrationBin[] }) | BinomialFitSeparated | BinomialFitRankDeficient;

/** Merged rows must be at most this share of the players' rows for the merged fit to be used. */
const MERGED_SHARE = 0.8;

/**
 * The full fit of `prepared` (the players' rows). `design` gives their design matrix, built only
 * when the players' rows are fitted themselves: the merged fit's sweep computes each row's design
 * entries as it goes (`designRows`), so the one-fit command never holds the full matrix. `folds`:
 * whether the report has folds, which will start from the same merged rows.
 */
export function fitFullModel(prepared: Prepared, design: () => TermDesign, { folds = true }: { readonly folds?: boolean } = {}): FullFit {
  const { data } = prepared;
  const direct = (): FullFit => {
    const fit = runBinomial(prepared, data, design());
    if (fit.status === 'separation' || fit.status === 'rank_deficient') return fit;
    const { fitted, ...rest } = fit;
    return { ...rest, calibration: calibrationTable(data, fitted) };
  };
  if (prepared.likelihood !== 'bernoulli' || data.player === null) return direct();
  for (let i = 0; i < data.rows; i += 1) if (!((data.attempts[i] as number) * (data.weight[i] as number) > 0)) return direct();
  // Each row's merged row is kept only for the report's folds (mergedWithout).
  const merged = mergedOverPlayers(data, { rowGroups: folds });
  if (merged.rows > MERGED_SHARE * data.rows) return direct();
  const fit = runBinomial(prepared, merged, buildDesign(merged, prepared.terms, prepared.coding), false);
  if (fit.status !== 'converged' || fit.warnings.length > 0) return direct();

  // The players' rows at the estimate, one at a time: each row's fitted probability into its
  // calibration bin (as calibrationTable adds them; the probabilities are not kept) and, for CR1,
  // its score added to its player's sum, as fitBinomial's own CR1 sums.
  const link = linkFor(prepared.link);
  const logit = link.name === 'logit';
  const k = fit.coefficients.length;
  const byRow = designRowsOf(data, prepared.terms, prepared.coding);
  const x = new Float64Array(k);
  const bins = new CalibrationBins();
  const clusters = prepared.clustered ? compactClustersOfAll(data.player) : null;
  const clusterScores = new Float64Array(clusters === null ? 0 : clusters.count * k);
  for (let i = 0; i < data.rows; i += 1) {
    byRow.rowAt(i, x);
    const eta = rowPredictor(x, fit.coefficients);
    let mu: number;
    let complement: number;
    if (logit) {
      // The logit link's inverse and its complement from one exp, by the link's own operations
      // (links.ts: 1 / (1 + e) and e / (1 + e), e = exp(-|eta|)): the same bits.
      const exponential = Math.exp(-Math.abs(eta));
      const inverse = 1 / (1 + exponential);
      const small = exponential / (1 + exponential);
      mu = eta >= 0 ? inverse : small;
      complement = eta > 0 ? small : inverse;
    } else {
      mu = link.inverse(eta);
      complement = link.inverseComplement(eta);
    }
    const attempts = data.attempts[i] as number;
    const prior = data.weight[i] as number;
    bins.addToBin(mu, prior * attempts, prior * (data.successes[i] as number));
    if (clusters === null) continue;
    const factor = scoreFactor(link, logit, attempts * prior, (data.successes[i] as number) / attempts, mu, complement, eta);
    if (factor === null) continue;
    const at = (clusters.indices[i] as number) * k;
    for (let j = 0; j < k; j += 1) clusterScores[at + j] = (clusterScores[at + j] as number) + (x[j] as number) * factor;
  }
  const calibration = calibrationBins(bins);
  const { fitted: _unused, ...rest } = fit;
  if (clusters === null) return { ...rest, calibration };
  const block = robustBlock({ clusterScores, clusterCount: clusters.count, covariance: fit.covariance, coefficients: fit.coefficients, observationCount: fit.observationCount });
  return { ...rest, calibration, robust: block.robust, warnings: block.warning === null ? fit.warnings : [...fit.warnings, block.warning] };
}
