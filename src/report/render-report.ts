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
import type { LobbyFile } from '../formats/lobby-types.js';
import type { Trials } from '../formats/trials-csv.js';
import type { CompiledModel } from '../model/compile.js';
import { type BalanceResult, type PlayerBalance, balanceLobby } from '../solver/balance-lobby.js';
import { type CompiledRules, defaultRules } from '../solver/rules.js';
import type { BinSpec } from '../summary/bins.js';
import { type Factor, type TrialsSummary, summarizeTrials } from '../summary/summarize-trials.js';
import { twoSidedNormalPValue } from '../stats/distributions.js';
import type { FieldCheckReport } from '../field/field-types.js';
import { type BoxGroup, type CurvePanel, boxPlotSpec, calibrationSpec, curvesSpec, fieldBandsSpec, lobbySpec } from './charts.js';
import { fieldBandPoints, fieldSection } from './field-section.js';
import { escapeHtml, formatGeneral, formatNumber, htmlTable } from './html.js';
import { calibrationBins, difficultyForModel, hasCovariance, predictWithBand } from './predictions.js';
import { MissingChartingError, loadCharting, renderChartSvg } from './render-svg.js';

export interface ReportLobby {
  /** Shown as the lobby's source, e.g. its file name. */
  readonly name: string;
  readonly lobby: LobbyFile;
}

export interface ReportInput {
  readonly trials: Trials;
  readonly model: CompiledModel;
  /** The model's file name, for the page. */
  readonly modelName?: string;
  readonly lobbies?: readonly ReportLobby[];
  /** Rules for the lobbies; default `defaultRules()`. */
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
}

export interface Report {
  readonly html: string;
  /** One entry per chart, in page order: its id and title. */
  readonly charts: readonly { readonly id: string; readonly title: string }[];
}

/** Bindings that hold a player below the target: marked in the lobby charts. */
const HOLDING_BINDINGS = new Set(['cap', 'soft_cap', 'ratio', 'budget']);

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
code{font-family:ui-monospace,SFMono-Regular,Menlo,Consolas,monospace;font-size:.88em}pre{white-space:pre-wrap;overflow-wrap:anywhere}
dl.fit{display:grid;grid-template-columns:max-content 1fr;gap:2px 16px;font-size:.9rem}dl.fit dt{font-weight:600}dl.fit dd{margin:0}
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

function renderFitBlock(value: unknown, depth = 0): string {
  if (value === null || value === undefined) return '<span class="note">none</span>';
  if (typeof value === 'number') return escapeHtml(formatGeneral(value));
  if (typeof value === 'string' || typeof value === 'boolean') return escapeHtml(String(value));
  if (Array.isArray(value)) {
    if (value.every((item) => typeof item === 'number' || typeof item === 'string')) {
      return escapeHtml(value.map((item) => (typeof item === 'number' ? formatGeneral(item) : item)).join(', '));
    }
    if (depth >= 2) return `<code>${escapeHtml(JSON.stringify(value))}</code>`;
    return `<ol>${value.map((item) => `<li>${renderFitBlock(item, depth + 1)}</li>`).join('')}</ol>`;
  }
  if (typeof value === 'object') {
    if (depth >= 3) return `<code>${escapeHtml(JSON.stringify(value))}</code>`;
    const entries = Object.entries(value as Record<string, unknown>);
    return `<dl class="fit">${entries.map(([key, item]) => `<dt>${escapeHtml(key)}</dt><dd>${renderFitBlock(item, depth + 1)}</dd>`).join('')}</dl>`;
  }
  return escapeHtml(String(value));
}

function coefficientTable(model: CompiledModel): string {
  const size = model.coefficients.length;
  const rows = model.columns.map((column, index) => {
    const estimate = model.coefficients[index] as number;
    const variance = model.covariance[index * size + index] as number;
    const standardError = Math.sqrt(Math.max(variance, 0));
    const z = standardError > 0 ? estimate / standardError : null;
    return [
      column.name,
      formatGeneral(estimate),
      standardError > 0 ? formatGeneral(standardError) : '0',
      z === null ? '–' : formatNumber(z, 2),
      z === null ? '–' : twoSidedNormalPValue(z) === 0 ? '< 1e-300' : formatGeneral(twoSidedNormalPValue(z)),
    ];
  });
  return htmlTable(['term', 'estimate', 'std. error', 'z', 'p (two-sided, normal)'], rows, {
    numeric: [1, 2, 3, 4],
    caption: `Coefficients on the ${model.link.name} scale; standard errors from the model file's covariance (${model.source.coefficients.covariance_kind}).`,
  });
}

