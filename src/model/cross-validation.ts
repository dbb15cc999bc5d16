/**
 * Cross-validation that leaves whole players out (k folds, seeded): held-out
 * log loss, Brier score and the mean absolute calibration error in ten
 * equal-width bins of predicted probability (the "expected calibration
 * error" of Naeini, M. P., Cooper, G. F. and Hauskrecht, M. (2015),
 * Obtaining well calibrated probabilities using Bayesian binning, AAAI).
 * Without a player column (or with fewer than two players) collapsed rows
 * are assigned to folds at random instead. The calibration table of a fit
 * itself uses the same ten bins.
 *
 * Held-out probabilities are clipped to [1e-15, 1 - 1e-15] before the log
 * loss, so a held-out prediction of exactly 0 or 1 costs 34.5 nats, not
 * infinity (the clipping scikit-learn's `log_loss` applies).
 */
import { type Issue, warning } from '../issues.js';
import { multiply } from '../numeric/design-matrix.js';
import { createRandomSource, shuffledIndices } from '../random.js';
import { type CollapsedTrials, gatherCollapsed } from './collapsed-trials.js';
import { EVERY_COVARIATE, collapseOver, mergedWithout } from './collapse.js';
import { type TermDesign, buildDesign, designRowsOf, rowPredictor } from './design.js';
import { fitLeastSquares } from './fit-least-squares.js';
import type { CalibrationBin, CrossValidation, FoldResult } from './fit-report-types.js';
import { linkFor } from './links.js';
import { type Prepared, accuracy, leastSquaresWeights, runBinomial } from './prepared-fit.js';
import { foldStarts } from './refit-starts.js';

/** Held-out probabilities are clipped to [CLIP, 1 - CLIP] for the log loss. */
const CLIP = 1e-15;

/**
 * Fold of each collapsed row: whole players in folds when there are at least
 * two players, else rows at random. Players (or rows) are shuffled by
 * Fisher-Yates with the seeded source and dealt round-robin into the folds.
 */
export function assignFolds(
  data: CollapsedTrials,
  folds: number,
  seed: number,
): { readonly fold: Int32Array; readonly folds: number; readonly heldOut: 'players' | 'rows' } {
  const random = createRandomSource(seed);
  const fold = new Int32Array(data.rows);
  const players = data.player === null ? 0 : countAll(data.player);
  if (data.player !== null && players >= 2) {
    const count = Math.min(folds, players);
    const order = shuffledIndices(players, random);
    const foldOfPlayer = new Int32Array(players);
    order.forEach((player, position) => (foldOfPlayer[player] = position % count));
    for (let i = 0; i < data.rows; i += 1) fold[i] = foldOfPlayer[data.player[i] as number] as number;
    return { fold, folds: count, heldOut: 'players' };
  }
  const count = Math.min(folds, data.rows);
  const order = shuffledIndices(data.rows, random);
  order.forEach((row, position) => (fold[row] = position % count));
  return { fold, folds: count, heldOut: 'rows' };
}

function countAll(codes: Int32Array): number {
  let largest = -1;
  for (let i = 0; i < codes.length; i += 1) largest = Math.max(largest, codes[i] as number);
  return largest + 1;
}


/**
 * Ten equal-width bins of predicted probability: attempts, predicted and observed hits
 * (prior-weighted), added row by row; {@link calibrationBins} turns them into the table.
 */
export class CalibrationBins {
  readonly binWeight = new Float64Array(10);
  readonly binPredicted = new Float64Array(10);
  readonly binObserved = new Float64Array(10);

  addToBin(probability: number, weight: number, observed: number): void {
    const bin = Math.min(9, Math.max(0, Math.floor(probability * 10)));
    this.binWeight[bin] = (this.binWeight[bin] as number) + weight;
    this.binPredicted[bin] = (this.binPredicted[bin] as number) + weight * probability;
    this.binObserved[bin] = (this.binObserved[bin] as number) + observed;
  }
}

/** One fold's held-out scores: its sums, plain data (a fold is scored where it is fitted, on any thread). */
export interface FoldScores {
  readonly logLoss: number;
  readonly brier: number;
  /** Prior-weighted attempts. */
  readonly weight: number;
  readonly binWeight: Float64Array;
  readonly binPredicted: Float64Array;
  readonly binObserved: Float64Array;
}

