/**
 * From the simulated studies of each size to what a designer decides on:
 * per size, the power to detect the latency and the scale effects, how often
 * the fitted model cannot be used for compensation, the median and 90th
 * percentile width of the compensation scale's 90% interval, and the
 * interval's coverage; then the smallest number of participants that meets
 * the goal, with its Monte Carlo error.
 *
 * - Shares (power, unusable, coverage) carry the binomial Monte Carlo standard
 *   error sqrt(p (1 - p) / S) over S studies.
 * - Width quantiles are order statistics (Hyndman and Fan type 1: the
 *   smallest width at least a fraction q of studies reach), a study without a
 *   usable interval counting as infinitely wide; their 95% Monte Carlo
 *   interval is the distribution-free one from order statistics j and k around
 *   S q, j, k = S q -/+ 1.96 sqrt(S q (1 - q)) (Conover, W. J. (1999),
 *   *Practical Nonparametric Statistics*, 3rd ed., §3.2, the large-sample
 *   approximation).
 * - A size meets the goal when its estimates do: the width statistic at or
 *   below `interval_width`, the latency power at or above `latency_power`.
 *   The recommendation is the smallest such size per repetition count (and,
 *   over those, a session within the limit first, then the fewest
 *   participants); it is marked borderline when the goal lies within the Monte Carlo error there
 *   or at the size below (another seed could move it by one step).
 */
import type { SizeStudyGoal } from '../formats/plan-types.js';
import { quantileSorted } from '../stats/quantile.js';
import { RECORD_LENGTH, readRecord } from './simulate-studies.js';
import type { ShareEstimate, SizeRecommendation, SizeRow, UnusableCounts, WidthEstimate } from './size-study-types.js';

const Z95 = 1.959963984540054;

function share(count: number, total: number): ShareEstimate {
  const estimate = total > 0 ? count / total : 0;
  return { estimate, mc_se: total > 0 ? Math.sqrt((estimate * (1 - estimate)) / total) : 0 };
}

function finiteOrNull(value: number | undefined): number | null {
  return value !== undefined && Number.isFinite(value) ? value : null;
}

/** The q-quantile of sorted widths (type 1) with its order-statistic 95% Monte Carlo interval. */
export function widthQuantile(sorted: Float64Array, q: number): WidthEstimate {
  const n = sorted.length;
  const spread = Z95 * Math.sqrt(n * q * (1 - q));
  const low = Math.min(n, Math.max(1, Math.floor(n * q - spread)));
  const high = Math.min(n, Math.max(1, Math.ceil(n * q + spread)));
  return { estimate: finiteOrNull(quantileSorted(sorted, q, 1)), mc_low: finiteOrNull(sorted[low - 1]), mc_high: finiteOrNull(sorted[high - 1]) };
}

export interface SizeShape {
  readonly participants: number;
  readonly repetitions: number;
  readonly roundsPerParticipant: number;
  readonly sessionMinutes: number;
}

/** Summarise one size's study records (`simulate-studies.ts`) against the goal. Cost: O(S log S). */
export function summariseSize(records: Float64Array, size: SizeShape, goal: SizeStudyGoal): SizeRow {
  const studies = records.length / RECORD_LENGTH;
  const reasons: UnusableCounts = { separation: 0, iteration_limit: 0, rank_deficient: 0, scale_not_increasing: 0, no_scale_at_latency: 0 };
  const widths = new Float64Array(studies);
  const scales: number[] = [];
  let latency = 0;
  let scale = 0;
  let usable = 0;
  let covered = 0;
  for (let index = 0; index < studies; index += 1) {
    const record = readRecord(records, index);
    if (record.latencyDetected) latency += 1;
    if (record.scaleDetected) scale += 1;
    if (record.status === 'usable') {
      usable += 1;
      if (record.covered === true) covered += 1;
      if (record.scale !== null) scales.push(record.scale);
    } else reasons[record.status] += 1;
    widths[index] = record.width ?? Infinity;
  }
  widths.sort();
  scales.sort((a, b) => a - b);
  const row = {
    participants: size.participants,
    repetitions: size.repetitions,
    rounds_per_participant: size.roundsPerParticipant,
    session_minutes: size.sessionMinutes,
    studies,
    latency_power: share(latency, studies),
    scale_power: share(scale, studies),
    unusable: share(studies - usable, studies),
    unusable_reasons: reasons,
    width_median: widthQuantile(widths, 0.5),
    width_p90: widthQuantile(widths, 0.9),
    coverage: usable > 0 ? share(covered, usable) : null,
    median_scale: scales.length > 0 ? quantileSorted(scales, 0.5, 1) : null,
  };
  return { ...row, meets_goal: meets(row, goal, 'estimate') };
}

type Reading = 'estimate' | 'favourable' | 'unfavourable';

