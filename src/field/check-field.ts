/**
 * `checkField(trials, model, options)`: did the scales a matchmaker applied
 * equalise live play, and is the model still right? (docs/method.md,
 * section 8; issue 22.)
 *
 * 1. Does compensation hold? Live rows are cut into latency bands; the
 *    worst-connected band's observed hit rate is compared with the
 *    reference (the best-connected band, or the band of the rules'
 *    reference latency, or their fixed target) by a binomial fit with the
 *    model's prediction at the applied scale as an offset (band-rates.ts),
 *    with cluster-robust (CR1) errors by player, and judged by two one-sided
 *    tests against a margin (Schuirmann 1987): `holds`,
 *    `under_compensates`, `over_compensates`, `not_enough_data` (with the
 *    data that would decide), or `nothing_compensated`.
 * 2. Is the model still right? Calibration-in-the-large and the calibration
 *    slope (Cox 1958) with CR1 intervals, and a likelihood-ratio test of the
 *    model's terms refitted on the live rows against the model's
 *    coefficients, adjusted for clustering by player (Rao and Scott 1984):
 *    `keep` or `refit`.
 * 3. A table by band: rows, players (and the control among them: players
 *    who never had a scale above 1), mean applied scale, the model's
 *    prediction before and after compensation, the observed rate, and the
 *    gap to the reference.
 *
 * Pure: the same rows, model and options give the same report. Bad options
 * and data that do not belong to the model (no player column, one player, a
 * difficulty the model does not know, another attribute) are issues; every
 * number in the report is finite or null.
 *
 * Cost: about five binomial fits over the live groups (band offsets,
 * residual latency, calibration in the large, calibration slope, the
 * refit), each a few IRLS passes, and a few passes more.
 *
 * @example
 *   const read = await readGroupedTrialsFile('live.csv');
 *   const report = checkField(read.value, model.value, { margin: 0.02, rules: rules.value });
 *   if (report.ok) report.value.verdict; // 'holds', 'under_compensates', ...
 */
import { type Issue, type Result, error, fail, ok, show, warning } from '../issues.js';
import type { Trials } from '../formats/trials-types.js';
import { groupTrials } from '../model/collapse.js';
import type { GroupedTrials } from '../model/collapsed-trials.js';
import type { CompiledModel } from '../model/compile.js';
import type { CompiledRules } from '../solver/rules.js';
import { bandFigures, type BandFigures } from './band-figures.js';
import { type BandRates, bandRates } from './band-rates.js';
import { CALIBRATION_JOBS, type CalibrationFit, type CalibrationInputs, calibrationInputsOf, runCalibrationFit } from './calibration-fits.js';
import { dataFactor } from './data-needed.js';
import { gapVerdict } from './equivalence-verdict.js';
import { refitCommands, type RefitCommandInputs } from './refit-commands.js';
import { compensationMessage, calibrationReason, summaryLines } from './field-summary.js';
import {
  type CalibrationCheck,
  type CompensationCheck,
  type FieldBand,
  type FieldCheckReport,
  type FieldRecommendation,
  type FieldVerdict,
  FIELD_CHECK_FORMAT,
} from './field-types.js';
import { DEFAULT_BAND_CUTS, type LatencyBand, bandOf, checkBandCuts, latencyBands, withCut } from './latency-bands.js';
import { type LiveRows, MAX_STANDARD_DIFFICULTIES, joinLiveRows, rangeWarnings, totalOf } from './live-rows.js';
import { residualLatencyTrend } from './residual-latency.js';
import { twoOneSidedTests } from './two-one-sided-tests.js';
import { extent } from '../stats/extent.js';

/** The default margin: 2 percentage points of hit probability. */
export const DEFAULT_FIELD_MARGIN = 0.02;

/** Players below which cluster-robust errors are flagged as biased low (Cameron and Miller 2015, as the fit). */
const FEW_PLAYERS = 40;
/** A compared band with fewer players than this gets a warning: its rate rests on few clusters. */
const FEW_BAND_PLAYERS = 10;

