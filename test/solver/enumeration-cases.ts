/**
 * Generated lobbies for comparing the solver with enumeration (see
 * exhaustive.test.ts), and the comparison itself, shared with the solver's
 * fuzz script (tools/fuzz-solver.ts).
 */
import fc from 'fast-check';
import { expect } from 'vitest';
import { type BalanceResult, balanceLobby } from '../../src/solver/balance-lobby.js';
import type { LobbyFile } from '../../src/formats/lobby-file.js';
import { type ModelSpec, compiled, modelSpecArbitrary, rulesOf } from './arbitraries.js';
import { type ReferencePlayer, referenceAnswer, referenceCurve } from './reference-answer.js';

const STEPS = [0.05, 0.1, 0.15, 0.2, 0.25, 0.3];
const GRID_LIMIT = [0, 30, 30, 16, 10];
/** Uniform on [min, max] in a million steps: fast-check's doubles crowd at 0 and tiny values, which make every latency alike. */
const double = (min: number, max: number) => fc.integer({ min: 0, max: 1_000_000 }).map((step) => min + ((max - min) * step) / 1_000_000);

export interface Case {
  readonly spec: ModelSpec;
  /**
   * The budget as a share of what the answer without a budget spends above the floor's own cost (so that it binds
   * often), or null for none; a share below 0 leaves less than the floor costs.
   */
  readonly budgetShare: number | null;
  readonly difficulty: number;
  readonly players: readonly { readonly id: string; readonly latency: number | number[] }[];
  readonly rules: Parameters<typeof rulesOf>[0];
}

const latencyArbitrary = fc.oneof(
  double(0, 300),
  fc.array(double(0, 300), { minLength: 1, maxLength: 3 }),
);

export const caseArbitrary: fc.Arbitrary<Case> = fc.integer({ min: 1, max: 4 }).chain((count) =>
  fc
    .record({
      spec: modelSpecArbitrary,
      difficulty: double(0, 2),
      latencies: fc.array(latencyArbitrary, { minLength: count, maxLength: count }),
      copies: fc.array(fc.integer({ min: 0, max: 3 }), { minLength: count, maxLength: count }),
      names: fc.shuffledSubarray(['ash', 'birch', 'cedar', 'dune', 'elm', 'fen'], { minLength: count, maxLength: count }),
      stepIndex: fc.integer({ min: 0, max: STEPS.length - 1 }),
      floorAt: double(0.5, 1.5),
      budgetBelowFloor: fc.boolean(),
      points: fc.integer({ min: 1, max: GRID_LIMIT[count] as number }),
      capExtra: fc.oneof(fc.constant(0), double(0, 0.99)),
      ratio: fc.option(fc.oneof(double(1, 1.5), double(1, 2.5)), { nil: null }),
      budgetShare: fc.option(double(0, 1.2), { nil: null }),
      limit: fc.oneof(fc.constant(null), fc.constant(null), double(150, 320)),
      soft: fc.option(fc.record({ share: double(0.05, 0.95), fraction: double(0.1, 0.9) }), { nil: null }),
      target: fc.oneof(
        fc.constant({ kind: 'best_connected' as const }),
        fc.constant({ kind: 'best_connected' as const }),
        double(0, 300).map((latency) => ({ kind: 'reference_latency' as const, latency_ms: latency })),
        double(0.05, 0.95).map((probability) => ({ kind: 'fixed' as const, probability })),
      ),
      estimator: fc.oneof(fc.constant<'all_samples' | 'median'>('all_samples'), fc.constant<'all_samples' | 'median'>('median'), double(0, 100).map((percentile) => ({ percentile }))),
    })
    .map((drawn) => {
      const step = STEPS[drawn.stepIndex] as number;
      // Floor 1 most often; else a multiple of the step near it (below 1, steps below 1 are free and the step that
      // crosses 1 costs less than a step when 1 is not on the grid).
      const floor = drawn.floorAt < 0.9 && Math.abs(1 / step - Math.round(1 / step)) < 1e-9 ? 1 : Number((Math.max(1, Math.round(drawn.floorAt / step)) * step).toFixed(10));
      const cap = Number((floor + (drawn.points - 1) * step + drawn.capExtra * step).toFixed(10));
      // Some players copy another's latencies: identical curves, which only ids can tell apart.
      const latencies = drawn.latencies.map((latency, index) => {
        const source = drawn.copies[index] as number;
        return source < index && source !== 0 ? (drawn.latencies[source] as number | number[]) : latency;
      });
      return {
        spec: drawn.spec,
        budgetShare: drawn.budgetShare === null ? null : drawn.budgetBelowFloor && drawn.budgetShare < 0.03 ? -0.5 : drawn.budgetShare,
        difficulty: drawn.difficulty,
        players: latencies.map((latency, index) => ({ id: drawn.names[index] as string, latency })),
        rules: {
          scale_floor: floor,
          scale_cap: cap,
          quantisation_step: step,
          max_scale_ratio: drawn.ratio,
          assistance_budget: null,
          latency_limit_ms: drawn.limit,
          soft_cap: drawn.soft === null || cap - floor < 1e-6 ? null : { above: floor + drawn.soft.share * (cap - floor), fraction: drawn.soft.fraction },
          target: drawn.target,
          latency_estimator: drawn.estimator,
        },
      };
    }),
);

