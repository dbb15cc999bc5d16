/**
 * Observed hit rates by latency band with cluster-robust intervals, and each
 * band's gap to a reference, from one binomial fit with the model's
 * prediction as an offset and one indicator per band (docs/method.md,
 * section 8):
 *
 *     logit P(hit) = q + gamma_b,   q = logit of the model's prediction at the applied scale
 *
 * At the estimate each band's fitted rate equals its observed rate
 * (hits / attempts: the score equation of gamma_b), and gamma_b is the band's
 * departure from the model on the log-odds scale. The band's rate as a
 * function of gamma_b is p_b(g) = sum w n expit(q + g) / sum w n, increasing,
 * so its 95% interval is [p_b(lo), p_b(hi)] for the Wald interval of gamma_b
 * (inside [0, 1]).
 *
 * Bands are compared at one difficulty mix, the file's: band b's rate there
 * is s_b(g) = sum_d pi_d sum w n expit(q_i(d) + g) / sum w n over its rows,
 * q_i(d) the logit of the model's prediction at the row's latency and scale
 * at difficulty d, pi_d the share of the file's attempts at d (marginal
 * standardisation: Muller, C. J. and MacLehose, R. F. (2014), Estimating
 * predicted probabilities from logistic regression: different methods
 * correspond to different target populations, *International Journal of
 * Epidemiology* 43(3), 962-970). With one difficulty, or the same mix in
 * every band, s_b is the observed rate; otherwise a band that happened to
 * play more hard matches is not counted as worse off. A gap s_b - s_r has the
 * delta-method variance d_b^2 V_bb + d_r^2 V_rr - 2 d_b d_r V_br,
 * d_b = ds_b/dg at the estimate, with V the CR1 covariance by player
 * (players in both bands handled by the fit's joint covariance). Against a
 * fixed target T the gap is s_b - T.
 *
 * Bands with no rows, of one player (whose one cluster its own coefficient
 * absorbs: no cluster-robust variance), or whose hits are all or none of
 * their attempts (the estimate would be infinite) are left out of the fit and
 * reported without an interval.
 *
 * Cost: one fit of one indicator per band (few-column-logit.ts: the bands' fits
 * separate, a few passes in all), then one pass, and the mix's passes.
 */
import { linkFor } from '../model/links.js';
import { type FieldRows, twoSidedCritical } from './field-fit.js';
import { fitIndicatorLogit } from './few-column-logit.js';

export interface BandRate {
  /** Observed hits / attempts (weighted); null for a band with no rows. */
  readonly observed: number | null;
  /** 95%; null when the band is not fitted. */
  readonly lower: number | null;
  readonly upper: number | null;
  /** Whether the band is in the fit. */
  readonly fitted: boolean;
}

export interface BandGap {
  readonly estimate: number;
  readonly standardError: number;
}

/** Every row's offset at each of the file's difficulties and their shares (see `LiveRows.byDifficulty`); null: compare as played. */
export type DifficultyMix = { readonly shares: Float64Array; readonly offsets: readonly Float64Array[] } | null;

export interface BandRates {
  readonly rates: readonly BandRate[];
  /** The gap of band b to the reference at the file's difficulty mix (null where the band or the reference is not fitted). */
  gapOf(band: number): BandGap | null;
  /** The model's rate of band b at the file's difficulty mix (gamma 0); null for a band with no rows. */
  readonly predictedAtMix: readonly (number | null)[];
  /** Why the fit failed, when it did (then no band has an interval). */
  readonly failure: string | null;
  /** The fitted bands' departures from the model (gamma_b, log-odds) and their CR1 covariance, row-major; null without a fit. */
  readonly departures: { readonly bands: readonly number[]; readonly estimates: Float64Array; readonly covariance: Float64Array } | null;
}

/**
 * Rates and gaps for `bandCount` bands. `reference` is a band index, or a
 * fixed probability (`{ probability }`).
 */
