/**
 * The sentences of a field check: the verdict on compensation, what data it
 * rests on, the control, the data a verdict would need, the calibration and
 * its recommendation, and the caution. Plain text, the same in the JSON
 * `summary` and the table output.
 */
import { normalCdf, normalUpperTail } from '../stats/distributions.js';
import type { CalibrationCheck, CompensationCheck, FieldCheckReport } from './field-types.js';
import type { LatencyBand } from './latency-bands.js';

/** A gap in percentage points with its sign: `+1.2 pp`, `-0.4 pp`. */
export function percentagePoints(value: number): string {
  const rounded = (100 * value).toFixed(1);
  return `${Number(rounded) === 0 ? '0.0' : value > 0 ? `+${rounded}` : rounded} pp`;
}

/** A probability as a percentage: `61.2%`. */
export function percent(value: number): string {
  return `${(100 * value).toFixed(1)}%`;
}

/** A p-value for people: `p = 0.013`, `p < 0.001`. */
export function pValue(value: number): string {
  return value < 0.001 ? 'p < 0.001' : `p = ${value.toFixed(3)}`;
}

function count(value: number): string {
  return Math.round(value).toLocaleString('en-GB');
}

function plural(value: number, noun: string): string {
  return `${count(value)} ${noun}${value === 1 ? '' : 's'}`;
}

/** Each verdict in words, as the summary and the report's section say it. */
export const VERDICT_WORDS: Record<CompensationCheck['verdict'], string> = {
  holds: 'Compensation holds',
  under_compensates: 'Compensation falls short (under-compensates)',
  over_compensates: 'Compensation overshoots (over-compensates)',
  not_enough_data: 'Not enough data to tell whether compensation holds',
  nothing_compensated: 'Nothing was compensated',
};

/** The verdict in one or two sentences. `why` explains a missing gap. */
export function compensationMessage(
  check: Omit<CompensationCheck, 'message'>,
  bands: readonly LatencyBand[],
  margin: number,
  why: string | null,
): string {
  const worst = check.worst_band === null ? null : bands[check.worst_band];
  const reference = check.reference_band === null ? 'the fixed target' : `the best-connected band (${bands[check.reference_band]?.label ?? ''})`;
  const head = check.verdict === 'nothing_compensated' ? 'Nothing was compensated: no scale in the file is above 1, so there is no compensation to judge' : VERDICT_WORDS[check.verdict];
  if (check.gap === null || worst === undefined || worst === null) return `${head}: ${why ?? 'no gap could be estimated'}.`;
  const gap = check.gap;
  const where = `the worst-connected band (${worst.label}) hits ${percentagePoints(gap.estimate)} against ${reference}, ${Math.round(gap.level * 100)}% interval ${percentagePoints(gap.lower)} to ${percentagePoints(gap.upper)}, margin ±${(margin * 100).toFixed(1)} pp`;
  const predicted =
    check.predicted_gap === null
      ? ''
      : ` The model expected ${percentagePoints(check.predicted_gap)} at the scales applied${Math.abs(check.predicted_gap) > margin ? ' (the scales were short of closing the gap even by the model: caps, the target or the lobbies held them back)' : ''}.`;
  let tests = '';
  if (check.tost !== null) {
    // Beyond the margin the one-sided test that decided is the one to quote; otherwise the TOST's larger p.
    if (check.verdict === 'under_compensates') tests = ` (beyond the margin: one-sided test, ${pValue(normalCdf(check.tost.z_lower))})`;
    else if (check.verdict === 'over_compensates') tests = ` (beyond the margin: one-sided test, ${pValue(normalUpperTail(check.tost.z_upper))})`;
    else tests = ` (two one-sided tests, ${pValue(check.tost.p)})`;
  }
  let needed = '';
  if (check.data_needed !== null) {
    const data = check.data_needed;
    needed =
      ` To tell at 80% power if the gap stayed where it is, about ${count(data.players)} players playing as much as these (${count(data.rows)} ${data.rows_are}, ${data.factor.toFixed(1)} times the data) would be needed to show ${data.to_show === 'equivalence' ? 'that it lies within the margin' : 'that it lies beyond the margin'}` +
      (data.factor > 1000 ? ': the estimate sits so close to the margin that no realistic amount of data decides.' : '.');
  } else if (check.verdict === 'not_enough_data') {
    needed = ' The estimate sits on the margin: no amount of data decides at this estimate.';
  }
  return `${head}: ${where}${tests}.${predicted}${needed}`;
}

/** Why keep or refit. */
export function calibrationReason(check: Omit<CalibrationCheck, 'reason'>, alpha: number): string {
  const parts: string[] = [];
  if (check.in_the_large !== null) {
    const value = check.in_the_large;
    parts.push(`calibration-in-the-large ${value.estimate.toFixed(3)} (95% interval ${value.lower.toFixed(3)} to ${value.upper.toFixed(3)}; 0 when the predictions are right on average)`);
  }
  if (check.slope !== null) {
    const value = check.slope;
    parts.push(`calibration slope ${value.estimate.toFixed(3)} (${value.lower.toFixed(3)} to ${value.upper.toFixed(3)}; 1 when they spread as play does)`);
  }
  const test = check.likelihood_ratio;
  let decision: string;
  if (test.status === 'tested') {
    const adjusted = test.adjusted;
    const figure = adjusted === null ? `LR ${test.statistic.toFixed(1)} on ${test.df} df, ${pValue(test.p_value)}` : `LR ${test.statistic.toFixed(1)} on ${test.df} df (${pValue(test.p_value)} taking attempts as independent; adjusted for clustering by player ${adjusted.statistic.toFixed(1)} on ${adjusted.df.toFixed(1)} df, ${pValue(adjusted.p_value)})`;
    decision =
      check.recommendation === 'refit'
        ? `the model's coefficients refitted on the live rows differ from its own beyond chance (${figure}, below ${alpha}): refit`
        : `the refitted coefficients do not differ from the model's beyond chance (${figure}): keep the model`;
  } else {
    decision = `the refit could not be tested (${test.reason}); ${check.recommendation === 'refit' ? 'a calibration interval excludes its ideal value: refit' : 'keep the model until it can be'}`;
  }
  return `${parts.length > 0 ? `${parts.join('; ')}. ` : ''}${decision.charAt(0).toUpperCase()}${decision.slice(1)}.`;
}

/** Every sentence of the report, in order. */
export function summaryLines(report: FieldCheckReport): string[] {
  const { data } = report;
  const unit = data.shape === 'per_round' ? `${count(data.rows)} rounds, ` : '';
  const lines = [
    report.compensation.message,
    `This rests on the live data seen: ${plural(data.players, 'player')}, ${unit}${count(data.attempts)} attempts (${data.file}), latencies ${data.latency_ms.min}-${data.latency_ms.max} ms.`,
    data.control.players === 0
      ? 'Control: every player had a scale above 1 at some point; there is no uncompensated group to compare with.'
      : `Control: ${plural(data.control.players, 'player')} never had a scale above 1 (${count(data.control.attempts)} attempts); they are the uncompensated comparison, and ${plural(data.compensated.players, 'player')} ${data.compensated.players === 1 ? 'was' : 'were'} compensated at some point.`,
    `Model: ${report.calibration.reason}`,
  ];
  if (report.calibration.recommendation === 'refit' && report.calibration.commands !== null) {
    lines.push(`Refit on the live rows: ${report.calibration.commands.new_data}`);
    if (report.calibration.commands.combined !== null) lines.push(`Or on the training and live rows together: ${report.calibration.commands.combined}`);
  }
  lines.push(report.caution);
  return lines;
}