/** The latencies the estimator leaves (R type 7 quantile written out), and the estimate that decides eligibility. */
function estimated(latency: number | number[], estimator: Case['rules']['latency_estimator']): { latencies: number[]; estimate: number } {
  if (typeof latency === 'number') return { latencies: [latency], estimate: latency };
  if (latency.length === 1 || estimator === undefined || estimator === 'all_samples') {
    return { latencies: latency, estimate: latency.reduce((sum, value) => sum + value, 0) / latency.length };
  }
  const sorted = [...latency].sort((left, right) => left - right);
  const probability = estimator === 'median' ? 0.5 : estimator.percentile / 100;
  const position = (sorted.length - 1) * probability;
  const lower = Math.floor(position);
  const upper = Math.min(lower + 1, sorted.length - 1);
  const value = (sorted[lower] as number) + (position - lower) * ((sorted[upper] as number) - (sorted[lower] as number));
  return { latencies: [value], estimate: value };
}

/** The budget a case asks for: its share of what the answer without a budget spends above the floor's own cost. */
function budgetFor(drawn: Case, lobby: LobbyFile): number | null {
  if (drawn.budgetShare === null) return null;
  const free = balanceLobby(lobby, compiled(drawn.spec), rulesOf(drawn.rules));
  if (free.status === 'rejected') return 0;
  const floor = drawn.rules.scale_floor ?? 1;
  const floorCost = free.summary.eligible_players * Math.max(0, floor - 1);
  return Math.max(0, drawn.budgetShare < 0 ? floorCost * 0.5 : floorCost + drawn.budgetShare * (free.summary.assistance - floorCost));
}

/** Compare the solver's answer for a generated lobby with enumeration; returns the solver's result. */
export function checkAgainstEnumeration(drawn: Case): BalanceResult {
  const lobby: LobbyFile = {
    format: 'lagparity/lobby@1',
    match_id: 'exhaustive',
    attribute: 'hit_area',
    difficulty: drawn.difficulty,
    players: drawn.players.map((player) => ({ id: player.id, latency_ms: player.latency })),
  };
  const rules = rulesOf({ ...drawn.rules, assistance_budget: budgetFor(drawn, lobby) });
  const eligible: (ReferencePlayer & { index: number })[] = [];
  drawn.players.forEach((player, index) => {
    const { latencies, estimate } = estimated(player.latency, rules.latency_estimator);
    if (rules.latency_limit_ms === null || estimate <= rules.latency_limit_ms) eligible.push({ id: player.id, latencies, index });
  });
  const result = balanceLobby(lobby, compiled(drawn.spec), rules);
  if (eligible.length === 0) {
    expect(result.status).toBe('rejected');
    return result;
  }
  const spec = rules.target;
  const target =
    spec.kind === 'fixed'
      ? spec.probability
      : spec.kind === 'reference_latency'
        ? referenceCurve(drawn.spec, drawn.difficulty, [spec.latency_ms])(1)
        : Math.max(...eligible.map((player) => referenceCurve(drawn.spec, drawn.difficulty, player.latencies)(1)));
  if (!(target > 0 && target < 1)) {
    // A prediction of exactly 1 or 0 in floating point: no scale can be told from another.
    expect(result.status === 'rejected' ? result.issues.map((issue) => issue.code) : []).toEqual(['target_out_of_range']);
    return result;
  }
  const reference = referenceAnswer(drawn.spec, drawn.difficulty, eligible, rules, target);
  if (!reference.feasible) {
    expect(result.status).toBe('rejected');
    if (result.status === 'rejected') expect(result.issues.map((issue) => issue.code)).toEqual(['budget_below_floor']);
    return result;
  }
  if (result.status === 'rejected') throw new Error(`solver rejected a lobby with a feasible answer: ${JSON.stringify(result.issues)}`);
  expect(result.target).toBeCloseTo(target, 12); // the definition's target, written out in reference-answer.ts
  const scales = eligible.map((player) => (result.players[player.index] as (typeof result.players)[number]).scale);
  const curves = eligible.map((player) => referenceCurve(drawn.spec, drawn.difficulty, player.latencies));
  const objective = scales.map((scale, index) => Math.min((curves[index] as (s: number) => number)(scale), target)).sort((a, b) => a - b);
  objective.forEach((value, index) => expect(Math.abs(value - (reference.objective[index] as number))).toBeLessThanOrEqual(1e-12)); // enumeration
  const assistance = scales.reduce((sum, scale) => sum + Math.max(scale - 1, 0), 0);
  expect(Math.abs(assistance - reference.assistance)).toBeLessThanOrEqual(1e-9); // enumeration
  const same = (left: readonly number[], right: readonly number[]) => left.every((value, index) => Math.abs(value - (right[index] as number)) <= 1e-9);
  expect(reference.ties.some((tie) => same(tie, scales))).toBe(true);
  // Ties only between identical curves: the ids decide, so the solver must pick the reference's vector.
  const key = (index: number) => JSON.stringify((eligible[index] as ReferencePlayer).latencies);
  const canonical = (vector: readonly number[]) => {
    const groups = new Map<string, number[]>();
    vector.forEach((value, index) => groups.set(key(index), [...(groups.get(key(index)) ?? []), value]));
    return [...groups.entries()].map(([group, values]) => `${group}:${values.sort((a, b) => a - b).join(',')}`).sort().join('|');
  };
  if (reference.optimal === 1 || reference.ties.every((tie) => canonical(tie) === canonical(reference.scales))) expect(same(scales, reference.scales)).toBe(true);
  return result;
}