function lobbyTable(players: readonly PlayerBalance[]): string {
  const rows = players.map((player) => [
    player.id,
    player.team ?? '–',
    formatNumber(player.latency_estimate_ms, 1),
    player.eligible ? formatNumber(player.scale, 3) : 'not scaled',
    formatNumber(player.expected_before),
    player.eligible ? formatNumber(player.expected_after) : '–',
    player.eligible ? formatNumber(player.gap_to_target) : '–',
    player.binding,
  ]);
  return htmlTable(['player', 'team', 'latency ms', 'scale', 'P(hit) before', 'P(hit) after', 'gap to target', 'held by'], rows, { numeric: [2, 3, 4, 5, 6] });
}

function issueList(issues: readonly Issue[]): string {
  return `<ul>${issues.map((issue) => `<li><code>${escapeHtml(issue.location)}</code> ${escapeHtml(issue.code)}: ${escapeHtml(issue.message)}</li>`).join('')}</ul>`;
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

  // Lobbies.
  const lobbySections: string[] = [];
  for (const [index, { name, lobby }] of (input.lobbies ?? []).entries()) {
    const result: BalanceResult = balanceLobby(lobby, model, rules);
    const heading = `<h3>${escapeHtml(result.match_id)} <span class="note">(${escapeHtml(name)})</span></h3>`;
    if (result.status === 'rejected') {
      warnings.push(...result.issues.map((issue) => warning('lobby_rejected', `${name}:${issue.location}`, issue.message)));
      lobbySections.push(`${heading}<p class="warn">The model cannot balance this lobby:</p>${issueList(result.issues)}`);
      continue;
    }
    const players = [...result.players].sort((left, right) => left.latency_estimate_ms - right.latency_estimate_ms || (left.id < right.id ? -1 : 1));
    const points = players.map((player) => ({
      player: player.id,
      before: player.expected_before,
      after: player.expected_after,
      scale_label: player.eligible ? `×${player.scale.toFixed(2)}` : 'not scaled',
      held_by: HOLDING_BINDINGS.has(player.binding) ? player.binding : null,
      eligible: player.eligible,
    }));
    const title = `${result.match_id}: expected hit probability before and after compensation (${result.status})`;
    const svg = await addChart(`lobby-${index + 1}`, title, lobbySpec(title, points, result.target));
    const summary = result.summary;
    const held = players.filter((player) => HOLDING_BINDINGS.has(player.binding));
    lobbySections.push(
      [
        heading,
        `<p>Attribute <code>${escapeHtml(result.attribute)}</code>, difficulty ${escapeHtml(String(result.difficulty))}; status <strong>${escapeHtml(result.status)}</strong>. Target P(hit) ${formatNumber(result.target)}; largest gap ${formatNumber(summary.largest_gap_before)} → ${formatNumber(summary.largest_gap_after)}; Jain's index ${formatNumber(summary.jain_before, 4)} → ${formatNumber(summary.jain_after, 4)}${summary.team_gap_before === null ? '' : `; team gap ${formatNumber(summary.team_gap_before)} → ${formatNumber(summary.team_gap_after)}`}.</p>`,
        held.length > 0 ? `<p class="warn">Held back by a rule, still short of the target: ${held.map((player) => `${escapeHtml(player.id)} (${escapeHtml(player.binding)}, gap ${formatNumber(player.gap_to_target)})`).join(', ')}. Do not present this lobby as equal.</p>` : '',
        figure(svg, `figure-lobby-${index + 1}`, 'Orange circles: expected hit probability at scale 1; blue diamonds: with the scale printed above the player; open red triangles: players a rule (cap, ratio or budget) holds below the target; dashed line: the target.'),
        lobbyTable(players),
        result.warnings.length > 0 ? `<div class="note">Warnings:${issueList(result.warnings)}</div>` : '',
      ].join('\n'),
    );
  }

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
  const fitBlock = model.source.fit;
  const bandNote = band
    ? `The band is a pointwise 95% interval from the delta method on the linear predictor: se = √(x′Vx) with V the model file's covariance (${escapeHtml(model.source.coefficients.covariance_kind)}), mapped through the inverse ${escapeHtml(model.link.name)} link.`
    : `No band is drawn: the model file's covariance is all zeros (<code>covariance_kind</code> “${escapeHtml(model.source.coefficients.covariance_kind)}”), so it states no uncertainty. A fitted model file carries its covariance and gets a band.`;

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
<p class="meta">Trials <code>${escapeHtml(trials.file)}</code> (${trials.rows} rows, ${byLatency.rounds} rounds, ${byLatency.attempts} attempts); model <code>${escapeHtml(input.modelName ?? 'model')}</code>${model.source.label ? ` — ${escapeHtml(model.source.label)}` : ''}${input.lobbies && input.lobbies.length > 0 ? `; ${input.lobbies.length} lobbies under ${escapeHtml(input.rulesName ?? 'the default rules')}` : ''}.</p>
<section class="caution" id="cautions">
<h2>Cautions</h2>
<ul>${REPORT_CAUTIONS.map((text) => `<li>${escapeHtml(text)}</li>`).join('')}</ul>
</section>

<section id="data">
<h2>The playtest</h2>
<p>Each box shows the per-round accuracy (hits / attempts of one round) in one group: the box spans Tukey's hinges with the median across it, the whiskers reach the most extreme rounds within 1.5 hinge spreads of the hinges (Tukey 1977; as R's <code>boxplot.stats</code>), and rounds beyond are drawn as outliers. The diamond is the attempt-weighted mean accuracy (total hits / total attempts). ${escapeHtml(byLatency.round_definition.replace(/^./, (letter) => letter.toUpperCase()))}.</p>
<div class="charts">${boxSvgs.join('\n')}</div>
</section>

