/**
 * One lobby from players to scales, without the report around it: the
 * latency estimate of each player, eligibility, the curves, the target and
 * the scale solution. `balanceLobby` builds its result from this; the
 * exploit and uncertainty views call it again with changed samples or
 * coefficients.
 */
import { type Issue, type Result, error, fail, ok, show } from '../issues.js';
import type { LobbyFile } from '../formats/lobby-types.js';
import type { CompiledModel, PredictorLine } from '../model/compile.js';
import { quantileSelect } from '../stats/quantile-select.js';
import type { CompiledRules } from './rules.js';
import type { CurveSet } from './player-curve.js';
import { type ScaleForm, type ScaleSolution, expectedBefore, solveScales, termOf } from './solve-scales.js';
import { SolveWorkspace } from './workspace.js';

/** Per-player arrays are indexed as documented and may be longer than the lobby (they live in a `SolveWorkspace`). */
export interface LobbySolve {
  readonly line: PredictorLine;
  /** Per lobby player: the latency the rules' estimator takes (for `all_samples`: the mean). */
  readonly estimates: Float64Array;
  /** Per lobby player: their slot among the eligible players, or -1. */
  readonly slots: Int32Array;
  /** Per eligible slot: the lobby player's index. */
  readonly eligible: Int32Array;
  readonly curves: CurveSet;
  readonly solution: ScaleSolution;
}

/** Scratch for the estimator's selection, grown to the longest sample list seen. */
let selectionScratch = new Float64Array(64);

/** The latency the estimator takes from one value or from samples (type 7 quantiles by selection, quantile-select.ts). */
export function latencyEstimate(latency: number | readonly number[], rules: CompiledRules): number {
  if (typeof latency === 'number') return latency;
  if (latency.length === 1) return latency[0] as number;
  const estimator = rules.latency_estimator;
  if (estimator === 'all_samples') {
    let sum = 0;
    for (const value of latency) sum += value;
    return sum / latency.length;
  }
  if (selectionScratch.length < latency.length) selectionScratch = new Float64Array(Math.max(latency.length, 2 * selectionScratch.length));
  return quantileSelect(latency, estimator === 'median' ? 0.5 : estimator.percentile / 100, selectionScratch);
}

/**
 * A player whose samples are replaced by the rules' robust estimate (median,
 * percentile) solves exactly as before: under such an estimator the solver
 * uses only the estimate. Views that solve the same lobby many times
 * (exploit, uncertainty) and rankLobbies take each estimate once this way
 * instead of selecting over the samples at every solve. Under `all_samples`
 * every sample counts and the player is returned as given.
 */
export function withEstimate<P extends LobbyFile['players'][number]>(player: P, rules: CompiledRules): P {
  if (rules.latency_estimator === 'all_samples' || typeof player.latency_ms === 'number') return player;
  return { ...player, latency_ms: latencyEstimate(player.latency_ms, rules) };
}

/**
 * An ineligible player's expected performance (at scale 1) as the rules'
 * estimator takes it: averaged over their samples for `all_samples`, at their
 * estimated latency for a robust estimator, as an eligible player's would be.
 */
export function ineligiblePrediction(model: CompiledModel, line: PredictorLine, latency: number | readonly number[], estimate: number, rules: CompiledRules): number {
  if (typeof latency === 'number' || rules.latency_estimator !== 'all_samples') return unscaledPrediction(model, line, estimate);
  let sum = 0;
  for (const value of latency) sum += unscaledPrediction(model, line, value);
  return sum / latency.length;
}

/** The prediction (hit probability) at one latency and scale 1 under a line. */
export function unscaledPrediction(model: CompiledModel, line: PredictorLine, latency: number): number {
  const term = termOf(model.scaleForm as ScaleForm, 1);
  return model.link.inverse(line.base + line.basePerMs * latency + (line.scaleSlope + line.scaleSlopePerMs * latency) * term);
}

/**
 * Solve a lobby at a predictor line, in `workspace` (a fresh one by default;
 * the result points into it). Pure. Returns issues when the model has
 * no scale term, no player is eligible, the model's hit probability does not
 * increase with the scale for some eligible player, or the rules contradict
 * themselves for this lobby.
 */
