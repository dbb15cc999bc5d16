/**
 * `renderReport(input)`: one self-contained HTML page that shows a playtest,
 * the model fitted to it and what compensation does to some lobbies, for the
 * designers who judge them by eye.
 *
 * The page needs nothing from the network to open: the charts are inline SVG
 * (rendered in Node by Vega-Lite and Vega, see `render-svg.ts`), the styles
 * are inline, there are no scripts and no web fonts, and a
 * Content-Security-Policy meta tag tells the browser to load nothing.
 *
 * Pure: the same input gives the same page (no clock, no randomness, no file
 * access). Asynchronous only because Vega renders asynchronously.
 */
import { type Issue, type Result, error, fail, ok, warning } from '../issues.js';
import type { Trials } from '../formats/trials-types.js';
import type { CompiledModel } from '../model/compile.js';
import { type CompiledRules, defaultRules } from '../solver/rules.js';
import type { BinSpec } from '../summary/bins.js';
import { type Factor, type TrialsSummary, summarizeTrials } from '../summary/summarize-trials.js';
import { type BoxGroup, type CurvePanel, boxPlotSpec, calibrationSpec, curvesSpec, scaleNeededSpec } from './charts.js';
import { type ReportLobby, lobbiesSection } from './lobby-section.js';
import { coefficientTable, fitTables } from './model-section.js';
import { scaleNeeded } from './scale-needed.js';
import type { FieldCheckReport } from '../field/field-types.js';
import { fieldBandsSpec } from './charts.js';
import { fieldBandPoints, fieldSection } from './field-section.js';
import { VERDICT_WORDS } from '../field/field-summary.js';
import { escapeHtml, formatGeneral, formatNumber, htmlTable } from './html.js';
import { calibrationBins, difficultyForModel, hasCovariance, predictWithBand } from './predictions.js';
import { MissingChartingError, loadCharting, renderChartSvg } from './render-svg.js';
import type { SizeStudy } from '../plan/size-study-types.js';
import { powerSpec, precisionSpec } from './size-study-charts.js';

export type { ReportLobby } from './lobby-section.js';

export interface ReportInput {
  readonly trials: Trials;
  readonly model: CompiledModel;
  /** The model's file name, for the page. */
  readonly modelName?: string;
  readonly lobbies?: readonly ReportLobby[];
  /** Rules for the lobbies: each lobby is audited against them (a verdict with every reason); without them, balanced under `defaultRules()` with no verdict. */
  readonly rules?: CompiledRules;
  /** The name of the rules file, for the page. */
  readonly rulesName?: string;
  /** SHA-256 (hex) of the trials file, to compare with the model's provenance. */
  readonly trialsSha256?: string;
  /** Latency groups for the box plots and observed means; default `auto`. */
  readonly latencyBins?: BinSpec;
  /** A field check of live telemetry (`checkField`): adds the section on live play. */
  readonly field?: FieldCheckReport;
  readonly title?: string;
  /** A size study's result (`lagparity plan size --json`): a section with the precision and power against participants. */
  readonly sizeStudy?: SizeStudy;
  /** The size study's file name, for the page. */
  readonly sizeStudyName?: string;
}

export interface Report {
  readonly html: string;
  /** One entry per chart, in page order: its id and title. */
  readonly charts: readonly { readonly id: string; readonly title: string }[];
}

/** Number of points on each fitted curve. */
const CURVE_POINTS = 101;

export const REPORT_CAUTIONS: readonly string[] = [
  'Compensation changes competitive outcomes: a scale above 1 changes the game for some players and not others, and so changes who wins.',
  'Disclose it to the players: that compensation is in use, how it is computed (the model, the target, the caps) and which player received which scale.',
  'Measure latency on the server, from game traffic; never take a latency the client reports, or a player can inflate it to earn a larger scale.',
  "The league's own rules and officials decide whether and how compensation is used and what happens when a lobby cannot be balanced; this report informs, it does not rule.",
  'The model equalises expected hit probability for an average player at a latency, not skill; where a cap binds the player is still behind, and outside the training ranges predictions are extrapolations.',
];

