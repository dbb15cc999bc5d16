/** The field check as text for people: the verdict, the table by latency band, the model's calibration and the sentences. */
import type { FieldBand, FieldCheckReport } from '../field/field-types.js';
import { percentagePoints } from '../field/field-summary.js';
import { fixed } from './output.js';
import { compactTable } from './table.js';

const VERDICT = {
  holds: 'HOLDS',
  under_compensates: 'UNDER-COMPENSATES',
  over_compensates: 'OVER-COMPENSATES',
  not_enough_data: 'NOT ENOUGH DATA TO TELL',
  nothing_compensated: 'NOTHING WAS COMPENSATED',
} as const;

function interval(value: number | null, lower: number | null, upper: number | null): string {
  if (value === null) return '-';
  return lower === null || upper === null ? fixed(value) : `${fixed(value)} [${fixed(lower)}, ${fixed(upper)}]`;
}

function gapCell(band: FieldBand, report: FieldCheckReport): string {
  if (band.index === report.compensation.reference_band) return 'reference';
  if (!band.eligible) return 'above the limit';
  if (band.gap === null) return '-';
  return `${percentagePoints(band.gap.estimate)} [${percentagePoints(band.gap.lower).replace(' pp', '')}, ${percentagePoints(band.gap.upper)}]`;
}

export function renderFieldCheck(report: FieldCheckReport): string {
  const { data, model, compensation, calibration, settings } = report;
  const rowsHead = data.shape === 'per_round' ? 'rounds' : 'attempts';
  const level = Math.round((1 - 2 * settings.alpha) * 100);
  const referenceLabel = settings.target.kind === 'fixed' ? `target ${fixed(settings.target.probability)}` : `band ${report.bands[compensation.reference_band ?? 0]?.label ?? ''}`;
  const table = compactTable(
    ['latency band', rowsHead, 'players (control)', 'mean scale', 'predicted before', 'predicted after [95%]', 'observed [95%]', `gap to ${referenceLabel} [${level}%]`],
    ['left', 'right', 'right', 'right', 'right', 'right', 'right', 'right'],
  );
  for (const band of report.bands) {
    const marker = band.index === compensation.worst_band ? ' (worst)' : '';
    table.push([
      `${band.label}${marker}`,
      String(data.shape === 'per_round' ? (band.rounds ?? 0) : band.attempts),
      `${band.players} (${band.control_players})`,
      band.mean_scale === null ? '-' : band.mean_scale.toFixed(3),
      band.predicted_before === null ? '-' : fixed(band.predicted_before),
      interval(band.predicted, band.predicted_lower, band.predicted_upper),
      interval(band.observed, band.observed_lower, band.observed_upper),
      gapCell(band, report),
    ]);
  }
  const lines = [
    `Field check of ${data.file} against ${model.file ?? 'the model'} (${model.link}; trained on ${model.training_latency_ms.min}-${model.training_latency_ms.max} ms, scales ${model.training_scale.min}-${model.training_scale.max})`,
    '',
    `Compensation: ${VERDICT[report.verdict]} (margin ±${(settings.margin * 100).toFixed(1)} pp)`,
    `  ${compensation.message}`,
  ];
  const residual = compensation.residual_latency_per_100ms;
  if (residual !== null) {
    lines.push(`  Residual latency effect beyond the model at the applied scales: ${residual.estimate.toFixed(3)} log-odds per 100 ms (95% interval ${residual.lower.toFixed(3)} to ${residual.upper.toFixed(3)}).`);
  }
  lines.push('', table.toString(), `Gaps compare bands at the file's difficulty mix; observed rates are as played. Intervals are cluster-robust by player (CR1).`, '');
  lines.push(`Model: ${calibration.recommendation === 'refit' ? 'REFIT' : 'KEEP'}`, `  ${calibration.reason}`);
  if (calibration.recommendation === 'refit' && calibration.commands !== null) {
    lines.push(`  Refit on the live rows:\n    ${calibration.commands.new_data}`);
    if (calibration.commands.combined !== null) lines.push(`  Or on the training and live rows together:\n    ${calibration.commands.combined}`);
    lines.push(`  ${calibration.commands.note}`);
  }
  // The sentences on data, control and the caution (the verdict and the model's are above).
  lines.push('', ...report.summary.filter((line) => line !== compensation.message && !line.startsWith('Model: ') && !line.startsWith('Refit on') && !line.startsWith('Or on')));
  return lines.join('\n');
}
