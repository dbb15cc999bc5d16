/**
 * `solveScalesInto(model, difficulty, latencies, rules, out)`: the bulk fast
 * path for matchmakers with one latency value per player. It solves one lobby
 * (the whole `latencies` array) with the same rules and the same result as
 * `balanceLobby` (scales only: no labels, no summary), writing the scales
 * into `out`.
 *
 * Method: with a point latency the linear predictor is affine in the scale
 * term, so the scale that reaches a level L is closed form,
 *
 *     h(s) = (g(L) - (a0 + a1 latency)) / (b0 + b1 latency),
 *
 * and g(L) is computed once per level: no inverse link per player at all.
 * Floor, soft cap, hard cap and the ratio lift are a pass each; a budget
 * bisects on L (about 50 passes); rounding to the grid and the soft cap's
 * order walk work on a sorted copy of the latencies (a player's scale depends
 * on their latency alone), kept in a scratch buffer that grows once and is
 * reused, so no call allocates per player.
 *
 * Ineligible players (latency above the limit) get scale 1, as in
 * `balanceLobby`.
 *
 * Cost: O(n) for the plain case (one exp per player in log form); O(n log n)
 * with rounding or a soft cap (a native sort of the latencies); x 50 with a
 * binding budget.
 */
import { type Issue, error, show } from '../issues.js';
import type { CompiledModel, PredictorLine } from '../model/compile.js';
import type { CompiledRules } from './rules.js';
import { quantileSorted } from '../stats/quantile.js';
import type { CurveSet } from './player-curve.js';
import { expectedBefore, gridDown, searchLimit, softCapMayOverCompensate, solveScales } from './solve-scales.js';

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

let sortedScratch = new Float64Array(0);
let scaleScratch = new Float64Array(0);

interface Bulk {
  readonly latencies: Float64Array;
  readonly out: Float64Array;
  readonly rules: CompiledRules;
  readonly line: PredictorLine;
  readonly link: CompiledModel['link'];
  readonly logForm: boolean;
  readonly limitLatency: number;
  readonly searchLimit: number;
  readonly floorTerm: number;
  readonly highTerm: number;
}

