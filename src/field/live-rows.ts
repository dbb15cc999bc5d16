/**
 * Live telemetry (grouped as a fit groups it) joined to the model it was
 * compensated with: the difficulty recoded to the model's coding, and per
 * row the model's hit probability at the scale applied and at scale 1, and
 * the logit of the former (the offset of every field fit). The problems that
 * make the two not belong together are issues naming the file and column.
 */
import { type Issue, type Result, error, fail, ok, show, warning } from '../issues.js';
import type { CollapsedTrials, GroupedTrials } from '../model/collapsed-trials.js';
import type { CompiledModel, PredictorLine } from '../model/compile.js';
import { scaleTermValue } from '../model/terms.js';

export interface LiveRows {
  /** The groups, their difficulty as the model codes it (the index of its level, or the number). */
  readonly data: CollapsedTrials;
  readonly players: readonly string[];
  /** The model's hit probability at each row's applied scale (computed when first read). */
  readonly predicted: Float64Array;
  /** At scale 1 (what the row would have been without compensation; computed when first read). */
  readonly predictedBefore: Float64Array;
  /** The model's linear predictor at the applied scale. */
  readonly linearPredictor: Float64Array;
  /** logit(predicted): the offset of the field fits (the linear predictor itself for a logit model). */
  readonly offset: Float64Array;
  /** Whether each player ever had a scale above 1 (false: the control). */
  readonly compensatedPlayer: Uint8Array;
  /**
   * For comparing bands at one difficulty mix: each difficulty of the file with its share of the
   * (weighted) attempts, and every row's offset as if played at it; null when the file has more
   * than {@link MAX_STANDARD_DIFFICULTIES} numeric difficulties. Computed when first read.
   */
  readonly byDifficulty: { readonly shares: Float64Array; readonly offsets: readonly Float64Array[] } | null;
}

/** The most distinct numeric difficulties bands are standardised over. */
export const MAX_STANDARD_DIFFICULTIES = 16;

/**
 * Join grouped live trials to a compiled model. Fails when the file has no
 * player column or fewer than two players, or a difficulty the model does
 * not know; the result carries no warnings (see {@link rangeWarnings}).
 */
export function joinLiveRows(trials: GroupedTrials, model: CompiledModel): Result<LiveRows> {
  const { file, groups } = trials;
  if (trials.players === null || groups.player === null) {
    return fail([error('missing_column', `${file}:player`, 'the field check requires a `player` column (its intervals are cluster-robust by player), got none')]);
  }
  const players = trials.players;
  if (players.length < 2) {
    return fail([error('too_few_players', `${file}:player`, `the field check requires at least 2 players for cluster-robust intervals, got ${players.length} (${show(players[0] ?? '')})`)]);
  }
  const recoded = recodeDifficulty(trials, model);
  if (!recoded.ok) return recoded;
  const data: CollapsedTrials = { ...groups, difficulty: recoded.value };
  const lines = linesOf(model, data);
  if (!lines.ok) return lines;
  const { line, lineOf } = lines.value;
  const n = data.rows;
  const linearPredictor = new Float64Array(n);
  const link = model.link;
  const atOne = scaleTermValue(model.scaleForm, 1);
  // The scale as it enters the model (a logarithm per row), once for every use below.
  const scaleTerm = new Float64Array(n);
  for (let i = 0; i < n; i += 1) scaleTerm[i] = scaleTermValue(model.scaleForm, data.scale[i] as number);
  const { base, basePerMs, scaleSlope, scaleSlopePerMs } = line;
  for (let i = 0; i < n; i += 1) {
    const at = lineOf[i] as number;
    const latency = data.latency[i] as number;
    linearPredictor[i] = (base[at] as number) + (basePerMs[at] as number) * latency + ((scaleSlope[at] as number) + (scaleSlopePerMs[at] as number) * latency) * (scaleTerm[i] as number);
  }
  // The predictions at the applied scale and at scale 1, for the bands' figures: a thread that runs
  // only calibration fits never reads them.
  let predictions: { readonly predicted: Float64Array; readonly before: Float64Array } | undefined;
  const predict = () => {
    const predicted = new Float64Array(n);
    const before = new Float64Array(n);
    for (let i = 0; i < n; i += 1) {
      const at = lineOf[i] as number;
      const latency = data.latency[i] as number;
      const intercept = (base[at] as number) + (basePerMs[at] as number) * latency;
      const slope = (scaleSlope[at] as number) + (scaleSlopePerMs[at] as number) * latency;
      predicted[i] = link.inverse(intercept + slope * (scaleTerm[i] as number));
      before[i] = link.inverse(intercept + slope * atOne);
    }
    return { predicted, before };
  };
  // For a logit model the offset is the linear predictor itself (neither is written after this).
  let offset = linearPredictor;
  if (link.name !== 'logit') {
    offset = new Float64Array(n);
    for (let i = 0; i < n; i += 1) offset[i] = logitOfPrediction(model, linearPredictor[i] as number);
  }
  const compensatedPlayer = new Uint8Array(players.length);
  const codes = groups.player;
  for (let i = 0; i < n; i += 1) if ((data.scale[i] as number) > 1) compensatedPlayer[codes[i] as number] = 1;
  // The mix's offsets (a pass per difficulty) only when the bands are compared: a thread that
  // runs only calibration fits never reads them.
  let byDifficulty: LiveRows['byDifficulty'] | undefined;
  return ok({
    data,
    players,
    get predicted() {
      return (predictions ??= predict()).predicted;
    },
    get predictedBefore() {
      return (predictions ??= predict()).before;
    },
    linearPredictor,
    offset,
    compensatedPlayer,
    get byDifficulty() {
      return (byDifficulty ??= offsetsByDifficulty(data, model, scaleTerm, lines.value));
    },
  });
}