export function bandRates(
  rows: FieldRows,
  offset: Float64Array,
  band: Int32Array,
  bandCount: number,
  reference: { readonly band: number } | { readonly probability: number },
  mix: DifficultyMix,
  players: (band: number) => number,
): BandRates {
  const n = offset.length;
  const weight = new Float64Array(bandCount);
  const hits = new Float64Array(bandCount);
  for (let i = 0; i < n; i += 1) {
    const b = band[i] as number;
    const prior = rows.priorWeights[i] as number;
    weight[b] = (weight[b] as number) + prior * (rows.trials[i] as number);
    hits[b] = (hits[b] as number) + prior * (rows.successes[i] as number);
  }
  const observed = Array.from({ length: bandCount }, (_, b) => ((weight[b] as number) > 0 ? (hits[b] as number) / (weight[b] as number) : null));
  const fittedBands: number[] = [];
  for (let b = 0; b < bandCount; b += 1) if ((hits[b] as number) > 0 && (hits[b] as number) < (weight[b] as number) && players(b) >= 2) fittedBands.push(b);
  const column = new Int32Array(bandCount).fill(-1);
  fittedBands.forEach((b, j) => (column[b] = j));
  // The model's rates at the mix (no shift), and with the fitted shifts (both in one pass per difficulty).
  const atMix = (gamma: ((b: number) => number) | null) => mixRates(rows, offset, band, bandCount, weight, mix, gamma);
  const unfitted = (failure: string | null): BandRates => ({
    rates: observed.map((value) => ({ observed: value, lower: null, upper: null, fitted: false })),
    gapOf: () => null,
    predictedAtMix: atMix(null).model.rate,
    failure,
    departures: null,
  });
  if (fittedBands.length === 0) return unfitted('no band has both hits and misses');

  const rowColumn = new Int32Array(n);
  for (let i = 0; i < n; i += 1) rowColumn[i] = column[band[i] as number] as number;
  const result = fitIndicatorLogit(rows, offset, rowColumn, fittedBands.length, fittedBands.map((b) => `band_${b}`));
  if (!result.ok) return unfitted(result.reason);
  const k = fittedBands.length;
  const covariance = result.robustCovariance ?? result.covariance;
  const critical = twoSidedCritical(0.95);
  const gamma = (j: number) => result.coefficients[j] as number;
  const spread = (j: number) => critical * Math.sqrt(covariance[j * k + j] as number);
  // The slope d_b at the estimate is the information's diagonal; one pass for the rate at both ends of each gamma's interval.
  const slope = result.information;
  const atLower = new Float64Array(k);
  const atUpper = new Float64Array(k);
  const lowerShift = Float64Array.from({ length: k }, (_, j) => gamma(j) - spread(j));
  const upperShift = Float64Array.from({ length: k }, (_, j) => gamma(j) + spread(j));
  for (let i = 0; i < n; i += 1) {
    const j = rowColumn[i] as number;
    if (j < 0) continue;
    const w = (rows.priorWeights[i] as number) * (rows.trials[i] as number);
    if (!(w > 0)) continue;
    atLower[j] = (atLower[j] as number) + w * logistic((offset[i] as number) + (lowerShift[j] as number));
    atUpper[j] = (atUpper[j] as number) + w * logistic((offset[i] as number) + (upperShift[j] as number));
  }
  const rates: BandRate[] = observed.map((value, b) => {
    const j = column[b] as number;
    if (j < 0) return { observed: value, lower: null, upper: null, fitted: false };
    const total = weight[b] as number;
    return { observed: value, lower: (atLower[j] as number) / total, upper: (atUpper[j] as number) / total, fitted: true };
  });
  // The rates at the file's difficulty mix and their slopes in gamma (as played without a mix).
  const rated = atMix(mix === null ? null : (b) => ((column[b] as number) >= 0 ? gamma(column[b] as number) : 0));
  const predictedAtMix = rated.model.rate;
  const standard = rated.shifted;
  const rateAtMix = (b: number) => (standard === null ? observed[b] : standard.rate[b]);
  const derivative = (j: number) => ((standard === null ? slope[j] : standard.slope[fittedBands[j] as number]) as number) / (standard === null ? (weight[fittedBands[j] as number] as number) : 1);
  const gapOf = (b: number): BandGap | null => {
    const j = column[b] as number;
    const value = rateAtMix(b);
    if (j < 0 || value === null || value === undefined) return null;
    if ('probability' in reference) {
      return { estimate: value - reference.probability, standardError: derivative(j) * Math.sqrt(covariance[j * k + j] as number) };
    }
    const r = column[reference.band] as number;
    const referenceValue = rateAtMix(reference.band);
    if (r < 0 || referenceValue === null || referenceValue === undefined) return null;
    if (r === j) return { estimate: 0, standardError: 0 };
    const variance =
      derivative(j) ** 2 * (covariance[j * k + j] as number) +
      derivative(r) ** 2 * (covariance[r * k + r] as number) -
      2 * derivative(j) * derivative(r) * (covariance[j * k + r] as number);
    return { estimate: value - referenceValue, standardError: Math.sqrt(Math.max(variance, 0)) };
  };
  return { rates, gapOf, predictedAtMix, failure: null, departures: { bands: fittedBands, estimates: result.coefficients, covariance } };
}

