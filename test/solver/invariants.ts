/**
 * The solver's documented invariants (docs/method.md, section 3), checked on
 * random lobbies of up to 128 players: the fuzz script `npm run fuzz:solver`
 * runs 100,000 or more; `fuzz-slice.test.ts` runs a seeded slice of 2,000 in
 * CI. Each lobby draws a model (every link, log or raw scale term, curves
 * that fall with latency at every scale, as the arbitraries of
 * arbitraries.ts), rules mixing every constraint, and point or sampled
 * latencies (some players sharing one), from a seeded source.
 *
 * The checks use curves written out from the model (reference-answer.ts),
 * not the solver's, and say which invariant a lobby broke:
 * - feasible: every scale a multiple of the step in [floor, upper_i], the
 *   ratio, the budget, and s_i <= max(u_i, L(s)) (definition, items 1-4);
 * - ineligible: scale 1, label `ineligible`, expected_before by the estimator;
 * - finite: no NaN or Infinity anywhere in the result;
 * - plain rounding: with no budget and no ratio, each scale is the largest
 *   multiple of q at or below the unrounded scale, within the floor and the
 *   cap, and at most one step below the answer without a step;
 * - above target: only a player lifted by the ratio (`ratio`) or at the
 *   floor (`floor`) ends above the target;
 * - labels: `none` within 1e-9 of the target, `quantisation` only with a
 *   step, `budget`, `ratio` and `soft_cap` only with their rule;
 * - no free step: no player below the target can take one more step (or,
 *   without a step, any more scale) that every constraint allows: that
 *   would be a better answer (leximin);
 * - overtake bound: with point latencies and no soft cap, largest_overtake
 *   <= step_gain (+ 1e-9);
 * - permutation: shuffling the players changes nothing but their order;
 * - bulk: solveScalesInto gives the same scales for point latencies.
 */
import { type BalanceResult, balanceLobby } from '../../src/solver/balance-lobby.js';
import { solveScalesInto } from '../../src/solver/solve-scales-into.js';
import type { LobbyFile } from '../../src/formats/lobby-file.js';
import type { CompiledRules } from '../../src/solver/rules.js';
import type { RulesInput } from '../../src/formats/rules-file.js';
import type { RandomSource } from '../../src/random.js';
import type { LinkName } from '../../src/model/links.js';
import { type ModelSpec, MAX_LATENCY, compiled, rulesOf } from './arbitraries.js';
import { referenceCurve, referenceNeed } from './reference-answer.js';

export const INVARIANTS = ['feasible', 'ineligible', 'finite', 'plain_rounding', 'above_target', 'labels', 'no_free_step', 'overtake_bound', 'permutation', 'bulk'] as const;
export type Invariant = (typeof INVARIANTS)[number];

export interface FuzzCase {
  readonly spec: ModelSpec;
  readonly lobby: LobbyFile;
  readonly rules: Omit<RulesInput, 'format'>;
}

export interface FuzzOutcome {
  /** 'rejected' with its code, or the features the answer exercised. */
  readonly kind: string;
  readonly features: readonly string[];
  /** Invariants checked on this lobby, and those it broke (with a note). */
  readonly checked: readonly Invariant[];
  readonly broken: readonly { readonly invariant: Invariant; readonly note: string }[];
}

const pick = <T>(random: RandomSource, values: readonly T[]): T => values[Math.floor(random() * values.length)] as T;
const between = (random: RandomSource, low: number, high: number) => low + (high - low) * random();

