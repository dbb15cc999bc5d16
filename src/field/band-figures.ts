/**
 * What each latency band holds: rows, attempts, players (and how many of
 * them are the control: never a scale above 1), the mean applied scale, and
 * the model's hit probability before (scale 1) and after (the applied scale)
 * compensation, the latter with a 95% interval from the model's coefficient
 * covariance by the delta method (as the report's bands: McCullagh and
 * Nelder 1989, §2.5), p_b(beta) = sum w n g^-1(x beta) / sum w n, so
 * se^2 = grad' V grad with grad = sum w n (dmu/deta) x / sum w n; the interval
 * is p_b +- 1.96 se, clipped to [0, 1].
 *
 * All sums are weighted by prior weight x attempts. One pass over the rows.
 */
import type { CollapsedTrials } from '../model/collapsed-trials.js';
import type { CompiledModel } from '../model/compile.js';
import { designRowsOf } from '../model/design.js';
import { twoSidedCritical } from './field-fit.js';

export interface BandFigures {
  readonly rows: number;
  /** Attempts (unweighted) and the weighted attempts the rates use. */
  readonly attempts: number;
  readonly weight: number;
  readonly hits: number;
  readonly players: number;
  readonly controlPlayers: number;
  readonly meanScale: number | null;
  /** Attempt-weighted mean latency of the band's rows (ms). */
  readonly meanLatency: number | null;
  readonly predictedBefore: number | null;
  readonly predicted: number | null;
  readonly predictedLower: number | null;
  readonly predictedUpper: number | null;
}

/**
 * The figures of `bandCount` bands. `band` is each row's band; the model's design
 * row of each row (for the predicted interval) is computed as the pass reaches it
 * (`designRows`: the bits of `buildDesign`), so no design matrix is built here.
 */
export function bandFigures(
  data: CollapsedTrials,
  band: Int32Array,
  bandCount: number,
  live: { readonly predicted: Float64Array; readonly predictedBefore: Float64Array; readonly linearPredictor: Float64Array; readonly compensatedPlayer: Uint8Array },
  model: CompiledModel,
): BandFigures[] {
  const k = model.coefficients.length;
  const design = designRowsOf(data, model.source.terms, model.difficulty);
  const x = new Float64Array(k);
  const rows = new Float64Array(bandCount);
  const attempts = new Float64Array(bandCount);
  const weight = new Float64Array(bandCount);
  const hits = new Float64Array(bandCount);
  const scale = new Float64Array(bandCount);
  const latency = new Float64Array(bandCount);
  const before = new Float64Array(bandCount);
  const after = new Float64Array(bandCount);
  const gradient = new Float64Array(bandCount * k);
  // Each band's players, counted as they are first met (a mark per band and player, not a set).
  const player = data.player as Int32Array;
  const playerCount = live.compensatedPlayer.length;
  const met = new Uint8Array(bandCount * playerCount);
  const players = new Float64Array(bandCount);
  const controlPlayers = new Float64Array(bandCount);
  for (let i = 0; i < data.rows; i += 1) {
    const b = band[i] as number;
    const w = (data.weight[i] as number) * (data.attempts[i] as number);
    rows[b] = (rows[b] as number) + 1;
    attempts[b] = (attempts[b] as number) + (data.attempts[i] as number);
    weight[b] = (weight[b] as number) + w;
    hits[b] = (hits[b] as number) + (data.weight[i] as number) * (data.successes[i] as number);
    scale[b] = (scale[b] as number) + w * (data.scale[i] as number);
    latency[b] = (latency[b] as number) + w * (data.latency[i] as number);
    before[b] = (before[b] as number) + w * (live.predictedBefore[i] as number);
    after[b] = (after[b] as number) + w * (live.predicted[i] as number);
    const code = player[i] as number;
    if (met[b * playerCount + code] === 0) {
      met[b * playerCount + code] = 1;
      players[b] = (players[b] as number) + 1;
      if (live.compensatedPlayer[code] === 0) controlPlayers[b] = (controlPlayers[b] as number) + 1;
    }
    const slope = w * model.link.derivative(live.linearPredictor[i] as number);
    design.rowAt(i, x);
    for (let j = 0; j < k; j += 1) gradient[b * k + j] = (gradient[b * k + j] as number) + slope * (x[j] as number);
  }
  const critical = twoSidedCritical(0.95);
  return Array.from({ length: bandCount }, (_, b) => {
    const total = weight[b] as number;
    const base = { rows: rows[b] as number, attempts: attempts[b] as number, weight: total, hits: hits[b] as number, players: players[b] as number, controlPlayers: controlPlayers[b] as number };
    if (!(total > 0)) return { ...base, meanScale: null, meanLatency: null, predictedBefore: null, predicted: null, predictedLower: null, predictedUpper: null };
    const predicted = (after[b] as number) / total;
    let variance = 0;
    for (let a = 0; a < k; a += 1) {
      const left = (gradient[b * k + a] as number) / total;
      if (left === 0) continue;
      for (let c = 0; c < k; c += 1) variance += left * (model.covariance[a * k + c] as number) * ((gradient[b * k + c] as number) / total);
    }
    const spread = critical * Math.sqrt(Math.max(variance, 0));
    return {
      ...base,
      meanScale: (scale[b] as number) / total,
      meanLatency: (latency[b] as number) / total,
      predictedBefore: (before[b] as number) / total,
      predicted,
      predictedLower: Math.max(0, predicted - spread),
      predictedUpper: Math.min(1, predicted + spread),
    };
  });
}