/**
 * The file's difficulties (as the model codes them) with their shares of the weighted attempts,
 * and each row's offset (logit of the model's prediction) at its latency and scale as if played at
 * each of them.
 */
function offsetsByDifficulty(data: CollapsedTrials, model: CompiledModel, scaleTerm: Float64Array, lines: RowLines): LiveRows['byDifficulty'] {
  // The rows' difficulties are the lines' keys, one line per distinct difficulty.
  if (lines.keys.length > MAX_STANDARD_DIFFICULTIES) return null;
  const weights = new Float64Array(lines.keys.length);
  let total = 0;
  for (let i = 0; i < data.rows; i += 1) {
    const weight = (data.weight[i] as number) * (data.attempts[i] as number);
    const at = lines.lineOf[i] as number;
    weights[at] = (weights[at] as number) + weight;
    total += weight;
  }
  const order = lines.keys.map((key, at) => ({ key, at })).sort((a, b) => a.key - b.key);
  const offsets = order.map(({ at }) => {
    const values = new Float64Array(data.rows);
    const { base, basePerMs, scaleSlope, scaleSlopePerMs } = lines.line;
    const a0 = base[at] as number;
    const a1 = basePerMs[at] as number;
    const b0 = scaleSlope[at] as number;
    const b1 = scaleSlopePerMs[at] as number;
    for (let i = 0; i < data.rows; i += 1) {
      const latency = data.latency[i] as number;
      values[i] = a0 + a1 * latency + (b0 + b1 * latency) * (scaleTerm[i] as number);
    }
    if (model.link.name !== 'logit') for (let i = 0; i < data.rows; i += 1) values[i] = logitOfPrediction(model, values[i] as number);
    return values;
  });
  return { shares: Float64Array.from(order, ({ at }) => (total > 0 ? (weights[at] as number) / total : 0)), offsets };
}

/** logit of the model's prediction at a linear predictor (the predictor itself for a logit model). */
function logitOfPrediction(model: CompiledModel, eta: number): number {
  const link = model.link;
  return link.name === 'logit' ? eta : Math.log(link.inverse(eta)) - Math.log(link.inverseComplement(eta));
}

/** The difficulty column as the model codes it: level indices of the model's levels, or numbers. */
function recodeDifficulty(trials: GroupedTrials, model: CompiledModel): Result<Float64Array> {
  const coding = model.difficulty;
  const values = trials.groups.difficulty;
  const where = `${trials.file}:difficulty`;
  if (coding.kind === 'numeric') {
    if (trials.difficulty.kind === 'levels') {
      return fail([error('wrong_difficulty', where, `the model requires numeric difficulties, got levels ${trials.difficulty.levels.slice(0, 5).map((level) => show(level)).join(', ')}`)]);
    }
    return ok(values);
  }
  // Named levels, or numbers whose text names a level ("1", "2").
  const names = trials.difficulty.kind === 'levels' ? trials.difficulty.levels : null;
  const nameOf = (value: number) => (names === null ? String(value) : (names[value] as string));
  // The model's index of each distinct value, looked up once.
  const indexOf = new Map<number, number>();
  const recoded = new Float64Array(values.length);
  const unknown = new Map<string, number>();
  for (let i = 0; i < values.length; i += 1) {
    const value = values[i] as number;
    let index = indexOf.get(value);
    if (index === undefined) {
      index = coding.levels.indexOf(nameOf(value));
      indexOf.set(value, index);
    }
    if (index < 0) unknown.set(nameOf(value), (unknown.get(nameOf(value)) ?? 0) + (trials.groups.attempts[i] as number));
    recoded[i] = index;
  }
  if (unknown.size > 0) {
    const listed = [...unknown].slice(0, 5).map(([name, attempts]) => `${show(name)} (${attempts} attempts)`).join(', ');
    return fail([error('wrong_difficulty', where, `the model requires difficulty levels among ${coding.levels.map((level) => show(level)).join(', ')}, got ${listed}`)]);
  }
  return ok(recoded);
}

