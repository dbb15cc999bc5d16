/**
 * The field check's small logistic fits, written for their designs: one
 * indicator per band (each row in at most one band, so the bands' fits
 * separate), and an intercept with one covariate (the calibration slope),
 * each with an offset, CR1 errors by player, on the live rows' counts and
 * prior weights. Calibration in the large is the one-band case.
 *
 * The same maximum-likelihood estimates as `fitBinomial` on the same design
 * (logit Fisher scoring is Newton-Raphson, from the same starts, and the
 * same stop: a step of at most 1e-7 standard errors), its model-based
 * covariance (the inverse information, here at the estimate) and its CR1
 * covariance by player: sandwichOfClusterScores with G the players of the
 * rows with weight and N the attempts of those rows, or the file's rounds
 * (`FieldRows`). Tests compare both with `fitBinomial` on the design written
 * out and with R glm.
 *
 * Step control: a step longer than one standard error is halved while it
 * lowers the log-likelihood (as `fitBinomial` halves one that raises the
 * deviance). Shorter steps are not checked: within a standard error of the
 * iterate the log-likelihood is its quadratic model up to a term that
 * shrinks as the attempts grow, so a Newton step there raises it, and the
 * passes that take them skip the log-likelihood (a log1p per row, about half
 * a pass's time).
 *
 * Why not `fitBinomial` itself: it reads a design of n rows by k columns
 * (one of k entries non-zero per row for the bands), reduces it by QR and
 * keeps every per-row array a general fit needs; these fits need a few sums
 * per pass. On a million live rows they take a sixth of its time.
 *
 * Cost: one pass over the rows per Newton step (one exp a row, and a log1p
 * for a checked step), and one at the estimate for the CR1 sums.
 */
import { sandwichOfClusterScores } from '../numeric/cluster-sandwich.js';
import { BOUNDARY, divergingNames, stillDiverging } from '../model/separation.js';
import { FIELD_TOLERANCE, type FieldRows } from './field-fit.js';

export type FewColumnFit =
  | {
      readonly ok: true;
      readonly coefficients: Float64Array;
      /** Model-based covariance (the inverse information at the estimate), k x k row-major. */
      readonly covariance: Float64Array;
      /** CR1 by player, k x k row-major; null with fewer than 2 players or no more observations than coefficients. */
      readonly robustCovariance: Float64Array | null;
      /** sum w mu (1 - mu) per column at the estimate: the information's diagonal. */
      readonly information: Float64Array;
    }
  | { readonly ok: false; readonly reason: string; readonly aliased?: readonly string[] };

/** Steps longer than this many standard errors are checked against the log-likelihood. */
const CHECKED_STEP = 1;
const MAX_ITERATIONS = 50;
const MAX_HALVINGS = 30;

/**
 * logit P = offset + gamma[column[i]] for the rows with column[i] >= 0 (null: every row in
 * column 0), gamma from zero. Each gamma solves its own score equation over its own rows.
 */
export function fitIndicatorLogit(rows: FieldRows, offset: Float64Array, column: Int32Array | null, columns: number, names: readonly string[]): FewColumnFit {
  const pass: Pass = (at, sums, final) => indicatorPass(rows, offset, column, at, sums, final);
  return newton(rows, pass, new Float64Array(columns), 1, names);
}

/**
 * logit P = offset + a + b x, from (a, b) = `start`: the calibration slope (x the logit of the
 * model's prediction, no offset).
 */
export function fitLineLogit(rows: FieldRows, offset: Float64Array | null, x: Float64Array, start: readonly [number, number], names: readonly [string, string]): FewColumnFit {
  const pass: Pass = (at, sums, final) => linePass(rows, offset, x, at, sums, final);
  return newton(rows, pass, Float64Array.from(start), 2, names);
}

/**
 * The sums of one pass over the rows at coefficients `at`, per problem (a band; the line is one
 * problem of two coefficients): the score (size per problem), the information (1 entry, or 3:
 * i00, i01, i11), the log-likelihood where `sums.wanted` asks for it, and the rows on the
 * boundary; at the estimate (`final`) also each player's score sums and whether a boundary row
 * still moved.
 */
type Pass = (at: Float64Array, sums: PassSums, final: FinalSums | null) => void;

interface PassSums {
  readonly score: Float64Array;
  readonly information: Float64Array;
  readonly likelihood: Float64Array;
  readonly wanted: Uint8Array;
  boundary: number;
}