const STYLE = `
body{font-family:system-ui,-apple-system,"Segoe UI",Roboto,"Helvetica Neue",Arial,sans-serif;margin:0;color:#1a1a1a;background:#fff;line-height:1.45}
main{max-width:1180px;margin:0 auto;padding:24px 28px 64px}
h1{font-size:1.6rem;margin:0 0 4px}h2{font-size:1.25rem;margin:36px 0 8px;border-bottom:1px solid #ddd;padding-bottom:4px}h3{font-size:1.05rem;margin:24px 0 6px}
p,li{max-width:78ch}.meta{color:#555;margin:0 0 16px}
.caution{border-left:4px solid #D55E00;background:#fff6ef;padding:8px 16px;margin:16px 0}
.caution h2{border:0;margin:4px 0;font-size:1.1rem}
.note{color:#444;font-size:.92rem}
.warn{border-left:4px solid #E69F00;background:#fffaf0;padding:6px 12px}
figure{margin:16px 0;overflow-x:auto}figcaption{color:#444;font-size:.9rem;max-width:90ch;margin-top:4px}
.charts{display:flex;flex-wrap:wrap;gap:8px 24px;align-items:flex-start}.charts figure{flex:0 0 auto;margin:8px 0}.charts figcaption{max-width:56ch}
table{border-collapse:collapse;margin:8px 0 16px;font-size:.9rem}caption{text-align:left;color:#444;padding-bottom:4px}
th,td{border-bottom:1px solid #e2e2e2;padding:3px 10px;text-align:left;vertical-align:top}th{background:#f4f4f4;font-weight:600}
td.num,th.num{text-align:right;font-variant-numeric:tabular-nums}
code{font-family:ui-monospace,SFMono-Regular,Menlo,Consolas,monospace;font-size:.88em}
details>summary{cursor:pointer;list-style-position:outside}details>summary h2{display:inline-block;border:0;margin:28px 0 8px}
details{border-bottom:1px solid #ddd}
.headline{border-left:4px solid #0072B2;background:#f1f7fc;padding:6px 16px;margin:16px 0}.headline p{margin:6px 0}
nav#contents ol{columns:2;max-width:60ch}nav#contents h2{font-size:1.1rem;border:0;margin:16px 0 4px}
.within{color:#006d4f;font-weight:600}.outside{color:#a63d00;font-weight:600}
.outside-box{border-left:4px solid #D55E00;background:#fff6ef;padding:4px 12px;margin:8px 0}
table.stats th{text-align:left}
pre{white-space:pre-wrap;overflow-wrap:anywhere}
`;

function factorTitle(factor: Factor): string {
  if (factor === 'latency') return 'Latency group (ms)';
  if (factor === 'scale') return 'Compensation scale (×)';
  return 'Difficulty';
}

function boxGroups(summary: TrialsSummary, factor: Factor): BoxGroup[] {
  return summary.conditions.map((condition) => ({
    label: condition.condition[factor] ?? '',
    rounds: condition.rounds,
    lower_whisker: condition.accuracy.lower_whisker,
    lower_hinge: condition.accuracy.lower_hinge,
    median: condition.accuracy.median,
    upper_hinge: condition.accuracy.upper_hinge,
    upper_whisker: condition.accuracy.upper_whisker,
    mean_accuracy: condition.mean_accuracy,
    outliers: condition.accuracy.outliers,
  }));
}

/** A group's representative value: a level's value, or the attempt-weighted mean of a bin. */
function representative(summary: TrialsSummary, factor: 'scale' | 'difficulty', index: number): number | string {
  const condition = summary.conditions[index];
  const group = condition === undefined ? undefined : summary.groupings[factor]?.groups[condition.group[factor] ?? -1];
  if (group !== undefined && group.value !== null) return group.value;
  if (factor === 'scale') return condition?.mean_scale ?? 1;
  return condition?.mean_difficulty ?? 0;
}

function issueList(issues: readonly Issue[]): string {
  return `<ul>${issues.map((issue) => `<li><code>${escapeHtml(issue.location)}</code> ${escapeHtml(issue.code)}: ${escapeHtml(issue.message)}</li>`).join('')}</ul>`;
}