export const FIELD_CAUTION =
  'Compensation changes competitive outcomes. A "holds" verdict is about the live data seen (the players and rounds this report names), at the margin chosen: it is not a guarantee for any match or player, and it does not rule on anything. The league\'s own rules and officials decide whether and how compensation is used.';

export interface FieldCheckOptions {
  /** Largest gap in hit probability, either way, that still counts as equal play (default 0.02). */
  readonly margin?: number;
  /** Level of each one-sided test (default 0.05: a 90% interval). */
  readonly alpha?: number;
  /** Latency band cut points in ms (default {@link DEFAULT_BAND_CUTS}). */
  readonly bands?: readonly number[];
  /** The rules the scales were computed under: the target kind, the latency limit, the floor and cap. */
  readonly rules?: CompiledRules | null;
  /** What the live scales multiplied; checked against the model's `attribute`. */
  readonly attribute?: 'hit_area' | 'timing_window';
  /** The model file's name, for the report and its issues. */
  readonly modelFile?: string;
  /** SHA-256 of the telemetry file, for the report. */
  readonly sha256?: string;
  /** Paths for the refit commands (the CLI knows them); without, no commands. */
  readonly commands?: RefitCommandInputs;
}

/** Check live telemetry against the model its scales came from. See the module comment. */
export function checkField(input: GroupedTrials | Trials, model: CompiledModel, options: FieldCheckOptions = {}): Result<FieldCheckReport> {
  const stage = beginFieldCheck(input, model, options);
  if (!stage.ok) return stage;
  const rates = stage.value.bandRates();
  return stage.value.finish(rates, CALIBRATION_JOBS.map((job) => runCalibrationFit(stage.value.calibration, job)));
}

/** A field check up to its fits: the band fit (run by `bandRates`), the calibration fits as jobs, and `finish` from their results. */
export interface FieldCheckStage {
  /** The band fit, on the calling thread (its result holds functions). */
  bandRates(): BandRates;
  /** What the calibration fits share (plain data; run each of CALIBRATION_JOBS on it). */
  readonly calibration: CalibrationInputs;
  /** The report from the band fit and the calibration fits (`fits[i]` of CALIBRATION_JOBS[i]). */
  finish(rates: BandRates, fits: readonly CalibrationFit[]): Result<FieldCheckReport>;
}

/**
 * Everything of {@link checkField} but its fits, which it returns as work
 * for the caller: `check-field-threads.ts` runs the calibration fits on
 * worker threads while the calling thread runs the band fit.
 */