/** Newton-Raphson for independent problems of `size` coefficients each (1 or 2), all in one pass over the rows per step. */
function newton(rows: FieldRows, pass: Pass, start: Float64Array, size: 1 | 2, names: readonly string[]): FewColumnFit {
  const problems = start.length / size;
  const entries = size === 1 ? 1 : 3;
  const accepted = Float64Array.from(start);
  const candidate = Float64Array.from(start);
  const lastStep = new Float64Array(start.length);
  // The log-likelihood at the accepted iterate: -Infinity before the start is, NaN where not computed.
  const acceptedLikelihood = new Float64Array(problems).fill(Number.NEGATIVE_INFINITY);
  // The length of the step to the candidate in standard errors (the start: unbounded, so checked).
  const stepIn = new Float64Array(problems).fill(Number.POSITIVE_INFINITY);
  const halvings = new Int32Array(problems);
  const done = new Uint8Array(problems);
  const sums: PassSums = { score: new Float64Array(start.length), information: new Float64Array(problems * entries), likelihood: new Float64Array(problems), wanted: new Uint8Array(problems), boundary: 0 };
  for (let iteration = 0; iteration < MAX_ITERATIONS; iteration += 1) {
    for (let p = 0; p < problems; p += 1) sums.wanted[p] = done[p] === 0 && ((stepIn[p] as number) > CHECKED_STEP || (halvings[p] as number) > 0) ? 1 : 0;
    // A checked step from an iterate whose log-likelihood was not computed (an unchecked step led
    // there, and the next is long): compute it there first (rare: Newton steps shrink).
    if (sums.wanted.some((wanted, p) => wanted === 1 && Number.isNaN(acceptedLikelihood[p] as number))) {
      pass(accepted, sums, null);
      for (let p = 0; p < problems; p += 1) if (sums.wanted[p] === 1 && Number.isNaN(acceptedLikelihood[p] as number)) acceptedLikelihood[p] = sums.likelihood[p] as number;
    }
    pass(candidate, sums, null);
    let open = 0;
    for (let p = 0; p < problems; p += 1) {
      if (done[p] === 1) continue;
      const at = p * size;
      if (sums.wanted[p] === 1) {
        const before = acceptedLikelihood[p] as number;
        if (!((sums.likelihood[p] as number) >= before - 1e-12 * Math.abs(before) - 1e-12)) {
          // The step lowered the log-likelihood (or left it undefined): halve it.
          if ((halvings[p] = (halvings[p] as number) + 1) > MAX_HALVINGS) return { ok: false, reason: 'step halving could not raise the log-likelihood' };
          for (let j = at; j < at + size; j += 1) candidate[j] = ((candidate[j] as number) + (accepted[j] as number)) / 2;
          open += 1;
          continue;
        }
      }
      for (let j = at; j < at + size; j += 1) accepted[j] = candidate[j] as number;
      acceptedLikelihood[p] = sums.wanted[p] === 1 ? (sums.likelihood[p] as number) : Number.NaN;
      halvings[p] = 0;
      const inverse = inverseOf(sums.information.subarray(p * entries, (p + 1) * entries));
      if (inverse === null) return aliased(names[at + size - 1] as string);
      const step = stepFrom(inverse, sums.score.subarray(at, at + size));
      let largest = 0;
      for (let j = 0; j < size; j += 1) {
        candidate[at + j] = (accepted[at + j] as number) + (step[j] as number);
        lastStep[at + j] = step[j] as number;
        largest = Math.max(largest, Math.abs(step[j] as number) / Math.sqrt(inverse[j * size + j] as number));
      }
      stepIn[p] = largest;
      if (largest <= FIELD_TOLERANCE) done[p] = 1;
      else open += 1;
    }
    if (open === 0) return estimate(rows, pass, candidate, lastStep, size, sums, names);
  }
  return sums.boundary > 0 ? separated(names) : { ok: false, reason: 'the fit did not converge within its iteration limit' };
}

