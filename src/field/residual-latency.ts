/**
 * The residual latency effect: how live log-odds of a hit move with latency
 * beyond what the model predicted at the scales applied, as the trend of the
 * bands' departures from the model (band-rates.ts: logit P(hit) = q + gamma_b,
 * q the logit of the prediction, an offset) against the bands' mean latency,
 *
 *     gamma_b = a + c Lbar_b,
 *
 * fitted by generalised least squares with the departures' CR1 covariance V
 * (c = [(X' V^-1 X)^-1 X' V^-1 gamma]_2, Var c = [(X' V^-1 X)^-1]_22: the
 * minimum-distance estimator of a linear trend from the band estimates, e.g.
 * Newey, W. K. and McFadden, D. (1994), Large sample estimation and
 * hypothesis testing, *Handbook of Econometrics* IV, §5.2), reported as
 * c x 100: log-odds per 100 ms, with a 95% interval. c = 0 when the model's
 * latency effect is right at the scales played; c < 0 when high latency costs
 * more than the model says (the scales fall short), c > 0 when it costs less.
 * It takes no pass over the rows. The bands are those with at least
 * {@link TREND_PLAYERS} players (a band's CR1 variance from a few clusters is
 * unreliable, and generalised least squares would trust it most), all fitted
 * bands when fewer than two have that many. Null with fewer than two bands.
 */
import { choleskySolve } from '../numeric/cholesky.js';
import type { BandRates } from './band-rates.js';
import type { FieldEstimate } from './field-types.js';
import { twoSidedCritical } from './field-fit.js';

/** Players a band needs to enter the trend (as to be compared, check-field.ts). */
export const TREND_PLAYERS = 10;

export function residualLatencyTrend(all: BandRates['departures'], meanLatency: (band: number) => number | null, players: (band: number) => number): FieldEstimate | null {
  if (all === null) return null;
  const departures = trendBands(all, players);
  const k = departures.bands.length;
  if (k < 2) return null;
  const latency = departures.bands.map((band) => meanLatency(band) ?? Number.NaN);
  if (!latency.every(Number.isFinite)) return null;
  // V^-1 X, column by column (X = [1, Lbar]).
  const inverseOnes = choleskySolve(departures.covariance, new Float64Array(k).fill(1));
  const inverseLatency = choleskySolve(departures.covariance, latency);
  if (inverseOnes === null || inverseLatency === null) return null;
  let a11 = 0;
  let a12 = 0;
  let a22 = 0;
  let b1 = 0;
  let b2 = 0;
  for (let j = 0; j < k; j += 1) {
    const gamma = departures.estimates[j] as number;
    a11 += inverseOnes[j] as number;
    a12 += (latency[j] as number) * (inverseOnes[j] as number);
    a22 += (latency[j] as number) * (inverseLatency[j] as number);
    b1 += gamma * (inverseOnes[j] as number);
    b2 += gamma * (inverseLatency[j] as number);
  }
  const determinant = a11 * a22 - a12 * a12;
  if (!(determinant > 0)) return null;
  const slope = (a11 * b2 - a12 * b1) / determinant;
  const variance = a11 / determinant;
  const estimate = 100 * slope;
  const standardError = 100 * Math.sqrt(variance);
  const critical = twoSidedCritical(0.95);
  return { estimate, std_error: standardError, lower: estimate - critical * standardError, upper: estimate + critical * standardError, level: 0.95 };
}

/** The departures of the bands with at least TREND_PLAYERS players (all of them when fewer than two have), with their covariance. */
function trendBands(all: NonNullable<BandRates['departures']>, players: (band: number) => number): NonNullable<BandRates['departures']> {
  const size = all.bands.length;
  const keep = all.bands.map((band, j) => ({ band, j })).filter(({ band }) => players(band) >= TREND_PLAYERS);
  if (keep.length < 2 || keep.length === size) return all;
  const k = keep.length;
  const covariance = new Float64Array(k * k);
  keep.forEach((row, a) => keep.forEach((column, b) => (covariance[a * k + b] = all.covariance[row.j * size + column.j] as number)));
  return { bands: keep.map(({ band }) => band), estimates: Float64Array.from(keep, ({ j }) => all.estimates[j] as number), covariance };
}