export function beginFieldCheck(input: GroupedTrials | Trials, model: CompiledModel, options: FieldCheckOptions = {}): Result<FieldCheckStage> {
  const trials = 'groups' in input ? input : groupTrials(input);
  const settings = checkOptions(options);
  if (!settings.ok) return settings;
  const { margin, alpha, cuts } = settings.value;
  const rules = options.rules ?? null;
  const modelFile = options.modelFile ?? 'model';
  const issues = attributeIssues(model, options.attribute, modelFile);
  if (issues.some((issue) => issue.severity === 'error')) return fail(issues);
  const joined = joinLiveRows(trials, model);
  if (!joined.ok) return joined;
  const live = joined.value;
  const { data } = live;
  const warnings: Issue[] = [...issues, ...rangeWarnings(trials, model, rules)];

  const limit = rules?.latency_limit_ms ?? null;
  const bandCuts = withCut(cuts, limit);
  const bands = latencyBands(bandCuts);
  const band = new Int32Array(data.rows);
  for (let i = 0; i < data.rows; i += 1) band[i] = bandOf(data.latency[i] as number, bandCuts);
  const calibrationInputs = calibrationInputsOf(live, model, trials.shape);
  const { rows } = calibrationInputs;
  const figures = bandFigures(data, band, bands.length, live, model);
  const eligible = bands.map((entry) => limit === null || entry.lowerMs < limit);

  // The reference and the worst-connected band: among eligible bands with rows, those with enough
  // players for a trustworthy interval (all of them when none has).
  const target = rules?.target ?? { kind: 'best_connected' as const };
  // A band of one player has no cluster-robust interval (its own coefficient absorbs its one cluster).
  const withRows = bands.filter((entry) => eligible[entry.index] && (figures[entry.index] as BandFigures).weight > 0 && (figures[entry.index] as BandFigures).players >= 2).map((entry) => entry.index);
  const enough = withRows.filter((index) => (figures[index] as BandFigures).players >= FEW_BAND_PLAYERS);
  const comparable = enough.length >= 2 ? enough : withRows;
  const worst = comparable.length > 0 ? (comparable[comparable.length - 1] as number) : null;
  let referenceBand: number | null = comparable[0] ?? null;
  if (target.kind === 'reference_latency') {
    const wanted = bandOf(target.latency_ms, bandCuts);
    if (withRows.includes(wanted)) referenceBand = wanted;
    else warnings.push(warning('reference_band_empty', `${trials.file}:latency_ms`, `the rules' reference latency ${target.latency_ms} ms requires rows in its band ${(bands[wanted] as LatencyBand).label}, got none; the best-connected band with rows is the reference instead`));
  }
  const reference = target.kind === 'fixed' ? { probability: target.probability } : { band: referenceBand ?? 0 };
  const finish = (rates: BandRates, fits: readonly CalibrationFit[]): Result<FieldCheckReport> => {
    if (live.byDifficulty === null) {
      warnings.push(warning('difficulty_not_standardised', `${trials.file}:difficulty`, `comparing bands at one difficulty mix requires at most ${MAX_STANDARD_DIFFICULTIES} distinct difficulties, got more; bands are compared as played`));
    }
    warnings.push(...bandWarnings(trials.file, bands, figures, rates, eligible, [referenceBand, worst]));
    for (const entry of bands) {
      const index = entry.index;
      if (!eligible[index] || (figures[index] as BandFigures).rows === 0 || comparable.includes(index) || (figures[index] as BandFigures).players >= FEW_BAND_PLAYERS) continue;
      warnings.push(warning('band_not_compared', `${trials.file}:player`, `comparing the band ${(bands[index] as LatencyBand).label} requires at least ${FEW_BAND_PLAYERS} players, got ${(figures[index] as BandFigures).players}; the verdict compares the bands with enough players (it is still in the table)`));
    }

    const players = live.players.length;
    if (players < FEW_PLAYERS) {
      warnings.push(warning('few_clusters', `${trials.file}:player`, `cluster-robust intervals require at least ${FEW_PLAYERS} players to be trusted, got ${players}; with few clusters CR1 errors are biased low (Cameron and Miller 2015)`));
    }
    const compensatedPlayers = countOnes(live.compensatedPlayer);
    const compensation = compensationCheck({ trials, live, bands, figures, rates, reference, referenceBand, worst, margin, alpha, compensatedPlayers });
    const calibration = calibrationCheck(fits, model, alpha, options.commands ?? null);
    if (calibration.likelihood_ratio.status === 'not_tested' && calibration.in_the_large === null) {
      warnings.push(warning('calibration_not_tested', trials.file, `the calibration checks require fits on the live rows, got none: ${calibration.likelihood_ratio.reason}`));
    }
    const bandRows = bands.map((entry): FieldBand => bandRow(entry, figures[entry.index] as BandFigures, rates, trials.shape, eligible[entry.index] as boolean, margin, alpha, 'band' in reference && entry.index === reference.band));
    const verdict = compensation.verdict;
    const recommendation = calibration.recommendation;
    const passed = verdict === 'holds' && recommendation === 'keep' && calibration.likelihood_ratio.status === 'tested';

    const attempts = totalOf(data.attempts);
    const controlAttempts = attemptsWhere(data.attempts, data.player as Int32Array, live.compensatedPlayer, 0);
    const report: FieldCheckReport = {
      format: FIELD_CHECK_FORMAT,
      verdict,
      recommendation,
      passed,
      summary: [],
      data: {
        file: trials.file,
        sha256: options.sha256 ?? null,
        shape: trials.shape,
        rows: data.sourceRows,
        attempts,
        players,
        control: { players: players - compensatedPlayers, attempts: controlAttempts },
        compensated: { players: compensatedPlayers, attempts: attempts - controlAttempts },
        latency_ms: extent(data.latency),
        scale: extent(data.scale),
      },
      model: {
        file: options.modelFile ?? null,
        label: model.source.label ?? null,
        attribute: model.source.attribute ?? null,
        link: model.link.name,
        terms: [...model.source.terms],
        training_latency_ms: { ...model.training.latency_ms },
        training_scale: { ...model.training.scale },
        provenance_file: model.source.provenance.file,
      },
      settings: {
        margin,
        alpha,
        band_cuts_ms: [...bandCuts],
        target: target.kind === 'best_connected' ? { kind: 'best_connected' } : target.kind === 'fixed' ? { kind: 'fixed', probability: target.probability } : { kind: 'reference_latency', latency_ms: target.latency_ms },
        latency_limit_ms: limit,
        attribute: options.attribute ?? null,
      },
      bands: bandRows,
      compensation,
      calibration,
      warnings: warnings.map((issue) => ({ ...issue })),
      caution: FIELD_CAUTION,
    };
    return ok({ ...report, summary: summaryLines(report) }, warnings);
  };
  return ok({
    bandRates: () => bandRates(rows, live.offset, band, bands.length, reference, live.byDifficulty, (b) => (figures[b] as BandFigures).players),
    calibration: calibrationInputs,
    finish,
  });
}