/** A random lobby, model and rules (seeded source), up to `maxPlayers` players. */
export function randomCase(random: RandomSource, maxPlayers: number): FuzzCase {
  const form = pick(random, ['log', 'raw'] as const);
  const latencyCoefficient = between(random, -0.02, -0.002);
  const scaleCoefficient = between(random, 0.3, 3);
  const share = between(random, -0.9, 0.9);
  const largestTerm = form === 'log' ? Math.log(30) : 30;
  const interaction = share >= 0 ? (share * -latencyCoefficient) / largestTerm : share * Math.min(scaleCoefficient / MAX_LATENCY, -latencyCoefficient / Math.abs(Math.log(0.5)));
  const spec: ModelSpec = {
    link: pick(random, ['logit', 'probit', 'cloglog'] as LinkName[]),
    form,
    intercept: between(random, -1.5, 2),
    latency: latencyCoefficient,
    scale: scaleCoefficient,
    difficulty: between(random, -0.6, 0),
    interaction,
  };
  const size = random() < 0.7 ? 1 + Math.floor(random() * 16) : 1 + Math.floor(random() * maxPlayers);
  const latencies: (number | number[])[] = [];
  for (let index = 0; index < size; index += 1) {
    if (index > 0 && random() < 0.1) {
      latencies.push(latencies[Math.floor(random() * index)] as number | number[]);
      continue;
    }
    const base = between(random, 0, 250);
    latencies.push(random() < 0.6 ? base : Array.from({ length: 1 + Math.floor(random() * 16) }, () => Math.min(MAX_LATENCY, base + 60 * random() ** 3)));
  }
  const names = latencies.map((_, index) => `player-${((index * 7919) % 10007).toString(36)}-${index}`);
  const lobby: LobbyFile = {
    format: 'lagparity/lobby@1',
    match_id: 'fuzz',
    attribute: 'hit_area',
    difficulty: between(random, 0, 2),
    players: latencies.map((latency, index) => ({ id: names[index] as string, latency_ms: latency })),
  };
  const step = pick(random, [null, null, 0.01, 0.05, 0.05, 0.1, 0.25, 0.3]);
  const wanted = step === 0.3 && random() < 0.5 ? 0.9 : pick(random, [1, 1, 1, 1.2, 0.8]);
  const floor = step === null ? wanted : Number((Math.max(1, Math.round(wanted / step)) * step).toFixed(10));
  const cap = Math.round((floor + between(random, 0, 2)) * 1000) / 1000;
  const rules: Omit<RulesInput, 'format'> = {
    scale_floor: floor,
    scale_cap: cap,
    quantisation_step: step,
    max_scale_ratio: random() < 0.4 ? between(random, 1, random() < 0.5 ? 1.5 : 3) : null,
    assistance_budget: random() < 0.4 ? between(random, 0, size * 0.3) + size * Math.max(0, floor - 1) * (random() < 0.05 ? 0.5 : 1) : null,
    latency_limit_ms: random() < 0.3 ? between(random, 100, 300) : null,
    soft_cap: random() < 0.3 && cap > floor ? { above: floor + between(random, 0.05, 0.95) * (cap - floor), fraction: between(random, 0.1, 0.9) } : null,
    target: pick(random, [{ kind: 'best_connected' as const }, { kind: 'best_connected' as const }, { kind: 'reference_latency' as const, latency_ms: between(random, 0, 100) }, { kind: 'fixed' as const, probability: between(random, 0.05, 0.95) }]),
    latency_estimator: pick(random, ['all_samples' as const, 'median' as const, { percentile: Math.round(between(random, 0, 50)) }]),
  };
  return { spec, lobby, rules };
}

/** R type-7 quantile and mean, written out. */
function estimateOf(latency: number | readonly number[], rules: CompiledRules): number {
  if (typeof latency === 'number') return latency;
  const estimator = rules.latency_estimator;
  if (latency.length === 1 || estimator === 'all_samples') return latency.reduce((sum, value) => sum + value, 0) / latency.length;
  const sorted = [...latency].sort((left, right) => left - right);
  const position = (sorted.length - 1) * (estimator === 'median' ? 0.5 : estimator.percentile / 100);
  const lower = Math.floor(position);
  const upper = Math.min(lower + 1, sorted.length - 1);
  return (sorted[lower] as number) + (position - lower) * ((sorted[upper] as number) - (sorted[lower] as number));
}

function curveLatencies(latency: number | readonly number[], rules: CompiledRules): number[] {
  if (typeof latency === 'number') return [latency];
  return rules.latency_estimator === 'all_samples' ? [...latency] : [estimateOf(latency, rules)];
}