/** Fill `out` at a level (granted, then lifted); returns the assistance. One pass without a ratio limit, two with. */
function fillAt(bulk: Bulk, linked: number): number {
  const { latencies, out, rules, limitLatency, line, logForm, floorTerm, highTerm } = bulk;
  const count = latencies.length;
  const { base, basePerMs, scaleSlope, scaleSlopePerMs } = line;
  const floor = rules.scale_floor;
  const floorWithin = floor * (1 + 1e-12);
  const limit = bulk.searchLimit;
  const cap = rules.scale_cap;
  const soft = rules.soft_cap !== null;
  const softAbove = rules.soft_cap === null ? Infinity : rules.soft_cap.above;
  const softFraction = rules.soft_cap === null ? 1 : rules.soft_cap.fraction;
  let largest = -Infinity;
  let assistance = 0;
  for (let index = 0; index < count; index += 1) {
    const latency = latencies[index] as number;
    if (latency > limitLatency) {
      out[index] = 1;
      continue;
    }
    const term = (linked - (base + basePerMs * latency)) / (scaleSlope + scaleSlopePerMs * latency);
    let desired = !(term > floorTerm) ? floor : !(term < highTerm) ? limit : logForm ? Math.exp(term) : term;
    if (desired < floorWithin) desired = floor;
    else if (desired > limit) desired = limit;
    // The soft cap, then the hard cap (softCapped in solve-scales.ts, inlined).
    let granted = soft && desired > softAbove ? softAbove + softFraction * (desired - softAbove) : desired;
    if (granted > cap) granted = cap;
    out[index] = granted;
    if (granted > largest) largest = granted;
    if (granted > 1) assistance += granted - 1;
  }
  const ratio = rules.max_scale_ratio;
  if (ratio === null) return assistance;
  const lift = Math.max(floor, largest / ratio);
  assistance = 0;
  for (let index = 0; index < count; index += 1) {
    if ((latencies[index] as number) > limitLatency) continue;
    const scale = (out[index] as number) > lift ? (out[index] as number) : lift;
    out[index] = scale;
    if (scale > 1) assistance += scale - 1;
  }
  return assistance;
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
  if (out.length !== latencies.length) {
    throw new RangeError(`\`out\` requires the length of \`latencies\` (${latencies.length}), got ${out.length}`);
  }
  if (model.scaleForm === 'none') {
    return { status: 'rejected', issues: [error('no_scale_term', 'model.terms', 'compensation requires a model with a scale term (scale or log_scale), got none')] };
  }
  const lineResult = model.lineAt(difficulty);
  if (!lineResult.ok) return { status: 'rejected', issues: lineResult.issues };
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
  if (eligible === 0) {
    return { status: 'rejected', issues: [error('no_eligible_player', 'players', `a lobby requires at least one player within the latency limit (${String(rules.latency_limit_ms)} ms), got none`)] };
  }
  // The scale coefficient is affine in latency: positive everywhere iff positive at both extremes.
  for (const latency of [lowest, highest]) {
    const slope = line.scaleSlope + line.scaleSlopePerMs * latency;
    if (!(slope > 0)) {
      return { status: 'rejected', issues: [error('scale_not_increasing', 'players', `compensation requires hit probability to increase with the scale, but under this model it does not at ${show(latency)} ms (the scale term's coefficient there is ${slope.toPrecision(3)})`)] };
    }
  }
  const link = model.link;
  const unitTerm = logForm ? 0 : 1;
  const predictionAt = (latency: number) => link.inverse(line.base + line.basePerMs * latency + (line.scaleSlope + line.scaleSlopePerMs * latency) * unitTerm);
  const spec = rules.target;
  const target =
    spec.kind === 'fixed' ? spec.probability : spec.kind === 'reference_latency' ? predictionAt(spec.latency_ms) : Math.max(predictionAt(lowest), predictionAt(highest));
  const limit = searchLimit(rules);
  const bulk: Bulk = {
    latencies,
    out,
    rules,
    line,
    link,
    logForm,
    limitLatency,
    searchLimit: limit,
    floorTerm: logForm ? Math.log(rules.scale_floor) : rules.scale_floor,
    highTerm: logForm ? Math.log(limit) : limit,
  };
  let level = target;
  let assistance = fillAt(bulk, link.link(target));
  const budget = rules.assistance_budget;
  if (budget !== null && assistance > budget) {
    // E at the floor is affine-then-link in latency: its smallest value is at an extreme.
    const floorTerm = bulk.floorTerm;
    const atFloor = (latency: number) => link.inverse(line.base + line.basePerMs * latency + (line.scaleSlope + line.scaleSlopePerMs * latency) * floorTerm);
    let low = Math.min(target, atFloor(lowest), atFloor(highest));
    if (fillAt(bulk, link.link(low)) > budget) {
      return {
        status: 'rejected',
        issues: [error('budget_below_floor', 'rules.assistance_budget', `\`assistance_budget\` requires at least what the floor alone costs in this lobby, ${eligible} x (${rules.scale_floor} - 1) = ${eligible * Math.max(0, rules.scale_floor - 1)}, got ${budget}`)],
      };
    }
    let high = target;
    for (let iteration = 0; iteration < 200 && high - low > 1e-15; iteration += 1) {
      const middle = 0.5 * (low + high);
      if (middle <= low || middle >= high) break;
      if (fillAt(bulk, link.link(middle)) <= budget) low = middle;
      else high = middle;
    }
    level = low;
    assistance = fillAt(bulk, link.link(level));
  }
  // The walk changes nothing unless rounding is on or the soft cap meets a model under which it could over-compensate
  // (see needsOrder in solve-scales.ts); the curves here are points.
  if (rules.quantisation_step !== null || softCapMayOverCompensate(rules, line, logForm ? 'log' : 'raw')) assistance = walkSorted(bulk, eligible, unitTerm);
  return { status: 'solved', target, level, assistance, eligible_players: eligible };
}