/** The fit at `coefficients` from one more pass there: separation, else the covariance and CR1 by player. */
function estimate(rows: FieldRows, pass: Pass, coefficients: Float64Array, lastStep: Float64Array, size: 1 | 2, sums: PassSums, names: readonly string[]): FewColumnFit {
  let players = 0;
  for (let i = 0; i < rows.clusters.length; i += 1) players = Math.max(players, (rows.clusters[i] as number) + 1);
  const k = coefficients.length;
  const final: FinalSums = { lastStep, scores: new Float64Array(players * k), seen: new Uint8Array(players), attempts: 0, diverging: false };
  sums.wanted.fill(0);
  pass(coefficients, sums, final);
  if (final.diverging) return separated(divergingNames(lastStep, names));
  // The covariance: block diagonal, one block per problem.
  const entries = size === 1 ? 1 : 3;
  const covariance = new Float64Array(k * k);
  const information = new Float64Array(k);
  for (let at = 0; at < k; at += size) {
    const block = sums.information.subarray((at / size) * entries, (at / size + 1) * entries);
    const inverse = inverseOf(block);
    if (inverse === null) return aliased(names[at + size - 1] as string);
    for (let a = 0; a < size; a += 1) {
      information[at + a] = block[a === 0 ? 0 : entries - 1] as number;
      for (let b = 0; b < size; b += 1) covariance[(at + a) * k + at + b] = inverse[a * size + b] as number;
    }
  }
  // Only the players with rows of weight are clusters, in the order of their codes.
  let count = 0;
  for (let p = 0; p < players; p += 1) if (final.seen[p] === 1) count += 1;
  const clusterScores = new Float64Array(count * k);
  for (let p = 0, g = 0; p < players; p += 1) {
    if (final.seen[p] !== 1) continue;
    clusterScores.set(final.scores.subarray(p * k, (p + 1) * k), g * k);
    g += 1;
  }
  const robustCovariance = sandwichOfClusterScores({ bread: covariance, clusterScores, clusterCount: count, observationCount: rows.observationCount ?? final.attempts, parameterCount: k });
  return { ok: true, coefficients, covariance, robustCovariance, information };
}

function aliased(name: string): FewColumnFit {
  return { ok: false, reason: `the live data cannot estimate ${name} (aliased with other columns)`, aliased: [name] };
}

/**
 * Separation as `fitBinomial` judges it (separation.ts): a row on the boundary whose linear
 * predictor still moved in the last step. Newton steps there shrink in standard errors as the
 * information vanishes, so the stop alone would call the fit converged.
 */
function separated(names: readonly string[]): FewColumnFit {
  return { ok: false, reason: `the data separate: ${names.join(', ')} diverge` };
}

/** The inverse of a 1 x 1 information, or of the symmetric 2 x 2 [i00 i01; i01 i11] (given as i00, i01, i11; row-major, 4 entries), or null when it is numerically singular. */
function inverseOf(information: Float64Array): Float64Array | null {
  if (information.length === 1) {
    const value = information[0] as number;
    return value > 0 && Number.isFinite(1 / value) ? Float64Array.of(1 / value) : null;
  }
  const [i00, i01, i11] = information as unknown as [number, number, number];
  const determinant = i00 * i11 - i01 * i01;
  if (!(i00 > 0 && i11 > 0 && determinant > 1e-12 * i00 * i11)) return null;
  return Float64Array.of(i11 / determinant, -i01 / determinant, -i01 / determinant, i00 / determinant);
}

/** The Newton step: the inverse information times the score. */
function stepFrom(inverse: Float64Array, score: Float64Array): Float64Array {
  if (score.length === 1) return Float64Array.of((inverse[0] as number) * (score[0] as number));
  const [s0, s1] = score as unknown as [number, number];
  return Float64Array.of((inverse[0] as number) * s0 + (inverse[1] as number) * s1, (inverse[2] as number) * s0 + (inverse[3] as number) * s1);
}

/** What the pass at the estimate adds: each player's score sums (players x k), which players have rows of weight, their attempts (N of CR1 for a per-attempt file), and separation. */
interface FinalSums {
  readonly lastStep: Float64Array;
  readonly scores: Float64Array;
  readonly seen: Uint8Array;
  attempts: number;
  diverging: boolean;
}

/**
 * A row's part: mu and 1 - mu at eta without cancellation (the fit's own form), and, when
 * `withLikelihood`, its log-likelihood prior [s log mu + (n - s) log(1 - mu)] (else 0).
 */