/** Whether a row meets the goal, read at its estimate or at the favourable or unfavourable end of its Monte Carlo error. */
function meets(row: Omit<SizeRow, 'meets_goal'>, goal: SizeStudyGoal, reading: Reading): boolean {
  if (goal.interval_width !== null) {
    const width = goal.width_statistic === 'median' ? row.width_median : row.width_p90;
    const value = reading === 'estimate' ? width.estimate : reading === 'favourable' ? width.mc_low : width.mc_high;
    if (value === null || value > goal.interval_width) return false;
  }
  if (goal.latency_power !== null) {
    const { estimate, mc_se } = row.latency_power;
    const value = reading === 'estimate' ? estimate : reading === 'favourable' ? estimate + Z95 * mc_se : estimate - Z95 * mc_se;
    if (value < goal.latency_power) return false;
  }
  return true;
}

function describe(row: SizeRow, goal: SizeStudyGoal): string {
  const parts: string[] = [];
  const number = (value: number | null) => (value === null ? 'unbounded' : value.toFixed(3));
  if (goal.interval_width !== null) {
    const width = goal.width_statistic === 'median' ? row.width_median : row.width_p90;
    parts.push(`${goal.width_statistic === 'median' ? 'median' : '90th percentile'} width ${number(width.estimate)} (95% Monte Carlo interval ${number(width.mc_low)} to ${number(width.mc_high)}) against the goal ${goal.interval_width}`);
  }
  if (goal.latency_power !== null) parts.push(`latency power ${row.latency_power.estimate.toFixed(3)} (Monte Carlo SE ${row.latency_power.mc_se.toFixed(3)}) against the goal ${goal.latency_power}`);
  return parts.join('; ');
}

/** How far a row is from the goal: the largest ratio of what it needs to what it has (1 or below: met). */
function shortfall(row: SizeRow, goal: SizeStudyGoal): number {
  let worst = 0;
  if (goal.interval_width !== null) {
    const width = (goal.width_statistic === 'median' ? row.width_median : row.width_p90).estimate;
    worst = Math.max(worst, width === null ? Infinity : width / goal.interval_width);
  }
  if (goal.latency_power !== null) worst = Math.max(worst, row.latency_power.estimate > 0 ? goal.latency_power / row.latency_power.estimate : Infinity);
  return worst;
}

export interface Recommendation {
  readonly recommendations: SizeRecommendation[];
  readonly recommended: { participants: number; repetitions: number } | null;
  readonly closest: { participants: number; repetitions: number; message: string } | null;
}

/**
 * The smallest size meeting the goal per repetition count; the overall pick
 * (a session within `sessionLimit` minutes before one over it, then the
 * fewest participants, then the fewest repetitions); or the closest size when
 * none meets it. Rows in increasing participants per repetition count.
 */
export function recommendSize(rows: readonly SizeRow[], goal: SizeStudyGoal, sessionLimit: number): Recommendation {
  const repetitionCounts = [...new Set(rows.map((row) => row.repetitions))];
  const recommendations = repetitionCounts.map((repetitions): SizeRecommendation => {
    const sizes = rows.filter((row) => row.repetitions === repetitions);
    const index = sizes.findIndex((row) => row.meets_goal);
    const found = sizes[index];
    if (found === undefined) return { repetitions, participants: null, borderline: false, note: `no number of participants from ${sizes[0]?.participants} to ${sizes[sizes.length - 1]?.participants} meets the goal with ${repetitions} repetition(s)` };
    const previous = sizes[index - 1];
    const borderline = !meets(found, goal, 'unfavourable') || (previous !== undefined && meets(previous, goal, 'favourable'));
    return {
      repetitions,
      participants: found.participants,
      borderline,
      note: `${found.participants} participants with ${repetitions} repetition(s): ${describe(found, goal)}${borderline ? '; borderline: the goal lies within the Monte Carlo error here or at the size below, so another seed could move the answer by one step (raise `studies` to settle it)' : ''}`,
    };
  });
  const met = recommendations.filter((entry) => entry.participants !== null) as (SizeRecommendation & { participants: number })[];
  const over = (entry: SizeRecommendation) => ((rows.find((row) => row.repetitions === entry.repetitions)?.session_minutes ?? 0) > sessionLimit ? 1 : 0);
  met.sort((a, b) => over(a) - over(b) || a.participants - b.participants || a.repetitions - b.repetitions);
  const best = met[0];
  if (best !== undefined) return { recommendations, recommended: { participants: best.participants, repetitions: best.repetitions }, closest: null };
  let closest = rows[0] as SizeRow;
  for (const row of rows) if (shortfall(row, goal) < shortfall(closest, goal)) closest = row;
  return {
    recommendations,
    recommended: null,
    closest: { participants: closest.participants, repetitions: closest.repetitions, message: `closest: ${closest.participants} participants with ${closest.repetitions} repetition(s): ${describe(closest, goal)}` },
  };
}