/** Rounding and the order walk (see solve-scales.ts, steps 5 and 6) over the sorted distinct latencies; returns the assistance. */
function walkSorted(bulk: Bulk, eligible: number, unitTerm: number): number {
  const { latencies, out, rules, limitLatency, line, logForm } = bulk;
  if (sortedScratch.length < eligible) {
    sortedScratch = new Float64Array(Math.max(eligible, 2 * sortedScratch.length));
    scaleScratch = new Float64Array(sortedScratch.length);
  }
  const sorted = sortedScratch.subarray(0, eligible);
  let position = 0;
  for (let index = 0; index < latencies.length; index += 1) {
    const latency = latencies[index] as number;
    if (latency <= limitLatency) sorted[position++] = latency;
  }
  sorted.sort();
  // Best-connected first: highest unscaled prediction, i.e. lowest latency unless the model's latency slope at scale 1 is positive.
  const ascending = line.basePerMs + line.scaleSlopePerMs * unitTerm <= 0;
  const scales = scaleScratch;
  // `out` holds each player's continuous scale; a binary search maps a player to their sorted slot (equal latencies share one).
  for (let index = 0; index < latencies.length; index += 1) {
    const latency = latencies[index] as number;
    if (latency > limitLatency) continue;
    scales[firstAtOrAbove(sorted, latency)] = out[index] as number;
  }
  for (let slot = 1; slot < eligible; slot += 1) if (sorted[slot] === sorted[slot - 1]) scales[slot] = scales[slot - 1] as number;
  const step = rules.quantisation_step;
  const ratio = rules.max_scale_ratio;
  if (step !== null) {
    let smallest = Infinity;
    for (let slot = 0; slot < eligible; slot += 1) {
      const rounded = Math.max(rules.scale_floor, gridDown(scales[slot] as number, step));
      scales[slot] = rounded;
      if (rounded < smallest) smallest = rounded;
    }
    if (ratio !== null) {
      const bound = Math.max(smallest, gridDown(ratio * smallest, step));
      for (let slot = 0; slot < eligible; slot += 1) if ((scales[slot] as number) > bound) scales[slot] = bound;
    }
  }
  let largest = -Infinity;
  for (let slot = 0; slot < eligible; slot += 1) largest = Math.max(largest, scales[slot] as number);
  const lowestAllowed = ratio === null ? rules.scale_floor : Math.max(rules.scale_floor, largest / ratio);
  const link = bulk.link;
  const expected = (latency: number, scale: number) => {
    const term = logForm ? Math.log(scale) : scale;
    return link.inverse(line.base + line.basePerMs * latency + (line.scaleSlope + line.scaleSlopePerMs * latency) * term);
  };
  let previousScale = -Infinity;
  let previousPerformance = Infinity;
  for (let walked = 0; walked < eligible; walked += 1) {
    const slot = ascending ? walked : eligible - 1 - walked;
    const latency = sorted[slot] as number;
    let scale = scales[slot] as number;
    let performance = expected(latency, scale);
    if (performance > previousPerformance) {
      const bottom = scale >= previousScale ? Math.max(previousScale, lowestAllowed) : lowestAllowed;
      if (step !== null) {
        while (performance > previousPerformance && scale - step >= bottom * (1 - 1e-12)) {
          scale = Math.max(scale - step, rules.scale_floor);
          performance = expected(latency, scale);
        }
      } else if (bottom < scale) {
        // Closed form: the scale at which this latency's prediction equals the previous performance.
        const linked = link.link(previousPerformance);
        const term = (linked - (line.base + line.basePerMs * latency)) / (line.scaleSlope + line.scaleSlopePerMs * latency);
        const candidate = logForm ? Math.exp(term) : term;
        scale = Math.min(scale, Math.max(bottom, candidate));
        performance = expected(latency, scale);
      }
      scales[slot] = scale;
    }
    previousScale = scale;
    if (performance <= previousPerformance) previousPerformance = performance;
  }
  let assistance = 0;
  for (let index = 0; index < latencies.length; index += 1) {
    const latency = latencies[index] as number;
    if (latency > limitLatency) continue;
    const scale = scales[firstAtOrAbove(sorted, latency)] as number;
    out[index] = scale;
    if (scale > 1) assistance += scale - 1;
  }
  return assistance;
}

