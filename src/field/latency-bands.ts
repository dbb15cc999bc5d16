/**
 * Latency bands for the field check: cut points in ms split [0, infinity)
 * into bands [0, c1), [c1, c2), ..., [ck, infinity). The default cuts every
 * 40 ms up to 200 ms (docs/method.md, section 8): wide enough that each band
 * of a season holds many players, narrow enough that a band's players play
 * alike; a league sets its own (`--bands`). A rules file's latency limit is
 * added as a cut, so that the bands above it hold only players the rules
 * never scale.
 */
import { type Result, error, fail, ok, show } from '../issues.js';
import { MAX_LATENCY_MS } from '../formats/limits.js';

/** The default cut points, in ms. */
export const DEFAULT_BAND_CUTS: readonly number[] = [40, 80, 120, 160, 200];

/** At most this many cut points. */
export const MAX_BAND_CUTS = 30;

export interface LatencyBand {
  readonly index: number;
  readonly lowerMs: number;
  /** null for the open band at the top. */
  readonly upperMs: number | null;
  /** `0-40 ms`, `200+ ms`. */
  readonly label: string;
}

/** Check cut points: finite, above 0, strictly increasing, at most {@link MAX_BAND_CUTS}, within the latency limit. */
export function checkBandCuts(cuts: readonly number[], where = '--bands'): Result<readonly number[]> {
  if (cuts.length === 0) return fail([error('invalid_option', where, `\`${where}\` requires at least one cut point in ms, got none`)]);
  if (cuts.length > MAX_BAND_CUTS) return fail([error('invalid_option', where, `\`${where}\` requires at most ${MAX_BAND_CUTS} cut points, got ${cuts.length}`)]);
  for (let index = 0; index < cuts.length; index += 1) {
    const cut = cuts[index] as number;
    if (!Number.isFinite(cut) || cut <= 0 || cut > MAX_LATENCY_MS) {
      return fail([error('invalid_option', where, `\`${where}\` requires cut points above 0 and at most ${MAX_LATENCY_MS} ms, got ${show(cut)}`)]);
    }
    if (index > 0 && !(cut > (cuts[index - 1] as number))) {
      return fail([error('invalid_option', where, `\`${where}\` requires strictly increasing cut points, got ${show(cut)} after ${show(cuts[index - 1])}`)]);
    }
  }
  return ok(cuts);
}

/** Parse `--bands 40,80,120`: cut points in ms. */
export function parseBandCuts(text: string, where = '--bands'): Result<readonly number[]> {
  const parts = text.split(',').map((part) => part.trim());
  const cuts: number[] = [];
  for (const part of parts) {
    const value = /^\d+(\.\d+)?$/.test(part) ? Number(part) : Number.NaN;
    if (!Number.isFinite(value)) return fail([error('invalid_option', where, `\`${where}\` requires comma-separated latencies in ms such as 40,80,120, got ${show(part)} in ${show(text)}`)]);
    cuts.push(value);
  }
  return checkBandCuts(cuts, where);
}

/** The cuts with `limit` added (when it is not one already and lies inside the range), sorted. */
export function withCut(cuts: readonly number[], limit: number | null): readonly number[] {
  if (limit === null || !(limit > 0) || cuts.includes(limit)) return cuts;
  return [...cuts, limit].sort((a, b) => a - b);
}

/** The bands of cut points (checked by {@link checkBandCuts}). */
export function latencyBands(cuts: readonly number[]): LatencyBand[] {
  const bands: LatencyBand[] = [];
  let lower = 0;
  cuts.forEach((cut, index) => {
    bands.push({ index, lowerMs: lower, upperMs: cut, label: `${formatMs(lower)}-${formatMs(cut)} ms` });
    lower = cut;
  });
  bands.push({ index: cuts.length, lowerMs: lower, upperMs: null, label: `${formatMs(lower)}+ ms` });
  return bands;
}

/** The band of a latency: the number of cuts at or below it. */
export function bandOf(latency: number, cuts: readonly number[]): number {
  let band = 0;
  while (band < cuts.length && latency >= (cuts[band] as number)) band += 1;
  return band;
}

function formatMs(value: number): string {
  return Number.isInteger(value) ? String(value) : String(Number(value.toFixed(3)));
}