function widthText(value: { estimate: number | null; mc_low: number | null; mc_high: number | null }): string {
  const show = (number: number | null) => (number === null ? 'unbounded' : formatNumber(number, 3));
  return value.estimate === null ? 'unbounded' : `${show(value.estimate)} (${show(value.mc_low)}–${show(value.mc_high)})`;
}

/** The size study's section: what was assumed, the two charts, the table and the recommendation. */
async function sizeStudySection(study: SizeStudy, name: string, addChart: (id: string, title: string, spec: Parameters<typeof renderChartSvg>[0]) => Promise<string>): Promise<string> {
  const { assumptions: a, goal } = study;
  const precisionSvg = await addChart('size-precision', 'Precision of the compensation scale against participants', precisionSpec(study.rows, goal.interval_width, a.at_latency_ms));
  const powerSvg = await addChart('size-power', 'Power against participants', powerSpec(study.rows, goal.latency_power));
  const rows = study.rows.map((row) => [
    String(row.participants),
    String(row.repetitions),
    formatNumber(row.session_minutes, 1),
    `${formatNumber(row.latency_power.estimate, 3)} ± ${formatNumber(row.latency_power.mc_se, 3)}`,
    `${formatNumber(row.scale_power.estimate, 3)} ± ${formatNumber(row.scale_power.mc_se, 3)}`,
    `${formatNumber(row.unusable.estimate, 3)}`,
    widthText(row.width_median),
    widthText(row.width_p90),
    row.coverage === null ? '–' : formatNumber(row.coverage.estimate, 3),
    row.meets_goal ? 'met' : '–',
  ]);
  const verdict =
    study.recommended === null
      ? `<p class="warn">No size in the range meets the goal. ${escapeHtml(study.closest?.message ?? '')}.</p>`
      : `<p><strong>Recommended: ${study.recommended.participants} participants with ${study.recommended.repetitions} repetition(s) of each condition.</strong></p>`;
  return `<div id="size-study">
<p>From <code>${escapeHtml(name)}</code>${study.label === null ? '' : ` (${escapeHtml(study.label)})`}: ${study.studies} simulated playtests per size (seed ${study.seed}), each fitted as <code>lagparity fit</code> fits a playtest (${escapeHtml(a.fitted_terms.join(', '))}; CR1 errors by player). Assumed: ${a.source === 'pilot_model' ? `the pilot model <code>${escapeHtml(a.pilot_model ?? '')}</code>` : 'entered effects'} (${escapeHtml(a.link)} link), players' skill spread ${formatGeneral(a.player_sd)} on the link scale (${a.player_sd_source === 'default' ? 'the documented default, an assumption' : a.player_sd_source === 'pilot_trials' ? "estimated from the pilot's trials" : 'from the plan'}), ${a.attempts_per_round} attempts a round. The scale needed at ${formatGeneral(a.at_latency_ms)} ms (difficulty ${escapeHtml(String(a.at_difficulty))}) to restore the hit probability at ${formatGeneral(a.reference_latency_ms)} ms is ${formatNumber(a.true_scale, 3)} under these assumptions.</p>
${verdict}
<ul>${study.recommendations.map((entry) => `<li>${escapeHtml(entry.note)}</li>`).join('')}</ul>
<div class="charts">
${figure(precisionSvg, 'figure-size-precision', `Width of the compensation scale's 90% interval (delta method, cluster-robust covariance) at ${a.at_latency_ms} ms: the median and the 90th percentile over the simulated studies, with their 95% Monte Carlo intervals (order statistics). A study whose model cannot be used counts as unbounded.${goal.interval_width === null ? '' : ` Dashed: the goal, ${goal.interval_width} (${goal.width_statistic === 'median' ? 'median' : '90th percentile'}).`}`)}
${figure(powerSvg, 'figure-size-power', `Share of simulated studies whose Wald test (cluster-robust, two-sided at ${goal.alpha}) detects the latency and the scale effect; bars: ±1.96 Monte Carlo standard errors.${goal.latency_power === null ? '' : ` Dashed: the goal for the latency effect, ${goal.latency_power}.`}`)}
</div>
${htmlTable(['participants', 'repetitions', 'session (min)', 'latency power', 'scale power', 'unusable', 'median width', '90th pct width', 'coverage', 'goal'], rows, { numeric: [0, 1, 2, 3, 4, 5, 6, 7, 8], caption: 'Widths with their 95% Monte Carlo intervals; powers with their Monte Carlo standard errors; coverage: the share of usable studies whose 90% interval holds the assumed scale.' })}
${study.warnings.length > 0 ? `<div class="note">Warnings:${issueList(study.warnings)}</div>` : ''}
</div>`;
}

function figure(svg: string, id: string, caption: string): string {
  return `<figure id="${id}" class="chart">${svg}<figcaption>${escapeHtml(caption)}</figcaption></figure>`;
}

/**
 * Build the report page. Returns the HTML and the list of charts, with
 * warnings (a model fitted on other data, lobbies the model cannot balance,
 * chart-rendering messages); or issues when the trials and the model do not
 * fit together (`wrong_difficulty`) or a summary option is bad.
 *
 * Cost: O(n p) over the n trial rows for calibration, plus a few tens of
 * milliseconds per chart.
 *
 * @example
 *   const report = await renderReport({ trials, model, lobbies: [{ name: 'a.lobby.json', lobby }] });
 *   if (report.ok) await writeFileAtomic('report.html', report.value.html);
 */
export async function renderReport(input: ReportInput): Promise<Result<Report>> {
  const { trials, model } = input;
  try {
    await loadCharting();
  } catch (cause) {
    if (cause instanceof MissingChartingError) return fail([error(cause.code, 'report', cause.message)]);
    throw cause;
  }
  const rules = input.rules ?? defaultRules();
  const warnings: Issue[] = [];
  const difficultyCheck = difficultyForModel(trials, model);
  if (!difficultyCheck.ok) return difficultyCheck;
  const options = { latencyBins: input.latencyBins ?? { kind: 'auto' as const } };
  const summaries: Partial<Record<Factor | 'all', TrialsSummary>> = {};
  for (const by of [['latency'], ['scale'], ['difficulty'], ['latency', 'scale', 'difficulty']] as Factor[][]) {
    const summary = summarizeTrials(trials, { ...options, by });
    if (!summary.ok) return summary;
    summaries[by.length === 1 ? (by[0] as Factor) : 'all'] = summary.value;
  }
  const byLatency = summaries.latency as TrialsSummary;
  const byScale = summaries.scale as TrialsSummary;
  const byDifficulty = summaries.difficulty as TrialsSummary;
  const full = summaries.all as TrialsSummary;

  const charts: { id: string; title: string; svg: string }[] = [];
  const addChart = async (id: string, title: string, spec: Parameters<typeof renderChartSvg>[0]): Promise<string> => {
    const rendered = await renderChartSvg(spec, id);
    for (const message of rendered.messages) warnings.push(warning('chart_message', id, message));
    charts.push({ id, title, svg: rendered.svg });
    return rendered.svg;
  };

  // Data: box plots.
  const boxSvgs: string[] = [];
  for (const [factor, summary] of [['latency', byLatency], ['scale', byScale], ['difficulty', byDifficulty]] as const) {
    const title = `Per-round accuracy by ${factor === 'latency' ? 'latency' : factor}`;
    boxSvgs.push(figure(await addChart(`box-${factor}`, title, boxPlotSpec(boxGroups(summary, factor), factorTitle(factor), title)), `figure-box-${factor}`, summary.groupings[factor]?.description ?? ''));
  }

  // Model: curves with band over observed means.
  const band = hasCovariance(model);
  const minimumLatency = trials.latency.reduce((low, value) => Math.min(low, value), Infinity);
  const maximumLatency = trials.latency.reduce((high, value) => Math.max(high, value), -Infinity);
  const scaleLabels = byScale.conditions.map((condition) => condition.condition.scale ?? '');
  const scaleValues = byScale.conditions.map((_, index) => Number(representative(byScale, 'scale', index)));
  const panels: CurvePanel[] = byDifficulty.conditions.map((condition, difficultyIndex) => {
    const label = condition.condition.difficulty ?? '';
    const value = representative(byDifficulty, 'difficulty', difficultyIndex);
    const difficulty = model.difficulty.kind === 'levels' ? String(value) : Number(value);
    const curve = scaleLabels.flatMap((scaleLabel, scaleIndex) =>
      Array.from({ length: CURVE_POINTS }, (_, step) => {
        const latency = minimumLatency + ((maximumLatency - minimumLatency) * step) / (CURVE_POINTS - 1);
        const prediction = predictWithBand(model, latency, scaleValues[scaleIndex] as number, difficulty);
        return { scale: scaleLabel, latency, probability: prediction.probability, lower: prediction.lower, upper: prediction.upper };
      }),
    );
    const observed = full.conditions
      .filter((cell) => cell.condition.difficulty === label)
      .map((cell) => ({ scale: cell.condition.scale ?? '', latency: cell.mean_latency_ms, accuracy: cell.mean_accuracy, attempts: cell.attempts }));
    return { difficulty: label, curve, observed };
  });
  const curvesSvg = await addChart('curves', 'Fitted hit probability against latency', curvesSpec(panels, scaleLabels, band));

  // Model: calibration.
  const calibration = calibrationBins(trials, model, 10);
  if (!calibration.ok) return calibration;
  const calibrationSvg = await addChart(
    'calibration',
    'Calibration',
    calibrationSpec(calibration.value.map((bin) => ({ mean_predicted: bin.mean_predicted, observed: bin.observed, attempts: bin.attempts, bin: `[${bin.lower.toFixed(1)}, ${bin.upper.toFixed(1)})` }))),
  );

  // Lobbies: audited against the rules when given.
  const rulesName = input.rules === undefined ? null : (input.rulesName ?? 'the rules given');
  const lobbies = await lobbiesSection(input.lobbies ?? [], model, rules, rulesName, addChart, figure);
  warnings.push(...lobbies.warnings.map((issue) => warning(issue.code === 'outside_training_range' ? issue.code : 'lobby_warning', issue.location, issue.message)));

  // Where compensation stops: the scale each latency needs against what the rules grant.
  const difficulties = [...new Set((input.lobbies ?? []).map(({ lobby }) => lobby.difficulty))];
  const curveDifficulty = difficulties[0] ?? (model.difficulty.kind === 'levels' ? model.difficulty.reference : (Array.isArray(model.training.difficulty) ? 0 : model.training.difficulty.min));
  const needed = scaleNeeded(model, rules, curveDifficulty);
  const neededSvg =
    needed === null
      ? null
      : await addChart(
          'scale-needed',
          'Where compensation stops',
          scaleNeededSpec(`The scale each latency needs at difficulty ${String(curveDifficulty)} (target P(hit) ${formatNumber(needed.target)})`, needed.points, {
            floor: rules.scale_floor,
            cap: rules.scale_cap,
            softCapAbove: rules.soft_cap?.above ?? null,
            latencyLimit: rules.latency_limit_ms,
          }),
        );

  // Playtest planning.
  const sizeSection = input.sizeStudy === undefined ? '' : await sizeStudySection(input.sizeStudy, input.sizeStudyName ?? 'size study', addChart);

  // Live play (the field check), when given.
  let liveSection = '';
  if (input.field !== undefined) {
    const field = input.field;
    const order = field.bands.filter((band) => band.observed !== null).map((band) => band.label);
    liveSection = fieldSection(field, await addChart('live', 'Live play by latency band', fieldBandsSpec(fieldBandPoints(field), order)));
  }

  // Provenance.
  const provenance = model.source.provenance;
  const provenanceNotes: string[] = [];
  if (input.trialsSha256 !== undefined && input.trialsSha256 !== provenance.sha256) {
    const message = `the model was fitted on ${provenance.file} (${provenance.rows} rows, SHA-256 ${provenance.sha256.slice(0, 12)}…), not on this trials file (SHA-256 ${input.trialsSha256.slice(0, 12)}…)`;
    warnings.push(warning('other_data', 'model.provenance', message));
    provenanceNotes.push(`<p class="warn">Note: ${escapeHtml(message)}. The curves and the calibration compare the model with data it was not fitted on.</p>`);
  } else if (input.trialsSha256 !== undefined) {
    provenanceNotes.push(`<p class="note">The trials file is the one the model file names as its data (SHA-256 matches).</p>`);
  }

  const training = model.training;
  const trainingDifficulty = Array.isArray(training.difficulty) ? training.difficulty.join(', ') : `${training.difficulty.min}–${training.difficulty.max}`;
  const title = input.title ?? 'lagparity report';
  const bandNote = band
    ? `The band is a pointwise 95% interval from the delta method on the linear predictor: se = √(x′Vx) with V the model file's covariance (${escapeHtml(model.source.coefficients.covariance_kind)}), mapped through the inverse ${escapeHtml(model.link.name)} link.`
    : `No band is drawn: the model file's covariance is all zeros (<code>covariance_kind</code> “${escapeHtml(model.source.coefficients.covariance_kind)}”), so it states no uncertainty. A fitted model file carries its covariance and gets a band.`;

  const stats = (model.source.fit as { statistics?: { mcfadden_r2?: unknown } } | undefined)?.statistics;
  const mcfadden = typeof stats?.mcfadden_r2 === 'number' ? stats.mcfadden_r2 : null;
  const hasLobbies = (input.lobbies ?? []).length > 0;
  const headline = [
    `Fitted: a binomial ${escapeHtml(model.link.name)} model of hit probability on ${training.rows} rows (${training.attempts} attempts${training.players === undefined ? '' : `, ${training.players} players`}), terms ${escapeHtml(model.source.terms.join(', '))}${mcfadden === null ? '' : `; McFadden's R² ${formatNumber(mcfadden, 3)} (0.1–0.2 is usual for hit-or-miss outcomes)`}.`,
    hasLobbies
      ? lobbies.withinRules === null
        ? `Lobbies: ${lobbies.lobbies}, balanced under the default rules (no rules given, so no verdicts).`
        : `Lobbies: <strong>${lobbies.withinRules} of ${lobbies.lobbies} within rules</strong> under ${escapeHtml(rulesName ?? '')}.`
      : 'No lobbies were given.',
    lobbies.worst === null ? '' : `Worst residual gap after compensation: <strong>${formatNumber(lobbies.worst.gap)}</strong> of hit probability (${escapeHtml(lobbies.worst.matchId)}).`,
    input.field === undefined ? '' : `Live play: <strong>${escapeHtml(VERDICT_WORDS[input.field.verdict])}</strong>; the model: ${input.field.calibration.recommendation === 'refit' ? 'refit' : 'keep'}.`,
  ].filter((line) => line !== '');
  const sections: { id: string; title: string; body: string }[] = [
    {
      id: 'data',
      title: 'The playtest',
      body: `<p>Each box shows the per-round accuracy (hits / attempts of one round) in one group: the box spans Tukey's hinges with the median across it, the whiskers reach the most extreme rounds within 1.5 hinge spreads of the hinges (Tukey 1977), and rounds beyond are drawn as open circles. The filled diamond is the attempt-weighted mean accuracy (total hits / total attempts). ${escapeHtml(byLatency.round_definition.replace(/^./, (letter) => letter.toUpperCase()))}.</p>
<div class="charts">${boxSvgs.join('\n')}</div>`,
    },
    {
      id: 'model',
      title: 'The model',
      body: `<p>${escapeHtml(model.link.name)} link; terms <code>${escapeHtml(model.source.terms.join(', '))}</code>. Trained on latency ${training.latency_ms.min}–${training.latency_ms.max} ms, scale ${training.scale.min}–${training.scale.max}, difficulty ${escapeHtml(trainingDifficulty)}; ${training.rows} rows, ${training.attempts} attempts${training.players === undefined ? '' : `, ${training.players} players`}.</p>
${provenanceNotes.join('\n')}
${figure(curvesSvg, 'figure-curves', `Lines: the model's hit probability against latency at each scale of the playtest (one panel per difficulty). Dots: observed mean accuracy (hits / attempts) of each latency group × scale × difficulty cell, at the cell's mean latency. ${band ? 'Shaded: the 95% band.' : 'No band: the model has no covariance.'}`)}
<p class="note">${bandNote}</p>
${figure(calibrationSvg, 'figure-calibration', 'Each point is one bin of predicted probability ([0, 0.1), …, [0.9, 1]; empty bins left out): the attempt-weighted mean prediction against the observed hit rate of its rows, sized by attempts. Points on the dashed diagonal mean the model is calibrated on this data; the playtest rounds are clustered by player, so the points scatter more than binomial noise alone would make them.')}
<h3>Coefficients</h3>
${coefficientTable(model)}
<h3>Fit statistics</h3>
${fitTables(model)}
<p class="note">Provenance: <code>${escapeHtml(provenance.file)}</code>, ${provenance.rows} rows, SHA-256 <code>${escapeHtml(provenance.sha256)}</code>${provenance.created_by ? `, created by ${escapeHtml(provenance.created_by)}` : ''}.</p>`,
    },
    ...(neededSvg === null
      ? []
      : [
          {
            id: 'scale-needed-section',
            title: 'Where compensation stops',
            body: figure(
              neededSvg,
              'figure-scale-needed',
              `Dashed orange: the scale a player at each latency needs to reach the target (here the best-connected player's, at the fastest trained latency, ${model.training.latency_ms.min} ms); solid blue: the scale the rules grant a player alone (the floor, the soft cap, the cap and the step; a ratio limit or a budget can grant less in a lobby). Grey lines: the floor, where the soft cap starts, and the cap; vermillion: the latency limit, beyond which players are not scaled at all. Where the blue line leaves the orange one, compensation stops short and a gap remains.`,
            ),
          },
        ]),
    { id: 'lobbies', title: 'Lobbies', body: hasLobbies ? lobbies.html : '<p class="note">No lobbies were given (<code>--lobbies</code>).</p>' },
    ...(liveSection === '' ? [] : [{ id: 'live-section', title: 'Live play: does compensation hold?', body: liveSection }]),
    ...(sizeSection === '' ? [] : [{ id: 'size-study-section', title: 'How many participants', body: sizeSection }]),
    {
      id: 'method',
      title: 'Method notes',
      body: `<ul class="note">
<li>Groups: ${[byLatency, byScale, byDifficulty].map((summary) => escapeHtml(Object.values(summary.groupings)[0]?.description ?? '')).join('; ')}.</li>
<li>Quantiles: the bins' cut points are Hyndman &amp; Fan (1996) type 7 sample quantiles; the boxes use Tukey's hinges (Tukey 1977).</li>
<li>Charts: Vega-Lite specs rendered to SVG in Node by Vega, with the Okabe &amp; Ito (2008) colour-blind-safe palette; shapes and dashes repeat what colour says.</li>
</ul>`,
    },
  ];
  const html = `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta http-equiv="Content-Security-Policy" content="default-src 'none'; style-src 'unsafe-inline'; img-src data:">
<title>${escapeHtml(title)}</title>
<style>${STYLE}</style>
</head>
<body>
<main>
<h1>${escapeHtml(title)}</h1>
<p class="meta">Trials <code>${escapeHtml(trials.file)}</code> (${trials.rows} rows, ${byLatency.rounds} rounds, ${byLatency.attempts} attempts); model <code>${escapeHtml(input.modelName ?? 'model')}</code>${model.source.label ? ` — ${escapeHtml(model.source.label)}` : ''}${hasLobbies ? `; ${input.lobbies?.length ?? 0} lobbies under ${escapeHtml(rulesName ?? 'the default rules')}` : ''}.</p>
<section class="headline" id="headline">
${headline.map((line) => `<p>${line}</p>`).join('\n')}
</section>
<section class="caution" id="cautions">
<h2>Cautions</h2>
<ul>${REPORT_CAUTIONS.map((text) => `<li>${escapeHtml(text)}</li>`).join('')}</ul>
</section>
<nav id="contents"><h2>Contents</h2><ol>${sections.map((section) => `<li><a href="#${section.id}">${escapeHtml(section.title)}</a></li>`).join('')}</ol></nav>
${sections.map((section) => `<details open id="${section.id}"><summary><h2>${escapeHtml(section.title)}</h2></summary>\n${section.body}\n</details>`).join('\n')}
</main>
</body>
</html>
`;
  return ok({ html, charts: charts.map(({ id, title: chartTitle }) => ({ id, title: chartTitle })) }, warnings);
}
