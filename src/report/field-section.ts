/**
 * The report's section on live play (`lagparity report --live`): the field
 * check's verdict, the chart of observed against predicted by latency band
 * before and after compensation, the table by band, the model's calibration
 * and recommendation, and the caution. Pure: the page text from the check.
 */
import type { FieldCheckReport } from '../field/field-types.js';
import { VERDICT_WORDS, percentagePoints } from '../field/field-summary.js';
import { type FieldBandPoint, FIELD_SERIES } from './charts.js';
import { escapeHtml, formatNumber, htmlTable } from './html.js';

/** The chart's points: per band with rows, the model before and after, and the observed rate. */
export function fieldBandPoints(report: FieldCheckReport): FieldBandPoint[] {
  const [before, after, observed] = FIELD_SERIES;
  return report.bands.flatMap((band) =>
    band.observed === null || band.predicted === null || band.predicted_before === null
      ? []
      : [
          { band: band.label, series: before, p: band.predicted_before, lower: null, upper: null },
          { band: band.label, series: after, p: band.predicted, lower: band.predicted_lower, upper: band.predicted_upper },
          { band: band.label, series: observed, p: band.observed, lower: band.observed_lower, upper: band.observed_upper },
        ],
  );
}

function interval(value: number | null, lower: number | null, upper: number | null): string {
  if (value === null) return '–';
  return lower === null || upper === null ? formatNumber(value) : `${formatNumber(value)} [${formatNumber(lower)}, ${formatNumber(upper)}]`;
}

/** The section's HTML around the chart's SVG. */
export function fieldSection(report: FieldCheckReport, chartSvg: string): string {
  const { compensation, calibration, settings } = report;
  const level = Math.round((1 - 2 * settings.alpha) * 100);
  const rows = report.bands.map((band) => [
    `${band.label}${band.index === compensation.worst_band ? ' (worst)' : ''}`,
    String(report.data.shape === 'per_round' ? (band.rounds ?? 0) : band.attempts),
    `${band.players} (${band.control_players})`,
    band.mean_scale === null ? '–' : formatNumber(band.mean_scale),
    formatNumber(band.predicted_before),
    interval(band.predicted, band.predicted_lower, band.predicted_upper),
    interval(band.observed, band.observed_lower, band.observed_upper),
    band.index === compensation.reference_band ? 'reference' : !band.eligible ? 'above the limit' : band.gap === null ? '–' : `${percentagePoints(band.gap.estimate)} [${percentagePoints(band.gap.lower)}, ${percentagePoints(band.gap.upper)}]`,
  ]);
  const table = htmlTable(
    ['latency band', report.data.shape === 'per_round' ? 'rounds' : 'attempts', 'players (control)', 'mean scale', 'predicted before', 'predicted after [95%]', 'observed [95%]', `gap [${level}%]`],
    rows,
    { numeric: [1, 2, 3, 4, 5, 6, 7], caption: 'Gaps compare each band with the reference at the file\'s difficulty mix; observed rates are as played; intervals are cluster-robust by player (CR1).' },
  );
  const commands = calibration.recommendation === 'refit' && calibration.commands !== null
    ? `<p>Refit on the live rows:</p><pre><code>${escapeHtml(calibration.commands.new_data)}</code></pre>${calibration.commands.combined === null ? '' : `<p>Or on the training and live rows together:</p><pre><code>${escapeHtml(calibration.commands.combined)}</code></pre>`}<p class="note">${escapeHtml(calibration.commands.note)}</p>`
    : '';
  const warnings = report.warnings.length === 0 ? '' : `<div class="note">Warnings:<ul>${report.warnings.map((issue) => `<li><code>${escapeHtml(issue.location)}</code> ${escapeHtml(issue.code)}: ${escapeHtml(issue.message)}</li>`).join('')}</ul></div>`;
  const others = report.summary.filter((line) => line !== compensation.message && !line.startsWith('Model: ') && !line.startsWith('Refit on') && !line.startsWith('Or on') && line !== report.caution);
  return `<div id="live">
<p class="caution">${escapeHtml(report.caution)}</p>
<p><strong>Verdict: ${escapeHtml(VERDICT_WORDS[report.verdict])}</strong> (margin ±${(settings.margin * 100).toFixed(1)} percentage points, two one-sided tests at ${settings.alpha} each).</p>
<p>${escapeHtml(compensation.message)}</p>
${others.map((line) => `<p>${escapeHtml(line)}</p>`).join('\n')}
<figure id="figure-live" class="chart">${chartSvg}<figcaption>Per latency band: the model's hit probability at scale 1 (orange circles: before compensation), at the scales the matchmaker applied (light blue diamonds: after), and the observed hit rate (dark blue squares), with 95% intervals (the model's from its covariance, the observed cluster-robust by player). Compensation works where the observed squares sit level across bands.</figcaption></figure>
${table}
<h3>Is the model still right? ${calibration.recommendation === 'refit' ? 'Refit' : 'Keep'}</h3>
<p>${escapeHtml(calibration.reason)}</p>
${commands}
${warnings}
</div>`;
}