/** The predictor lines of the rows' distinct difficulties (keys, first met first) as columns, and each row's line. */
interface RowLines {
  readonly keys: number[];
  readonly line: { readonly base: Float64Array; readonly basePerMs: Float64Array; readonly scaleSlope: Float64Array; readonly scaleSlopePerMs: Float64Array };
  readonly lineOf: Int32Array;
}

/** The predictor line of each row, computed once per level (or per distinct numeric difficulty). */
function linesOf(model: CompiledModel, data: CollapsedTrials): Result<RowLines> {
  const coding = model.difficulty;
  const found = new Map<number, number>();
  const keys: number[] = [];
  const lines: PredictorLine[] = [];
  const lineOf = new Int32Array(data.rows);
  let lastKey = Number.NaN;
  let lastAt = -1;
  for (let i = 0; i < data.rows; i += 1) {
    const key = data.difficulty[i] as number;
    if (key === lastKey) {
      lineOf[i] = lastAt;
      continue;
    }
    let at = found.get(key);
    if (at === undefined) {
      const line = model.lineAt(coding.kind === 'levels' ? (coding.levels[key] as string) : key);
      if (!line.ok) return fail(line.issues);
      at = lines.length;
      found.set(key, at);
      keys.push(key);
      lines.push(line.value);
    }
    lineOf[i] = at;
    lastKey = key;
    lastAt = at;
  }
  const column = (pick: (line: PredictorLine) => number) => Float64Array.from(lines, pick);
  return ok({
    keys,
    line: { base: column((line) => line.base), basePerMs: column((line) => line.basePerMs), scaleSlope: column((line) => line.scaleSlope), scaleSlopePerMs: column((line) => line.scaleSlopePerMs) },
    lineOf,
  });
}

/**
 * Warnings on the live data against the model and the rules: latencies or
 * scales outside the model's training ranges (extrapolation, as the solver
 * warns), scales below the rules' floor or above their cap.
 */
export function rangeWarnings(trials: GroupedTrials, model: CompiledModel, rules: { readonly scale_floor: number; readonly scale_cap: number } | null): Issue[] {
  const { file, groups } = trials;
  const warnings: Issue[] = [];
  const training = model.training;
  const outside = (values: Float64Array, low: number, high: number) => {
    let attempts = 0;
    let min = Infinity;
    let max = -Infinity;
    for (let i = 0; i < groups.rows; i += 1) {
      const value = values[i] as number;
      if (value < low - 1e-12 || value > high + 1e-12) {
        attempts += groups.attempts[i] as number;
        if (value < min) min = value;
        if (value > max) max = value;
      }
    }
    return { attempts, min, max };
  };
  const total = totalOf(groups.attempts);
  const share = (attempts: number) => `${((100 * attempts) / total).toFixed(1)}% of attempts`;
  for (const [column, values, range, unit] of [
    ['latency_ms', groups.latency, training.latency_ms, ' ms'],
    ['scale', groups.scale, training.scale, ''],
  ] as const) {
    const found = outside(values, range.min, range.max);
    if (found.attempts === 0) continue;
    const name = column === 'latency_ms' ? 'latencies' : 'scales';
    warnings.push(
      warning(
        'outside_training_range',
        `${file}:${column}`,
        `the model's predictions require ${name} within its training range ${range.min}-${range.max}${unit}, got ${found.min}-${found.max}${unit} outside it in ${share(found.attempts)}: the prediction there is an extrapolation`,
      ),
    );
  }
  if (rules !== null) {
    const below = outside(groups.scale, rules.scale_floor, Infinity);
    if (below.attempts > 0) {
      warnings.push(warning('scale_below_floor', `${file}:scale`, `\`scale\` requires at least the rules' \`scale_floor\` ${rules.scale_floor}, got ${below.min} (the smallest; ${share(below.attempts)} below the floor)`));
    }
    const above = outside(groups.scale, -Infinity, rules.scale_cap);
    if (above.attempts > 0) {
      warnings.push(warning('scale_above_cap', `${file}:scale`, `\`scale\` requires at most the rules' \`scale_cap\` ${rules.scale_cap}, got ${above.max} (the largest; ${share(above.attempts)} above the cap)`));
    }
  }
  return warnings;
}

/** The sum of a column. */
export function totalOf(values: Float64Array): number {
  let total = 0;
  for (let i = 0; i < values.length; i += 1) total += values[i] as number;
  return total;
}