const row = { mu: 0, complement: 0, likelihood: 0 };
function rowAt(eta: number, prior: number, s: number, n: number, withLikelihood: boolean): void {
  const exponential = Math.exp(-Math.abs(eta));
  const inverse = 1 / (1 + exponential);
  const positive = eta >= 0;
  row.mu = positive ? inverse : exponential * inverse;
  row.complement = positive ? exponential * inverse : inverse;
  row.likelihood = 0;
  if (withLikelihood) {
    const softplus = Math.log1p(exponential);
    const logMu = positive ? -softplus : eta - softplus;
    const logComplement = positive ? -eta - softplus : -softplus;
    row.likelihood = prior * ((s > 0 ? s * logMu : 0) + (s < n ? (n - s) * logComplement : 0));
  }
}

function indicatorPass(rows: FieldRows, offset: Float64Array, column: Int32Array | null, gamma: Float64Array, sums: PassSums, final: FinalSums | null): void {
  const { successes, trials, priorWeights, clusters } = rows;
  const { score, information, likelihood, wanted } = sums;
  score.fill(0);
  information.fill(0);
  likelihood.fill(0);
  let boundary = 0;
  const k = gamma.length;
  for (let i = 0; i < offset.length; i += 1) {
    const j = column === null ? 0 : (column[i] as number);
    if (j < 0) continue;
    const prior = priorWeights[i] as number;
    const n = trials[i] as number;
    if (!(prior * n > 0)) continue;
    const eta = (offset[i] as number) + (gamma[j] as number);
    const s = successes[i] as number;
    rowAt(eta, prior, s, n, wanted[j] === 1);
    const { mu, complement } = row;
    const residual = prior * (s * complement - (n - s) * mu);
    score[j] = (score[j] as number) + residual;
    information[j] = (information[j] as number) + prior * n * mu * complement;
    likelihood[j] = (likelihood[j] as number) + row.likelihood;
    if (mu < BOUNDARY || complement < BOUNDARY) {
      boundary += 1;
      if (final !== null && stillDiverging(eta, final.lastStep[j] as number)) final.diverging = true;
    }
    if (final !== null) addClusterScore(final, clusters[i] as number, n, j, k, residual);
  }
  sums.boundary = boundary;
}

function linePass(rows: FieldRows, offset: Float64Array | null, x: Float64Array, coefficients: Float64Array, sums: PassSums, final: FinalSums | null): void {
  const { successes, trials, priorWeights, clusters } = rows;
  const a = coefficients[0] as number;
  const b = coefficients[1] as number;
  const withLikelihood = sums.wanted[0] === 1;
  let s0 = 0;
  let s1 = 0;
  let i00 = 0;
  let i01 = 0;
  let i11 = 0;
  let likelihood = 0;
  let boundary = 0;
  for (let i = 0; i < x.length; i += 1) {
    const prior = priorWeights[i] as number;
    const n = trials[i] as number;
    if (!(prior * n > 0)) continue;
    const value = x[i] as number;
    const eta = (offset === null ? 0 : (offset[i] as number)) + a + b * value;
    const s = successes[i] as number;
    rowAt(eta, prior, s, n, withLikelihood);
    const { mu, complement } = row;
    const residual = prior * (s * complement - (n - s) * mu);
    const variance = prior * n * mu * complement;
    s0 += residual;
    s1 += residual * value;
    i00 += variance;
    i01 += variance * value;
    i11 += variance * value * value;
    likelihood += row.likelihood;
    if (mu < BOUNDARY || complement < BOUNDARY) {
      boundary += 1;
      if (final !== null && stillDiverging(eta, (final.lastStep[0] as number) + (final.lastStep[1] as number) * value)) final.diverging = true;
    }
    if (final !== null) {
      // The row's attempts count once, with its first column.
      addClusterScore(final, clusters[i] as number, n, 0, 2, residual);
      addClusterScore(final, clusters[i] as number, 0, 1, 2, residual * value);
    }
  }
  sums.score[0] = s0;
  sums.score[1] = s1;
  sums.information[0] = i00;
  sums.information[1] = i01;
  sums.information[2] = i11;
  sums.likelihood[0] = likelihood;
  sums.boundary = boundary;
}

function addClusterScore(final: FinalSums, player: number, attempts: number, j: number, k: number, score: number): void {
  final.seen[player] = 1;
  final.attempts += attempts;
  final.scores[player * k + j] = (final.scores[player * k + j] as number) + score;
}
