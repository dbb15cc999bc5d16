/**
 * `solveScalesInto(model, difficulty, latencies, rules, out)`: the bulk path
 * for matchmakers with one latency value per player. It solves one lobby
 * (the whole `latencies` array) to the same answer as `balanceLobby`
 * (docs/method.md, section 3), writing only the scales into `out`: no
 * labels, no performances after, no summary, and no allocation per call
 * beyond what a larger lobby than any before needs.
 *
 * The players have no ids here, so the one tie-break the definition leaves to
 * ids (identical curves, a budget that pays a step for one of them only)
 * goes to the lower index. Ineligible players (latency above the limit) get
 * scale 1, as in `balanceLobby`.
 *
 * Cost: as `balanceLobby`'s solve: O(n) for the common case (one closed-form
 * inverse per player), more with a binding budget (see solve-scales.ts).
 *
 * Inputs are checked as `balanceLobby` checks them (entry-checks.ts): a
 * model or rules that did not come from compileModel / compileRules, and a
 * latency or sample that is not a number from 0 to 60,000 ms (NaN, an
 * infinity, a negative value), give `rejected` with issues; arrays that are
 * not Float64Arrays, or of mismatched lengths, throw (a programming error).
 * On `rejected` every entry of `out` is 1 (no compensation), never NaN or a
 * half-written answer.
 */
import { type Issue, error, show } from '../issues.js';
import { MAX_LATENCY_MS } from '../formats/limits.js';
import { compiledInputIssues } from './entry-checks.js';
import type { CompiledModel } from '../model/compile.js';
import type { CompiledRules } from './rules.js';
import { quantileSelect } from '../stats/quantile-select.js';
import type { CurveSet } from './player-curve.js';
import { expectedBefore, solveScales } from './solve-scales.js';
import { SolveWorkspace } from './workspace.js';

export type BulkSolveResult =
  | {
      readonly status: 'solved';
      readonly target: number;
      /** The common level (below the target only when the budget binds). */
      readonly level: number;
      readonly assistance: number;
      readonly eligible_players: number;
    }
  | { readonly status: 'rejected'; readonly issues: readonly Issue[] };

const bulkWorkspace = new SolveWorkspace();

function checkArray(value: unknown, name: string): void {
  if (!(value instanceof Float64Array)) throw new TypeError(`\`${name}\` requires a Float64Array, got ${show(value)}`);
}

/** A rejection: `out` holds 1 everywhere (no compensation), whatever the solve had written. */
function rejected(out: Float64Array, issues: readonly Issue[]): BulkSolveResult {
  out.fill(1);
  return { status: 'rejected', issues };
}

/** Issues of a bulk call's data: the model and rules compiled, and every value a latency (the first bad one named). */
function bulkInputIssues(model: unknown, rules: unknown, values: Float64Array, name: string): Issue[] {
  const issues = compiledInputIssues(model, rules);
  for (let index = 0; index < values.length; index += 1) {
    const value = values[index] as number;
    if (!(value >= 0 && value <= MAX_LATENCY_MS)) {
      issues.push(error('out_of_range', `${name}[${index}]`, `\`${name}[${index}]\` requires a latency in milliseconds between 0 and ${MAX_LATENCY_MS}, got ${show(value)}`));
      break;
    }
  }
  return issues;
}

/**
 * Solve one lobby of point latencies into `out` (same length as
 * `latencies`). Same rules and scales as `balanceLobby` on the same players
 * (up to the last bits of a budget's bisection, whose sums run in input
 * order here).
 *
 * @param model a compiled model with a scale term.
 * @param difficulty the lobby's difficulty (a number or a level name).
 * @param latencies one latency in ms per player.
 * @param rules compiled rules; `latency_estimator` does not apply (one value per player).
 * @param out receives the scales; ineligible players get 1.
 * @returns the target and level, or the issues that stop the solve.
 * @example
 *   const out = new Float64Array(latencies.length);
 *   const result = solveScalesInto(model, 'veteran', latencies, rules, out);
 */
export function solveScalesInto(model: CompiledModel, difficulty: number | string, latencies: Float64Array, rules: CompiledRules, out: Float64Array): BulkSolveResult {
  checkArray(latencies, 'latencies');
  checkArray(out, 'out');
  if (out.length !== latencies.length) {
    throw new RangeError(`\`out\` requires the length of \`latencies\` (${latencies.length}), got ${out.length}`);
  }
  const inputIssues = bulkInputIssues(model, rules, latencies, 'latencies');
  if (inputIssues.length > 0) return rejected(out, inputIssues);
  return solvePoints(model, difficulty, latencies, rules, out);
}