/** The held-out rows' log loss, Brier and calibration-bin sums at their predicted probabilities, in row order. */
function scoreHeldOut(data: CollapsedTrials, rows: Int32Array, probabilities: Float64Array): FoldScores {
  const bins = new CalibrationBins();
  let logLoss = 0;
  let brier = 0;
  let weight = 0;
  for (let r = 0; r < rows.length; r += 1) {
    const i = rows[r] as number;
    const probability = probabilities[r] as number;
    const successes = data.successes[i] as number;
    const attempts = data.attempts[i] as number;
    const prior = data.weight[i] as number;
    const clipped = Math.min(1 - CLIP, Math.max(CLIP, probability));
    const failures = attempts - successes;
    const rowWeight = prior * attempts;
    logLoss += -prior * (successes * Math.log(clipped) + failures * Math.log1p(-clipped));
    brier += prior * (successes * (1 - probability) ** 2 + failures * probability ** 2);
    weight += rowWeight;
    bins.addToBin(probability, rowWeight, prior * successes);
  }
  return { logLoss, brier, weight, binWeight: bins.binWeight, binPredicted: bins.binPredicted, binObserved: bins.binObserved };
}

function predictProbabilities(prepared: Prepared, design: TermDesign, coefficients: ArrayLike<number>): Float64Array {
  return probabilitiesOf(prepared, multiply(design.matrix, coefficients));
}

/** The linear predictor's probabilities (the predictor itself for least squares). */
function probabilitiesOf(prepared: Prepared, linear: Float64Array): Float64Array {
  if (prepared.family === 'least_squares') return linear;
  const link = linkFor(prepared.link);
  return linear.map((value) => link.inverse(value));
}

/**
 * X b at rows `indices` of the full design, each row's entries computed as it is reached
 * (`designRows`) and summed in the order `multiply` takes them: the same bits as multiplying the
 * gathered rows' design, which is never built.
 */
function predictorAt(prepared: Prepared, indices: Int32Array, coefficients: ArrayLike<number>): Float64Array {
  const design = designRowsOf(prepared.data, prepared.terms, prepared.coding);
  const x = new Float64Array(coefficients.length);
  const product = new Float64Array(indices.length);
  for (let r = 0; r < indices.length; r += 1) {
    design.rowAt(indices[r] as number, x);
    product[r] = rowPredictor(x, coefficients);
  }
  return product;
}

function fitCoefficients(prepared: Prepared, data: CollapsedTrials, design: TermDesign, start: Float64Array | null): { readonly status: string; readonly coefficients: Float64Array | null } {
  if (prepared.family === 'least_squares') {
    const fit = fitLeastSquares({ design: design.matrix, response: accuracy(data), weights: leastSquaresWeights(prepared, data) });
    return { status: fit.status, coefficients: fit.status === 'fitted' ? fit.coefficients : null };
  }
  const fit = runBinomial(prepared, data, design, false, start);
  return { status: fit.status, coefficients: fit.status === 'converged' ? fit.coefficients : null };
}

/** The folds of a cross-validation: each collapsed row's fold, and what they hold out. */
export type FoldAssignment = ReturnType<typeof assignFolds>;

/** A fold's fit on its training rows, scored on its own (held-out) rows. */
export interface FoldFit {
  readonly status: string;
  /** Players held out (null when folds hold out rows). */
  readonly players: number | null;
  /** Attempts held out (unweighted). */
  readonly heldAttempts: number;
  /** The held-out scores; null when the fit gave no estimates (`status` says why). */
  readonly scores: FoldScores | null;
}

/** The rows of fold `fold` (`heldOut`) and its training rows (all rows of other folds), each ascending, from one sweep. */
function foldSplit(assignment: FoldAssignment, fold: number): { readonly training: Int32Array; readonly heldOut: Int32Array } {
  const folds = assignment.fold;
  let held = 0;
  for (let i = 0; i < folds.length; i += 1) if (folds[i] === fold) held += 1;
  const training = new Int32Array(folds.length - held);
  const heldOut = new Int32Array(held);
  for (let i = 0, t = 0, h = 0; i < folds.length; i += 1) {
    if (folds[i] === fold) heldOut[h++] = i;
    else training[t++] = i;
  }
  return { training, heldOut };
}