function walkFinite(value: unknown): boolean {
  if (typeof value === 'number') return Number.isFinite(value);
  if (Array.isArray(value)) return value.every(walkFinite);
  if (value !== null && typeof value === 'object') return Object.values(value).every(walkFinite);
  return true;
}

/** Check every invariant on one case. Pure but for the solver's own shared scratch. */
export function checkInvariants(drawn: FuzzCase, permutationKeys: readonly number[] | null): FuzzOutcome {
  const rules = rulesOf(drawn.rules);
  const model = compiled(drawn.spec);
  const result = balanceLobby(drawn.lobby, model, rules, { views: { ordering: true } });
  const checked: Invariant[] = [];
  const broken: { invariant: Invariant; note: string }[] = [];
  const check = (invariant: Invariant, holds: boolean, note: () => string) => {
    if (!checked.includes(invariant)) checked.push(invariant);
    if (!holds) broken.push({ invariant, note: note() });
  };
  if (result.status === 'rejected') return { kind: `rejected ${result.issues[0]?.code ?? '?'}`, features: [], checked, broken };
  check('finite', walkFinite(result), () => 'a NaN or Infinity in the result');
  const difficulty = drawn.lobby.difficulty as number;
  const step = rules.quantisation_step;
  const floor = rules.scale_floor;
  const cap = rules.scale_cap;
  const ratio = rules.max_scale_ratio;
  const budget = rules.assistance_budget;
  const soft = rules.soft_cap;
  const eligible = result.players.map((player, index) => ({ player, index })).filter(({ player }) => player.eligible);
  const curves = eligible.map(({ index }) => referenceCurve(drawn.spec, difficulty, curveLatencies((drawn.lobby.players[index] as LobbyFile['players'][number]).latency_ms, rules)));
  // The target written out, so that the checks compare the written-out curves with their own target.
  const spec = rules.target;
  const target = spec.kind === 'fixed' ? spec.probability : spec.kind === 'reference_latency' ? referenceCurve(drawn.spec, difficulty, [spec.latency_ms])(1) : Math.max(...curves.map((curve) => curve(1)));
  check('feasible', Math.abs(target - result.target) <= 1e-12, () => `target ${result.target}, written out ${target}`);
  const features = new Set<string>();
  const limit = soft === null ? cap : soft.above + (cap - soft.above) / soft.fraction;

  // Each player's need, upper_i, A_i's top and ceiling u_i, written out (bisection on the written-out curve).
  const needFor = (curve: (s: number) => number, level: number): number => referenceNeed(curve, level, floor, limit);
  const own = curves.map((curve) => {
    const need = needFor(curve, target);
    // Where a curve is flat, scales 1e-9 apart in probability can be far apart: the soft cap's grant is allowed up to
    // the grant of the need at T + 1e-9.
    const generousNeed = needFor(curve, Math.min(target + 1e-9, (1 + target) / 2));
    const grant = (wanted: number) => (soft !== null && wanted > soft.above ? Math.min(cap, soft.above + soft.fraction * (wanted - soft.above)) : cap);
    const upper = grant(generousNeed);
    // ... and, to call a step free, a grant that is surely allowed: that of the need at T - 1e-9.
    const strictUpper = grant(needFor(curve, target - 1e-9));
    if (step === null) return { need, upper, strictUpper, top: upper, ceiling: Math.min(need, upper), strictCeiling: Math.min(need, upper) };
    const top = Math.floor(upper / step + 1e-9) * step;
    const first = Math.ceil(floor / step - 1e-9);
    let ceiling = first * step;
    // ... and a ceiling that is surely one: two implementations of a curve flat near 1 may put a multiple on either side of T.
    let strictCeiling = first * step;
    for (let index = first; index * step <= top + 1e-9 * step; index += 1) {
      const value = curve(index * step);
      if (value <= target) ceiling = index * step;
      if (value <= target - 1e-12) strictCeiling = index * step;
    }
    return { need, upper, strictUpper, top, ceiling, strictCeiling };
  });
  const scales = eligible.map(({ player }) => player.scale);
  const largest = Math.max(...scales);
  const smallest = Math.min(...scales);
  const lift = ratio === null ? -Infinity : step === null ? largest / ratio : Math.ceil(largest / ratio / step - 1e-9) * step;
  const assistance = scales.reduce((sum, scale) => sum + Math.max(0, scale - 1), 0);
  const slack = step === null ? 1e-9 : 1e-9 * step;
  scales.forEach((scale, slot) => {
    const limits = own[slot] as (typeof own)[number];
    const onGrid = step === null || Math.abs(scale / step - Math.round(scale / step)) < 1e-9;
    check('feasible', onGrid && scale >= floor * (1 - 1e-12) && scale <= limits.upper * (1 + 1e-12), () => `scale ${scale} not an allowed scale in [${floor}, ${limits.upper}]`);
    // Without a step u_i is where E_i reaches T: compared in probability, where both solvers agree to 1e-12.
    const withinCeiling = step === null ? scale <= floor * (1 + 1e-12) || (curves[slot] as (s: number) => number)(scale) <= target + 1e-9 : scale <= limits.ceiling * (1 + 1e-12);
    check('feasible', withinCeiling || scale <= lift * (1 + 1e-9), () => `scale ${scale} above max(u_i ${limits.ceiling}, L ${lift})`);
  });
  if (ratio !== null) check('feasible', largest / smallest <= ratio * (1 + 1e-12), () => `ratio ${largest / smallest} above ${ratio}`);
  if (budget !== null) check('feasible', assistance <= budget + slack, () => `assistance ${assistance} above the budget ${budget}`);

  for (const [index, player] of result.players.entries()) {
    if (player.eligible) continue;
    const latency = (drawn.lobby.players[index] as LobbyFile['players'][number]).latency_ms;
    const before = referenceCurve(drawn.spec, difficulty, curveLatencies(latency, rules))(1);
    check('ineligible', player.scale === 1 && player.binding === 'ineligible' && Math.abs(player.expected_before - before) <= 1e-12, () => `ineligible ${player.id}: scale ${player.scale}, ${player.binding}, before ${player.expected_before} vs ${before}`);
  }

  // Within 1e-6 of certainty 1 - T keeps few digits in a double (T = 1 - 1.3e-9 is known to about 1e-7 of 1 - T), so
  // where a need is recovered from T (the soft cap's grant) two sound solvers can land a grid step apart.
  if (step !== null && budget === null && ratio === null && target < 1 - 1e-6) {
    const withoutStep = balanceLobby(drawn.lobby, model, rulesOf({ ...drawn.rules, quantisation_step: null }));
    eligible.forEach(({ player, index }, slot) => {
      const limits = own[slot] as (typeof own)[number];
      check('plain_rounding', Math.abs(player.scale - limits.ceiling) <= 1e-9 || Math.abs((curves[slot] as (s: number) => number)(player.scale) - (curves[slot] as (s: number) => number)(limits.ceiling)) <= 1e-12, () => `${player.id} at ${player.scale}, not at its ceiling ${limits.ceiling}`);
      if (withoutStep.status !== 'rejected') {
        // Compared in probability: the answer without a step reaches T to 1e-12, which on a flat curve is a wide scale.
        const curve = curves[slot] as (s: number) => number;
        const unrounded = (withoutStep.players[index] as (typeof withoutStep.players)[number]).scale;
        check('plain_rounding', curve(player.scale) <= curve(unrounded) + 1e-9 && (unrounded - step < floor || curve(player.scale) >= curve(unrounded - step) - 1e-9), () => `${player.id} at ${player.scale}, not within one step below ${unrounded}`);
      }
    });
  }

  eligible.forEach(({ player }, slot) => {
    const limits = own[slot] as (typeof own)[number];
    check('above_target', !(player.expected_after > target + 1e-9) || player.binding === 'ratio' || player.binding === 'floor', () => `${player.id} above the target, labelled ${player.binding}`);
    const labelHolds =
      (player.binding !== 'none' || Math.abs(player.expected_after - target) <= 1e-9) &&
      (player.binding !== 'quantisation' || step !== null) &&
      (player.binding !== 'budget' || budget !== null) &&
      (player.binding !== 'ratio' || ratio !== null) &&
      (player.binding !== 'soft_cap' || soft !== null) &&
      (player.binding !== 'cap' || Math.abs(player.scale - limits.top) <= 1e-9 * Math.max(1, limits.top));
    check('labels', labelHolds, () => `${player.id} labelled ${player.binding}: scale ${player.scale}, after ${player.expected_after}, target ${target}`);
    features.add(player.binding);
  });

  // No free step: a player below the target whose next scale every constraint allows (the largest scale unchanged or
  // still within the ratio, the budget, the ceiling) means the answer is not leximin-optimal.
  const room = budget === null ? Infinity : budget - assistance;
  // Near certainty the soft cap's grant rests on a need recovered from T, known to a few digits (see plain_rounding).
  if (target < 1 - 1e-6) eligible.forEach(({ player }, slot) => {
    const limits = own[slot] as (typeof own)[number];
    if (player.expected_after >= target - 1e-9) return;
    const next = step === null ? player.scale * (1 + 1e-6) : player.scale + step;
    const cost = Math.max(0, next - 1) - Math.max(0, player.scale - 1);
    const newLargest = Math.max(largest, next);
    const newLift = ratio === null ? -Infinity : step === null ? newLargest / ratio : Math.ceil(newLargest / ratio / step - 1e-9) * step;
    const allowed = next <= limits.strictUpper * (1 - 1e-12) && next <= Math.max(limits.strictCeiling, newLift) * (1 + 1e-12) && (ratio === null || newLargest / smallest <= ratio * (1 + 1e-12)) && cost <= room - (step === null ? 1e-9 : slack);
    check('no_free_step', !allowed, () => `${player.id} at ${player.scale} could take ${next} (room ${room}, cost ${cost})`);
  });

  const points = drawn.lobby.players.every((player) => typeof player.latency_ms === 'number');
  const ordering = result.views?.ordering ?? { largest_overtake: Infinity, step_gain: 0 };
  if (points && soft === null) check('overtake_bound', ordering.largest_overtake <= ordering.step_gain + 1e-9, () => `overtake ${ordering.largest_overtake} above the bound ${ordering.step_gain}`);

  if (permutationKeys !== null) {
    const order = drawn.lobby.players.map((_, index) => index).sort((left, right) => (permutationKeys[left % permutationKeys.length] as number) - (permutationKeys[right % permutationKeys.length] as number) || left - right);
    const shuffled: LobbyFile = { ...drawn.lobby, players: order.map((index) => drawn.lobby.players[index] as LobbyFile['players'][number]) };
    const again = balanceLobby(shuffled, model, rules, { views: { ordering: true } });
    const byId = (solved: BalanceResult) => (solved.status === 'rejected' ? {} : Object.fromEntries(solved.players.map((player) => [player.id, player])));
    check('permutation', again.status !== 'rejected' && JSON.stringify(sortKeys(byId(again))) === JSON.stringify(sortKeys(byId(result))) && JSON.stringify(again.summary) === JSON.stringify(result.summary), () => 'a shuffled lobby got other scales or figures');
  }

  if (points) {
    const out = new Float64Array(drawn.lobby.players.length);
    const bulk = solveScalesInto(model, difficulty, Float64Array.from(drawn.lobby.players.map((player) => player.latency_ms as number)), rules, out);
    // The bulk path breaks ties by index, balanceLobby by id: compare where no two players share a latency.
    const distinct = new Set(drawn.lobby.players.map((player) => player.latency_ms)).size === drawn.lobby.players.length;
    if (distinct) check('bulk', bulk.status === 'solved' && result.players.every((player, index) => Math.abs((out[index] as number) - player.scale) <= 1e-9 * player.scale), () => 'solveScalesInto gave other scales');
  }

  if (result.level < target - 1e-12) features.add('budget binds');
  if (result.summary.lift > floor + 1e-9) features.add('lifted');
  return { kind: step === null ? 'real scales' : 'grid', features: [...features], checked, broken };
}

function sortKeys(record: Record<string, unknown>): [string, unknown][] {
  return Object.entries(record).sort(([left], [right]) => (left < right ? -1 : left > right ? 1 : 0));
}