/** solveScalesInto on checked inputs (solveSampledScalesInto's robust estimates come here too). */
function solvePoints(model: CompiledModel, difficulty: number | string, latencies: Float64Array, rules: CompiledRules, out: Float64Array): BulkSolveResult {
  if (model.scaleForm === 'none') return rejected(out, [noScaleTerm()]);
  const lineResult = model.lineAt(difficulty);
  if (!lineResult.ok) return rejected(out, lineResult.issues);
  const line = lineResult.value;
  const logForm = model.scaleForm === 'log';
  const limitLatency = rules.latency_limit_ms ?? Infinity;
  const count = latencies.length;
  let lowest = Infinity;
  let highest = -Infinity;
  let eligible = 0;
  for (let index = 0; index < count; index += 1) {
    const latency = latencies[index] as number;
    if (!(latency <= limitLatency)) continue;
    eligible += 1;
    if (latency < lowest) lowest = latency;
    if (latency > highest) highest = latency;
  }
  if (eligible === 0) return rejected(out, [noEligiblePlayer(rules)]);
  // The scale coefficient is affine in latency: positive everywhere iff positive at both extremes.
  for (const latency of [lowest, highest]) {
    const slope = line.scaleSlope + line.scaleSlopePerMs * latency;
    if (!(slope > 0)) return rejected(out, [scaleNotIncreasing(latency, slope)]);
  }
  const link = model.link;
  const unitTerm = logForm ? 0 : 1;
  const predictionAt = (latency: number) => link.inverse(line.base + line.basePerMs * latency + (line.scaleSlope + line.scaleSlopePerMs * latency) * unitTerm);
  const spec = rules.target;
  // The best-connected player's prediction: the prediction is monotone in latency at scale 1, so it is at an extreme.
  const target =
    spec.kind === 'fixed' ? spec.probability : spec.kind === 'reference_latency' ? predictionAt(spec.latency_ms) : Math.max(predictionAt(lowest), predictionAt(highest));
  const workspace = bulkWorkspace.reserve(eligible, eligible);
  const { offsets, alphas, betas } = workspace;
  offsets[0] = 0;
  let slot = 0;
  for (let index = 0; index < count; index += 1) {
    const latency = latencies[index] as number;
    if (!(latency <= limitLatency)) continue;
    alphas[slot] = line.base + line.basePerMs * latency;
    betas[slot] = line.scaleSlope + line.scaleSlopePerMs * latency;
    slot += 1;
    offsets[slot] = slot;
  }
  const curves: CurveSet = { count: eligible, offsets, alphas, betas };
  return finish(solveScales({ curves, before: workspace.before, target, link, form: model.scaleForm, rules, idOf: null }, workspace, true), latencies, limitLatency, out, eligible);
}

const noScaleTerm = () => error('no_scale_term', 'model.terms', 'compensation requires a model with a scale term (scale or log_scale), got none');
const noEligiblePlayer = (rules: CompiledRules) => error('no_eligible_player', 'players', `a lobby requires at least one player within the latency limit (${String(rules.latency_limit_ms)} ms), got none`);
const scaleNotIncreasing = (latency: number, slope: number) =>
  error('scale_not_increasing', 'players', `compensation requires hit probability to increase with the scale, but under this model it does not at ${show(latency)} ms (the scale term's coefficient there is ${slope.toPrecision(3)})`);

/** Write the eligible players' scales (slot order is input order) and 1 for the others. */
function finish(solved: ReturnType<typeof solveScales>, latencies: Float64Array, limitLatency: number, out: Float64Array, eligible: number): BulkSolveResult {
  if (!solved.ok) return rejected(out, solved.issues);
  const scales = solved.value.scales;
  let slot = 0;
  for (let index = 0; index < latencies.length; index += 1) {
    out[index] = (latencies[index] as number) <= limitLatency ? (scales[slot++] as number) : 1;
  }
  return { status: 'solved', target: solved.value.target, level: solved.value.level, assistance: solved.value.assistance, eligible_players: eligible };
}

let estimateScratch = new Float64Array(0);

/**
 * The bulk path for players with the same number of latency samples each:
 * `samples` holds player i's samples at [i k, (i + 1) k) for k =
 * `samplesPerPlayer`. Same rules and scales as `balanceLobby` on the same
 * players.
 *
 * With a robust estimator (median, low percentile) each player's samples
 * become one latency (a selection of k values in a buffer, quantile-select.ts) and the point
 * path above does the rest. With `all_samples` each player's curve averages
 * over their k samples and the scale is found by the safeguarded Newton
 * iteration of `inverseTerm`; the curves take three typed arrays per call
 * (none per player).
 *
 * Cost: O(n k log k) for a robust estimator; O(n k x Newton steps) pooled.
 */