/**
 * Fit fold `fold` (0-based) on its training rows, from `start` (null: R's
 * starting values). A binomial report's folds (refit jobs) ask for `merged`:
 * those fits do not cluster, so their training rows are merged over the
 * players first (the same estimates, on the 1M-row bench file about 286,000
 * rows instead of 788,000: `mergedWithout`, the report's rows merged over the
 * players less the held-out rows, or `collapseOver` of the training rows when
 * counts are not whole numbers), and the held-out predictions are
 * computed from the held-out rows' design rows in place. Otherwise (the
 * least-squares family's folds), each set of rows is gathered and its design
 * built.
 */
export function fitFold(prepared: Prepared, assignment: FoldAssignment, fold: number, start: Float64Array | null, { merged: mergedTraining = false }: { readonly merged?: boolean } = {}): FoldFit {
  const { training, heldOut } = foldSplit(assignment, fold);
  const { data } = prepared;
  let players: number | null = null;
  if (data.player !== null && assignment.heldOut === 'players') {
    const seen = new Set<number>();
    for (let r = 0; r < heldOut.length; r += 1) seen.add(data.player[heldOut[r] as number] as number);
    players = seen.size;
  }
  let heldAttempts = 0;
  for (let r = 0; r < heldOut.length; r += 1) heldAttempts += data.attempts[heldOut[r] as number] as number;
  const scored = (status: string, probabilities: Float64Array | null): FoldFit => ({ status, players, heldAttempts, scores: probabilities === null ? null : scoreHeldOut(data, heldOut, probabilities) });
  if (!mergedTraining) {
    const trainingRows = gatherCollapsed(data, training);
    const fitted = fitCoefficients(prepared, trainingRows, buildDesign(trainingRows, prepared.terms, prepared.coding), start);
    if (fitted.coefficients === null) return scored(fitted.status, null);
    const heldOutRows = gatherCollapsed(data, heldOut);
    return scored(fitted.status, predictProbabilities(prepared, buildDesign(heldOutRows, prepared.terms, prepared.coding), fitted.coefficients));
  }
  // A binomial fold fit does not cluster: its rows merged over the players give the same estimates on fewer rows.
  const merged = mergedWithout(data, heldOut) ?? collapseOver(gatherCollapsed(data, training), EVERY_COVARIATE);
  const fitted = fitCoefficients(prepared, merged, buildDesign(merged, prepared.terms, prepared.coding), start);
  if (fitted.coefficients === null) return scored(fitted.status, null);
  return scored(fitted.status, probabilitiesOf(prepared, predictorAt(prepared, heldOut, fitted.coefficients)));
}

/**
 * Starting values of a binomial fit's folds: one Newton step from the full
 * fit's estimates (`coefficients`) towards each fold's own (refit-starts.ts),
 * each row's design entries computed as the sweep reaches it; null for a fold
 * without one.
 */
export function foldStartsOf(prepared: Prepared, assignment: FoldAssignment, coefficients: Float64Array): (Float64Array | null)[] {
  const { data } = prepared;
  const design = designRowsOf(data, prepared.terms, prepared.coding);
  return foldStarts({ design, successes: data.successes, trials: data.attempts, priorWeights: data.weight }, linkFor(prepared.link), coefficients, assignment.fold, assignment.folds);
}

/**
 * Cross-validation of a fit without a full estimate to start from (the
 * least-squares family's report), fold after fold on the calling thread. A
 * binomial fit's report runs its folds as refit jobs (`refit-jobs.ts`,
 * {@link fitFold}) and hands them to {@link assembleCrossValidation}.
 */
export function crossValidate(prepared: Prepared, requestedFolds: number, seed: number, warnings: Issue[], progress: (stage: string) => void): CrossValidation | null {
  const assignment = assignFolds(prepared.data, requestedFolds, seed);
  const fits = Array.from({ length: assignment.folds }, (_, fold) => {
    progress(`fold ${fold + 1} of ${assignment.folds}`);
    return fitFold(prepared, assignment, fold, null);
  });
  return assembleCrossValidation(prepared, assignment, seed, fits, warnings);
}