interface MixRates {
  readonly rate: (number | null)[];
  readonly slope: Float64Array;
}

/**
 * Each band's rate at the file's difficulty mix as the model predicts it (`model`, no shift) and,
 * given `gamma`, with its band shift gamma(b) (`shifted`), and the rate's derivative in gamma:
 * sum_d pi_d mean_b expit(q(d) + g) and sum_d pi_d mean_b mu (1 - mu). Without a mix, at the
 * rows' own offsets. Null for bands with no weight. One pass per difficulty for both.
 */
function mixRates(
  rows: FieldRows,
  offset: Float64Array,
  band: Int32Array,
  bandCount: number,
  weight: Float64Array,
  mix: DifficultyMix,
  gamma: ((b: number) => number) | null,
): { model: MixRates; shifted: MixRates | null } {
  const modelRate = new Float64Array(bandCount);
  const modelSlope = new Float64Array(bandCount);
  const rate = new Float64Array(bandCount);
  const slope = new Float64Array(bandCount);
  const shifts = Float64Array.from({ length: bandCount }, (_, b) => (gamma !== null && (weight[b] as number) > 0 ? gamma(b) : 0));
  const levels = mix === null ? [{ share: 1, offsets: offset }] : mix.offsets.map((offsets, d) => ({ share: mix.shares[d] as number, offsets }));
  for (const { share, offsets } of levels) {
    for (let i = 0; i < offset.length; i += 1) {
      const b = band[i] as number;
      const w = share * (rows.priorWeights[i] as number) * (rows.trials[i] as number);
      if (!(w > 0)) continue;
      const q = offsets[i] as number;
      const atModel = logistic(q);
      modelRate[b] = (modelRate[b] as number) + w * atModel;
      modelSlope[b] = (modelSlope[b] as number) + w * atModel * (1 - atModel);
      if (gamma === null) continue;
      const mu = logistic(q + (shifts[b] as number));
      rate[b] = (rate[b] as number) + w * mu;
      slope[b] = (slope[b] as number) + w * mu * (1 - mu);
    }
  }
  const finish = (sums: Float64Array, slopes: Float64Array): MixRates => {
    for (let b = 0; b < bandCount; b += 1) {
      const total = weight[b] as number;
      if (total > 0) {
        sums[b] = (sums[b] as number) / total;
        slopes[b] = (slopes[b] as number) / total;
      }
    }
    return { rate: Array.from(sums, (value, b) => ((weight[b] as number) > 0 ? value : null)), slope: slopes };
  };
  return { model: finish(modelRate, modelSlope), shifted: gamma === null ? null : finish(rate, slope) };
}

const logistic = linkFor('logit').inverse;