function checkOptions(options: FieldCheckOptions): Result<{ margin: number; alpha: number; cuts: readonly number[] }> {
  const issues: Issue[] = [];
  const margin = options.margin ?? DEFAULT_FIELD_MARGIN;
  if (!(margin > 0 && margin < 0.5)) issues.push(error('invalid_option', 'margin', `\`margin\` requires a hit-probability gap above 0 and below 0.5, got ${show(margin)}`));
  const alpha = options.alpha ?? 0.05;
  if (!(alpha > 0 && alpha < 0.5)) issues.push(error('invalid_option', 'alpha', `\`alpha\` requires a level above 0 and below 0.5, got ${show(alpha)}`));
  const cuts = checkBandCuts(options.bands ?? DEFAULT_BAND_CUTS, 'bands');
  if (!cuts.ok) issues.push(...cuts.issues);
  return issues.length > 0 || !cuts.ok ? fail(issues) : ok({ margin, alpha, cuts: cuts.value });
}

/** The live attribute against the model's: a mismatch is an error, an unknown model attribute a warning. */
function attributeIssues(model: CompiledModel, attribute: FieldCheckOptions['attribute'], modelFile: string): Issue[] {
  if (attribute === undefined) return [];
  if (attribute !== 'hit_area' && attribute !== 'timing_window') {
    return [error('invalid_option', 'attribute', `\`attribute\` requires hit_area or timing_window, got ${show(attribute)}`)];
  }
  const fitted = model.source.attribute;
  if (fitted === undefined) {
    return [warning('attribute_unknown', `${modelFile}:attribute`, `checking the live attribute ${show(attribute)} requires the model's \`attribute\`, got none (write it with \`lagparity fit --attribute\`); assuming the model scaled the same`)];
  }
  if (fitted !== attribute) {
    return [error('attribute_mismatch', `${modelFile}:attribute`, `live telemetry that scaled ${show(attribute)} requires a model fitted on the same attribute, got a model of ${show(fitted)}`)];
  }
  return [];
}

interface CompensationInputs {
  readonly trials: GroupedTrials;
  readonly live: LiveRows;
  readonly bands: readonly LatencyBand[];
  readonly figures: readonly BandFigures[];
  readonly rates: BandRates;
  readonly reference: { readonly band: number } | { readonly probability: number };
  readonly referenceBand: number | null;
  readonly worst: number | null;
  readonly margin: number;
  readonly alpha: number;
  readonly compensatedPlayers: number;
}

