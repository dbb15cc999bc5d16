/** The size study as a table for people. */
import type { SizeStudy, WidthEstimate } from '../plan/size-study-types.js';
import { fixed } from './output.js';
import { compactTable } from './table.js';

function width(value: WidthEstimate): string {
  return value.estimate === null ? 'unbounded' : fixed(value.estimate);
}

export function renderSize(study: SizeStudy): string {
  const { assumptions: a, goal } = study;
  const table = compactTable(
    ['players', 'reps', 'minutes', 'latency power', 'scale power', 'unusable', 'median width', 'p90 width', 'coverage', 'goal'],
    ['right', 'right', 'right', 'right', 'right', 'right', 'right', 'right', 'right', 'left'],
  );
  for (const row of study.rows) {
    table.push([
      String(row.participants),
      String(row.repetitions),
      row.session_minutes.toFixed(1),
      fixed(row.latency_power.estimate),
      fixed(row.scale_power.estimate),
      fixed(row.unusable.estimate),
      width(row.width_median),
      width(row.width_p90),
      row.coverage === null ? '-' : fixed(row.coverage.estimate),
      row.meets_goal ? 'met' : '-',
    ]);
  }
  const largestError = Math.max(...study.rows.map((row) => Math.max(row.latency_power.mc_se, row.scale_power.mc_se, row.unusable.mc_se)));
  const goalParts = [
    goal.interval_width === null ? null : `${goal.width_statistic === 'median' ? 'median' : '90th percentile'} width of the 90% interval of the scale at ${a.at_latency_ms} ms <= ${goal.interval_width}`,
    goal.latency_power === null ? null : `latency power >= ${goal.latency_power}`,
  ].filter((part) => part !== null);
  return [
    `${study.label ?? 'playtest'}: ${study.studies} simulated studies per size (seed ${study.seed})`,
    `assumed: ${a.source === 'pilot_model' ? `the pilot model ${a.pilot_model}` : 'entered effects'} (${a.link}); players' skill spread ${a.player_sd} on the link scale (${a.player_sd_source === 'default' ? 'the documented default' : a.player_sd_source === 'pilot_trials' ? "estimated from the pilot's trials" : 'from the plan'}); scale needed at ${a.at_latency_ms} ms (${String(a.at_difficulty)}): ${a.true_scale.toFixed(3)}`,
    `fitted as \`lagparity fit\` does: ${a.fitted_terms.join(', ')}, CR1 errors by player; Wald tests at alpha ${goal.alpha}`,
    table.toString(),
    `Shares (power, unusable, coverage) have Monte Carlo standard errors of at most ${largestError.toFixed(3)} (sqrt(p (1 - p) / ${study.studies}); a share of exactly 0 or 1 is within ${(3 / study.studies).toFixed(3)} of the truth at 95%, the rule of three). Widths are of the compensation scale's 90% interval (delta method); "unbounded" where the quantile falls on studies without a usable model.`,
    `goal: ${goalParts.join(' and ')}`,
    ...study.recommendations.map((entry) => `${entry.participants === null ? 'not met' : 'recommended'}: ${entry.note}`),
    study.recommended === null
      ? (study.closest?.message ?? 'no size meets the goal')
      : `=> ${study.recommended.participants} participants with ${study.recommended.repetitions} repetition(s) of each condition (${study.rows.find((row) => row.repetitions === study.recommended?.repetitions)?.session_minutes.toFixed(1)}-minute sessions)`,
  ].join('\n');
}