<section id="model">
<h2>The model</h2>
<p>${escapeHtml(model.link.name)} link; terms <code>${escapeHtml(model.source.terms.join(', '))}</code>. Trained on latency ${training.latency_ms.min}–${training.latency_ms.max} ms, scale ${training.scale.min}–${training.scale.max}, difficulty ${escapeHtml(trainingDifficulty)}; ${training.rows} rows, ${training.attempts} attempts${training.players === undefined ? '' : `, ${training.players} players`}.</p>
${provenanceNotes.join('\n')}
${figure(curvesSvg, 'figure-curves', `Lines: the model's hit probability against latency at each scale of the playtest (one panel per difficulty). Dots: observed mean accuracy (hits / attempts) of each latency group × scale × difficulty cell, at the cell's mean latency. ${band ? 'Shaded: the 95% band.' : 'No band: the model has no covariance.'}`)}
<p class="note">${bandNote}</p>
${figure(calibrationSvg, 'figure-calibration', 'Each point is one bin of predicted probability ([0, 0.1), …, [0.9, 1]; empty bins left out): the attempt-weighted mean prediction against the observed hit rate of its rows, sized by attempts. Points on the dashed diagonal mean the model is calibrated on this data; the playtest rounds are clustered by player, so the points scatter more than binomial noise alone would make them.')}
<h3>Coefficients</h3>
${coefficientTable(model)}
<h3>Fit statistics</h3>
${fitBlock === undefined ? `<p class="note">The model file has no <code>fit</code> block: it was not written by a fit (its label says “${escapeHtml(model.source.label ?? 'no label')}”).</p>` : `<details open><summary>The model file's <code>fit</code> block, as written</summary>${renderFitBlock(fitBlock)}</details>`}
<p class="note">Provenance: <code>${escapeHtml(provenance.file)}</code>, ${provenance.rows} rows, SHA-256 <code>${escapeHtml(provenance.sha256)}</code>${provenance.created_by ? `, created by ${escapeHtml(provenance.created_by)}` : ''}.</p>
</section>

<section id="lobbies">
<h2>Lobbies</h2>
${lobbySections.length === 0 ? '<p class="note">No lobbies were given (<code>--lobbies</code>).</p>' : `<p>Rules: floor ${formatGeneral(rules.scale_floor)}, cap ${formatGeneral(rules.scale_cap)}, latency limit ${rules.latency_limit_ms === null ? 'none' : `${rules.latency_limit_ms} ms`}, accepted gap ${formatGeneral(rules.accepted_gap)}.</p>\n${lobbySections.join('\n')}`}
</section>

${liveSection}
<section id="method">
<h2>Method notes</h2>
<ul class="note">
<li>Groups: ${[byLatency, byScale, byDifficulty].map((summary) => escapeHtml(Object.values(summary.groupings)[0]?.description ?? '')).join('; ')}.</li>
<li>Quantiles: the bins' cut points are Hyndman &amp; Fan (1996) type 7 sample quantiles; the boxes use Tukey's hinges, as R's <code>fivenum</code>.</li>
<li>Charts: Vega-Lite specs rendered to SVG in Node by Vega, with the Okabe &amp; Ito (2008) colour-blind-safe palette; shapes and dashes repeat what colour says.</li>
</ul>
</section>
</main>
</body>
</html>
`;
  return ok({ html, charts: charts.map(({ id, title: chartTitle }) => ({ id, title: chartTitle })) }, warnings);
}