/** The cross-validation of the folds' fits (`fits[f]` of fold f, each scored on its held-out rows): their sums added in fold order. */
export function assembleCrossValidation(
  prepared: Prepared,
  assignment: FoldAssignment,
  seed: number,
  fits: readonly FoldFit[],
  warnings: Issue[],
): CrossValidation | null {
  const file = prepared.source.file;
  if (assignment.heldOut === 'rows') {
    warnings.push(
      warning('folds_by_row', `${file}:player`, 'cross-validation by player requires a `player` column with at least 2 players; folds hold out collapsed rows at random instead, so held-out scores are optimistic'),
    );
  }
  // The folds' sums added in fold order (each fold summed in row order where it was fitted).
  let logLoss = 0;
  let brier = 0;
  let weight = 0;
  const bins = new CalibrationBins();
  const foldResults: FoldResult[] = fits.map((fitted, fold) => {
    const scores = fitted.scores;
    const base = { fold: fold + 1, status: fitted.status, players: fitted.players, held_out_attempts: fitted.heldAttempts };
    if (scores === null) return { ...base, log_loss: null, brier: null };
    logLoss += scores.logLoss;
    brier += scores.brier;
    weight += scores.weight;
    for (let b = 0; b < 10; b += 1) {
      bins.binWeight[b] = (bins.binWeight[b] as number) + (scores.binWeight[b] as number);
      bins.binPredicted[b] = (bins.binPredicted[b] as number) + (scores.binPredicted[b] as number);
      bins.binObserved[b] = (bins.binObserved[b] as number) + (scores.binObserved[b] as number);
    }
    return { ...base, log_loss: scores.weight > 0 ? scores.logLoss / scores.weight : null, brier: scores.weight > 0 ? scores.brier / scores.weight : null };
  });
  const failed = foldResults.filter((result) => result.log_loss === null);
  if (failed.length > 0) {
    warnings.push(
      warning('fold_not_fitted', file, `every cross-validation fold requires a converged fit, got ${failed.map((result) => `fold ${result.fold} (${result.status})`).join(', ')}; held-out scores leave those folds out`),
    );
  }
  if (!(weight > 0)) return null;
  // Attempt-weighted mean over bins of |observed - mean predicted| (Naeini et al. 2015).
  let calibrationError = 0;
  for (let b = 0; b < 10; b += 1) {
    if ((bins.binWeight[b] as number) > 0) calibrationError += Math.abs((bins.binObserved[b] as number) - (bins.binPredicted[b] as number));
  }
  return {
    folds: assignment.folds,
    seed,
    held_out: assignment.heldOut,
    attempts: weight,
    log_loss: logLoss / weight,
    brier: brier / weight,
    calibration_error: calibrationError / weight,
    fold_results: foldResults,
  };
}

/** Predicted against observed hit rate in ten equal-width bins of predicted probability (prior-weighted attempts). */
export function calibrationTable(data: CollapsedTrials, probabilities: ArrayLike<number>): CalibrationBin[] {
  const bins = new CalibrationBins();
  for (let i = 0; i < data.rows; i += 1) {
    const prior = data.weight[i] as number;
    bins.addToBin(probabilities[i] as number, prior * (data.attempts[i] as number), prior * (data.successes[i] as number));
  }
  return calibrationBins(bins);
}

/** The table of bin sums added row by row as {@link calibrationTable} adds them (the same bits). */
export function calibrationBins(bins: CalibrationBins): CalibrationBin[] {
  const { binWeight, binPredicted, binObserved } = bins;
  return Array.from({ length: 10 }, (_, b) => {
    const weight = binWeight[b] as number;
    return {
      lower: b / 10,
      upper: (b + 1) / 10,
      attempts: weight,
      mean_predicted: weight > 0 ? (binPredicted[b] as number) / weight : null,
      observed: weight > 0 ? (binObserved[b] as number) / weight : null,
    };
  });
}