/** The first index of `sorted` whose value is >= `value` (binary search). */
function firstAtOrAbove(sorted: Float64Array, value: number): number {
  let low = 0;
  let high = sorted.length;
  while (low < high) {
    const middle = (low + high) >>> 1;
    if ((sorted[middle] as number) < value) low = middle + 1;
    else high = middle;
  }
  return low;
}

let estimateScratch = new Float64Array(0);

/**
 * The bulk path for players with the same number of latency samples each:
 * `samples` holds player i's samples at [i k, (i + 1) k) for k =
 * `samplesPerPlayer`. Same rules and scales as `balanceLobby` on the same
 * players.
 *
 * With a robust estimator (median, low percentile) each player's samples
 * become one latency (a sort of k values in a reused buffer) and the point
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
  if (!(Number.isSafeInteger(perPlayer) && perPlayer >= 1) || samples.length !== perPlayer * out.length) {
    throw new RangeError(`\`samples\` requires \`samplesPerPlayer\` (${String(perPlayer)}) x the length of \`out\` (${out.length}) values, got ${samples.length}`);
  }
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
        for (let index = 0; index < perPlayer; index += 1) buffer[index] = samples[player * perPlayer + index] as number;
        buffer.sort();
        estimates[player] = quantileSorted(buffer, probability, 7);
      }
    }
    return solveScalesInto(model, difficulty, estimates, rules, out);
  }
  if (model.scaleForm === 'none') {
    return { status: 'rejected', issues: [error('no_scale_term', 'model.terms', 'compensation requires a model with a scale term (scale or log_scale), got none')] };
  }
  const lineResult = model.lineAt(difficulty);
  if (!lineResult.ok) return { status: 'rejected', issues: lineResult.issues };
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
  if (eligible === 0) {
    return { status: 'rejected', issues: [error('no_eligible_player', 'players', `a lobby requires at least one player within the latency limit (${String(rules.latency_limit_ms)} ms), got none`)] };
  }
  const offsets = new Int32Array(eligible + 1);
  const alphas = new Float64Array(eligible * perPlayer);
  const betas = new Float64Array(eligible * perPlayer);
  let slot = 0;
  for (let player = 0; player < count; player += 1) {
    if (Number.isNaN(out[player])) continue;
    for (let index = 0; index < perPlayer; index += 1) {
      const latency = samples[player * perPlayer + index] as number;
      const position = slot * perPlayer + index;
      alphas[position] = line.base + line.basePerMs * latency;
      const beta = line.scaleSlope + line.scaleSlopePerMs * latency;
      if (!(beta > 0)) {
        return { status: 'rejected', issues: [error('scale_not_increasing', 'players', `compensation requires hit probability to increase with the scale, but under this model it does not at ${show(latency)} ms (the scale term's coefficient there is ${beta.toPrecision(3)})`)] };
      }
      betas[position] = beta;
    }
    slot += 1;
    offsets[slot] = slot * perPlayer;
  }
  const curves: CurveSet = { count: eligible, offsets, alphas, betas };
  const form = model.scaleForm;
  const before = expectedBefore(curves, model.link, form, new Float64Array(eligible));
  const spec = rules.target;
  let target = -Infinity;
  if (spec.kind === 'fixed') target = spec.probability;
  else if (spec.kind === 'reference_latency') {
    const unitTerm = form === 'log' ? 0 : 1;
    target = model.link.inverse(line.base + line.basePerMs * spec.latency_ms + (line.scaleSlope + line.scaleSlopePerMs * spec.latency_ms) * unitTerm);
  } else for (let index = 0; index < eligible; index += 1) target = Math.max(target, before[index] as number);
  const solved = solveScales(curves, before, target, model.link, form, rules, null, line);
  if (!solved.ok) return { status: 'rejected', issues: solved.issues };
  slot = 0;
  for (let player = 0; player < count; player += 1) {
    if (Number.isNaN(out[player])) out[player] = 1;
    else out[player] = solved.value.scales[slot++] as number;
  }
  return { status: 'solved', target, level: solved.value.level, assistance: solved.value.assistance, eligible_players: eligible };
}