export function solveSampledScalesInto(
  model: CompiledModel,
  difficulty: number | string,
  samples: Float64Array,
  samplesPerPlayer: number,
  rules: CompiledRules,
  out: Float64Array,
): BulkSolveResult {
  const perPlayer = samplesPerPlayer;
  checkArray(samples, 'samples');
  checkArray(out, 'out');
  if (!(Number.isSafeInteger(perPlayer) && perPlayer >= 1) || samples.length !== perPlayer * out.length) {
    throw new RangeError(`\`samples\` requires \`samplesPerPlayer\` (${show(perPlayer)}) x the length of \`out\` (${out.length}) values, got ${samples.length}`);
  }
  const inputIssues = bulkInputIssues(model, rules, samples, 'samples');
  if (inputIssues.length > 0) return rejected(out, inputIssues);
  const count = out.length;
  const estimator = rules.latency_estimator;
  if (estimator !== 'all_samples' || perPlayer === 1) {
    if (estimateScratch.length < count) estimateScratch = new Float64Array(Math.max(count, 2 * estimateScratch.length));
    const estimates = estimateScratch.subarray(0, count);
    if (perPlayer === 1) estimates.set(samples);
    else {
      const buffer = new Float64Array(perPlayer);
      const probability = estimator === 'all_samples' ? 0.5 : estimator === 'median' ? 0.5 : estimator.percentile / 100;
      for (let player = 0; player < count; player += 1) {
        estimates[player] = quantileSelect(samples.subarray(player * perPlayer, (player + 1) * perPlayer), probability, buffer);
      }
    }
    return solvePoints(model, difficulty, estimates, rules, out);
  }
  if (model.scaleForm === 'none') return rejected(out, [noScaleTerm()]);
  const lineResult = model.lineAt(difficulty);
  if (!lineResult.ok) return rejected(out, lineResult.issues);
  const line = lineResult.value;
  const limitLatency = rules.latency_limit_ms ?? Infinity;
  let eligible = 0;
  for (let player = 0; player < count; player += 1) {
    let sum = 0;
    for (let index = 0; index < perPlayer; index += 1) sum += samples[player * perPlayer + index] as number;
    const mean = sum / perPlayer;
    // Ineligible players are marked with NaN until the end.
    out[player] = mean <= limitLatency ? 0 : Number.NaN;
    if (mean <= limitLatency) eligible += 1;
  }
  if (eligible === 0) return rejected(out, [noEligiblePlayer(rules)]);
  const workspace = bulkWorkspace.reserve(eligible, eligible * perPlayer);
  const { offsets, alphas, betas } = workspace;
  offsets[0] = 0;
  let slot = 0;
  for (let player = 0; player < count; player += 1) {
    if (Number.isNaN(out[player])) continue;
    for (let index = 0; index < perPlayer; index += 1) {
      const latency = samples[player * perPlayer + index] as number;
      const position = slot * perPlayer + index;
      alphas[position] = line.base + line.basePerMs * latency;
      const beta = line.scaleSlope + line.scaleSlopePerMs * latency;
      if (!(beta > 0)) return rejected(out, [scaleNotIncreasing(latency, beta)]);
      betas[position] = beta;
    }
    slot += 1;
    offsets[slot] = slot * perPlayer;
  }
  const curves: CurveSet = { count: eligible, offsets, alphas, betas };
  const form = model.scaleForm;
  const before = expectedBefore(curves, model.link, form, workspace.before);
  const spec = rules.target;
  let target = -Infinity;
  if (spec.kind === 'fixed') target = spec.probability;
  else if (spec.kind === 'reference_latency') {
    const unitTerm = form === 'log' ? 0 : 1;
    target = model.link.inverse(line.base + line.basePerMs * spec.latency_ms + (line.scaleSlope + line.scaleSlopePerMs * spec.latency_ms) * unitTerm);
  } else for (let index = 0; index < eligible; index += 1) target = Math.max(target, before[index] as number);
  const solved = solveScales({ curves, before, target, link: model.link, form, rules, idOf: null }, workspace, true);
  if (!solved.ok) return rejected(out, solved.issues);
  slot = 0;
  for (let player = 0; player < count; player += 1) {
    if (Number.isNaN(out[player])) out[player] = 1;
    else out[player] = solved.value.scales[slot++] as number;
  }
  return { status: 'solved', target, level: solved.value.level, assistance: solved.value.assistance, eligible_players: eligible };
}