function compensationCheck(inputs: CompensationInputs): CompensationCheck {
  const { trials, live, rates, reference, worst, margin, alpha } = inputs;
  const referenceBand = 'band' in reference ? inputs.referenceBand : null;
  const base = {
    reference_band: referenceBand,
    worst_band: worst,
    residual_latency_per_100ms: residualLatencyTrend(rates.departures, (b) => inputs.figures[b]?.meanLatency ?? null, (b) => inputs.figures[b]?.players ?? 0),
  };
  const predictedOf = (b: number | null) => (b === null ? null : (rates.predictedAtMix[b] ?? null));
  const predictedWorst = predictedOf(worst);
  const predictedReference = 'probability' in reference ? reference.probability : predictedOf(referenceBand);
  const predictedGap = predictedWorst === null || predictedReference === null ? null : predictedWorst - predictedReference;
  const gap = worst === null ? null : rates.gapOf(worst);
  const nothing = inputs.compensatedPlayers === 0;
  const sameBand = 'band' in reference && worst !== null && worst === referenceBand;
  if (gap === null || sameBand || !(gap.standardError > 0) || !Number.isFinite(gap.standardError)) {
    const verdict: FieldVerdict = nothing ? 'nothing_compensated' : 'not_enough_data';
    const why = sameBand
      ? 'only one latency band has rows, so there is no gap between bands to judge'
      : rates.failure !== null
        ? `the band fit gave no estimate (${rates.failure})`
        : 'the compared bands have no rows, or only hits or only misses';
    const check = { ...base, verdict, gap: null, predicted_gap: predictedGap, tost: null, data_needed: null };
    return { ...check, message: compensationMessage(check, inputs.bands, margin, why) };
  }
  const margins = { lower: -margin, upper: margin };
  const tests = twoOneSidedTests(gap.estimate, gap.standardError, margins, alpha);
  const judged = gapVerdict(tests, margins);
  const verdict: FieldVerdict = nothing ? 'nothing_compensated' : judged;
  const factor = judged === 'not_enough_data' ? dataFactor(gap.estimate, gap.standardError, margin, alpha) : null;
  const rowsSeen = trials.shape === 'per_round' ? live.data.sourceRows : totalOf(live.data.attempts);
  const check = {
    ...base,
    verdict,
    gap: { estimate: gap.estimate, std_error: gap.standardError, lower: tests.interval.lower, upper: tests.interval.upper, level: tests.interval.level },
    predicted_gap: predictedGap,
    tost: { lower_margin: -margin, upper_margin: margin, z_lower: tests.zLower, p_lower: tests.pLower, z_upper: tests.zUpper, p_upper: tests.pUpper, p: tests.p },
    data_needed:
      factor === null
        ? null
        : {
            factor: factor.factor,
            players: Math.ceil(factor.factor * live.players.length),
            rows: Math.ceil(factor.factor * rowsSeen),
            rows_are: trials.shape === 'per_round' ? ('rounds' as const) : ('attempts' as const),
            power: 0.8,
            to_show: factor.toShow,
          },
  };
  return { ...check, message: compensationMessage(check, inputs.bands, margin, null) };
}

function calibrationCheck(fits: readonly CalibrationFit[], model: CompiledModel, alpha: number, commandInputs: RefitCommandInputs | null): CalibrationCheck {
  const figure = (job: 'slope' | 'in_the_large') => {
    const fit = fits.find((entry) => entry.job === job);
    return fit !== undefined && 'figure' in fit ? fit.figure : { ok: false as const, reason: `the ${job} fit did not run` };
  };
  const inTheLarge = figure('in_the_large');
  const slope = figure('slope');
  const refitFit = fits.find((entry) => entry.job === 'refit');
  if (refitFit === undefined || !('refit' in refitFit)) throw new Error('field check: the refit job gave no result');
  const refit = refitFit.refit;
  const test = refit.test;
  let recommendation: FieldRecommendation = 'keep';
  if (test.status === 'tested') {
    recommendation = (test.adjusted?.p_value ?? test.p_value) < alpha ? 'refit' : 'keep';
  } else {
    // Without the refit, the two calibration intervals decide.
    const offLarge = inTheLarge.ok && (inTheLarge.value.lower > 0 || inTheLarge.value.upper < 0);
    const offSlope = slope.ok && (slope.value.lower > 1 || slope.value.upper < 1);
    recommendation = offLarge || offSlope ? 'refit' : 'keep';
  }
  const check = {
    in_the_large: inTheLarge.ok ? inTheLarge.value : null,
    slope: slope.ok ? slope.value : null,
    likelihood_ratio: test,
    coefficients: refit.coefficients,
    recommendation,
    commands: commandInputs === null ? null : refitCommands(commandInputs, model),
  };
  return { ...check, reason: calibrationReason(check, alpha) };
}