export function solveLobby(lobby: LobbyFile, model: CompiledModel, line: PredictorLine, rules: CompiledRules, workspace: SolveWorkspace = new SolveWorkspace()): Result<LobbySolve> {
  if (model.scaleForm === 'none') {
    return fail([error('no_scale_term', 'model.terms', 'compensation requires a model with a scale term (scale or log_scale), got none')]);
  }
  const form: ScaleForm = model.scaleForm;
  const players = lobby.players;
  const total = players.length;
  workspace.reserve(total, 0);
  const { estimates, slots } = workspace;
  const limit = rules.latency_limit_ms;
  const pooled = rules.latency_estimator === 'all_samples';
  let eligibleCount = 0;
  let sampleCount = 0;
  for (let index = 0; index < total; index += 1) {
    const latency = (players[index] as LobbyFile['players'][number]).latency_ms;
    const estimate = latencyEstimate(latency, rules);
    estimates[index] = estimate;
    if (limit === null || estimate <= limit) {
      slots[index] = eligibleCount;
      eligibleCount += 1;
      sampleCount += pooled && typeof latency !== 'number' ? latency.length : 1;
    } else slots[index] = -1;
  }
  if (eligibleCount === 0) {
    return fail([error('no_eligible_player', 'players', `a lobby requires at least one player within the latency limit (${String(limit)} ms), got none`)]);
  }
  workspace.reserve(total, sampleCount);
  const { eligible, offsets, alphas, betas } = workspace;
  offsets[0] = 0;
  const { base, basePerMs, scaleSlope, scaleSlopePerMs } = line;
  let position = 0;
  let issues: Issue[] | null = null;
  for (let index = 0; index < total; index += 1) {
    const slot = slots[index] as number;
    if (slot < 0) continue;
    eligible[slot] = index;
    const latency = (players[index] as LobbyFile['players'][number]).latency_ms;
    let slope: number;
    if (pooled && typeof latency !== 'number') {
      slope = Infinity;
      for (const value of latency) {
        alphas[position] = base + basePerMs * value;
        const beta = scaleSlope + scaleSlopePerMs * value;
        betas[position] = beta;
        if (!(beta >= slope)) slope = beta;
        position += 1;
      }
    } else {
      const value = estimates[index] as number;
      alphas[position] = base + basePerMs * value;
      slope = scaleSlope + scaleSlopePerMs * value;
      betas[position] = slope;
      position += 1;
    }
    offsets[slot + 1] = position;
    // E is increasing in the scale exactly when every sample's scale coefficient is positive.
    if (!(slope > 0)) {
      (issues ??= []).push(
        error('scale_not_increasing', `players[${index}]`, `compensation requires hit probability to increase with the scale, but under this model it does not for player ${show((players[index] as LobbyFile['players'][number]).id)} at ${(estimates[index] as number).toFixed(1)} ms (the scale term's coefficient there is ${slope.toPrecision(3)})`),
      );
    }
  }
  if (issues !== null) return fail(issues);
  const curves: CurveSet = { count: eligibleCount, offsets, alphas, betas };
  const before = expectedBefore(curves, model.link, form, workspace.before);
  const spec = rules.target;
  let target: number;
  if (spec.kind === 'fixed') target = spec.probability;
  else if (spec.kind === 'reference_latency') target = unscaledPrediction(model, line, spec.latency_ms);
  else {
    target = -Infinity;
    for (let slot = 0; slot < eligibleCount; slot += 1) if ((before[slot] as number) > target) target = before[slot] as number;
  }
  const idOf = (slot: number) => (players[eligible[slot] as number] as LobbyFile['players'][number]).id;
  const solved = solveScales({ curves, before, target, link: model.link, form, rules, idOf }, workspace);
  if (!solved.ok) return fail(solved.issues.map((issue) => relocate(issue, eligible)));
  return ok({ line, estimates, slots, eligible, curves, solution: solved.value });
}

/** An issue located at an eligible slot (`players[slot]`) moved to the lobby player's index. */
function relocate(issue: Issue, eligible: Int32Array): Issue {
  const match = /^players\[(\d+)\]$/.exec(issue.location);
  if (match === null) return issue;
  return { ...issue, location: `players[${eligible[Number(match[1])] as number}]` };
}