function bandRow(entry: LatencyBand, figures: BandFigures, rates: BandRates, shape: GroupedTrials['shape'], eligible: boolean, margin: number, alpha: number, isReference: boolean): FieldBand {
  const rate = rates.rates[entry.index];
  // One player's band has no cluster-robust interval (see `withRows`).
  const single = figures.players < 2;
  const gap = isReference || single ? null : rates.gapOf(entry.index);
  let interval: FieldBand['gap'] = null;
  if (gap !== null) {
    const spread = gap.standardError > 0 ? twoOneSidedTests(gap.estimate, gap.standardError, { lower: -margin, upper: margin }, alpha).interval : { lower: gap.estimate, upper: gap.estimate };
    interval = { estimate: gap.estimate, lower: spread.lower, upper: spread.upper };
  }
  return {
    index: entry.index,
    label: entry.label,
    lower_ms: entry.lowerMs,
    upper_ms: entry.upperMs,
    eligible,
    rounds: shape === 'per_round' ? figures.rows : null,
    attempts: figures.attempts,
    players: figures.players,
    control_players: figures.controlPlayers,
    mean_scale: figures.meanScale,
    predicted_before: figures.predictedBefore,
    predicted: figures.predicted,
    predicted_lower: figures.predictedLower,
    predicted_upper: figures.predictedUpper,
    observed: rate?.observed ?? null,
    observed_lower: single ? null : (rate?.lower ?? null),
    observed_upper: single ? null : (rate?.upper ?? null),
    gap: interval,
  };
}

/** Empty bands, bands with only hits or misses, and compared bands with few players. */
function bandWarnings(file: string, bands: readonly LatencyBand[], figures: readonly BandFigures[], rates: BandRates, eligible: readonly boolean[], compared: readonly (number | null)[]): Issue[] {
  const warnings: Issue[] = [];
  const empty = bands.filter((entry) => (figures[entry.index] as BandFigures).rows === 0).map((entry) => entry.label);
  if (empty.length > 0) {
    warnings.push(warning('empty_band', `${file}:latency_ms`, `a rate for every latency band requires rows in it, got none in ${empty.join(', ')}; ${empty.length === 1 ? 'it is' : 'they are'} left out`));
  }
  for (const entry of bands) {
    const figure = figures[entry.index] as BandFigures;
    if (figure.rows === 0) continue;
    if (!(rates.rates[entry.index]?.fitted ?? false) && rates.failure === null && figure.players >= 2) {
      warnings.push(warning('band_at_boundary', `${file}:latency_ms`, `an interval for the band ${entry.label} requires both hits and misses, got ${figure.hits} hits of ${figure.weight} attempts; it has no interval`));
    }
    if (compared.includes(entry.index) && eligible[entry.index] && figure.players < FEW_BAND_PLAYERS) {
      warnings.push(warning('few_band_players', `${file}:player`, `the compared band ${entry.label} requires at least ${FEW_BAND_PLAYERS} players for its interval to be trusted, got ${figure.players}`));
    }
  }
  return warnings;
}

function countOnes(values: Uint8Array): number {
  let count = 0;
  for (let i = 0; i < values.length; i += 1) count += values[i] as number;
  return count;
}

/** Attempts of rows whose player's flag equals `flag`. */
function attemptsWhere(attempts: Float64Array, player: Int32Array, flags: Uint8Array, flag: number): number {
  let total = 0;
  for (let i = 0; i < attempts.length; i += 1) if (flags[player[i] as number] === flag) total += attempts[i] as number;
  return total;
}
