import fc from 'fast-check';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { compileModel } from '../../src/model/compile.js';
import { type BalanceResult, balanceLobby } from '../../src/solver/balance-lobby.js';
import type { CompiledRules } from '../../src/solver/rules.js';
import type { LobbyFile } from '../../src/formats/lobby-file.js';
import { MATCHES, demoLobbyPaths, readJson } from '../helpers/demo.js';
import { referenceCurve } from './reference-answer.js';
import { type ModelSpec, compiled, lobbyLatenciesArbitrary, lobbyOf, modelSpecArbitrary, rulesArbitrary, rulesOf, teamsArbitrary } from './arbitraries.js';

type Solved = Exclude<BalanceResult, { status: 'rejected' }>;

const caseArbitrary = (points: boolean) =>
  fc
    .tuple(modelSpecArbitrary, rulesArbitrary, lobbyLatenciesArbitrary(points), fc.double({ min: 0, max: 2, noNaN: true }))
    .chain(([spec, rules, latencies, difficulty]) => teamsArbitrary(latencies.length).map((teams) => ({ spec, rules, latencies, teams, difficulty })));

/** Solve a generated case; a rejection is allowed only for the two reasons the rules and lobby can cause. */
function solve(model: ModelSpec, rulesInput: Parameters<typeof rulesOf>[0], lobby: LobbyFile): { result: Solved; rules: CompiledRules } | null {
  const rules = rulesOf(rulesInput);
  const result = balanceLobby(lobby, compiled(model), rules, { views: { ordering: true } });
  if (result.status === 'rejected') {
    const codes = result.issues.map((issue) => issue.code);
    const eligible = lobby.players.filter((player) => rules.latency_limit_ms === null || estimateOf(player.latency_ms, rules) <= rules.latency_limit_ms).length;
    const floorCost = eligible * Math.max(0, rules.scale_floor - 1);
    if (codes[0] === 'no_eligible_player') expect(eligible).toBe(0);
    else if (codes[0] === 'target_out_of_range') {
      // Only for a target of exactly 1 or 0 in floating point (written out independently).
      const spec = rules.target;
      const eligibleCurves = lobby.players.filter((player) => rules.latency_limit_ms === null || estimateOf(player.latency_ms, rules) <= rules.latency_limit_ms).map((player) => referenceCurve(model, lobby.difficulty as number, estimateSamples(player.latency_ms, rules)));
      const target = spec.kind === 'fixed' ? spec.probability : spec.kind === 'reference_latency' ? referenceCurve(model, lobby.difficulty as number, [spec.latency_ms])(1) : Math.max(...eligibleCurves.map((curve) => curve(1)));
      expect(target === 1 || target === 0).toBe(true);
    }
    else {
      expect(codes).toEqual(['budget_below_floor']);
      expect(floorCost).toBeGreaterThan(rules.assistance_budget ?? Infinity);
    }
    return null;
  }
  return { result, rules };
}

/** The latencies a player's curve averages over under the rules' estimator. */
function estimateSamples(latency: number | number[], rules: CompiledRules): number[] {
  return typeof latency === 'number' || rules.latency_estimator === 'all_samples' ? (typeof latency === 'number' ? [latency] : latency) : [estimateOf(latency, rules)];
}

/** Independent latency estimate: mean, or R type-7 quantile written out here. */
function estimateOf(latency: number | number[], rules: CompiledRules): number {
  if (typeof latency === 'number') return latency;
  const estimator = rules.latency_estimator;
  if (estimator === 'all_samples') return latency.reduce((sum, value) => sum + value, 0) / latency.length;
  const sorted = [...latency].sort((left, right) => left - right);
  const probability = estimator === 'median' ? 0.5 : estimator.percentile / 100;
  const position = (sorted.length - 1) * probability;
  const lower = Math.floor(position);
  const upper = Math.min(lower + 1, sorted.length - 1);
  return (sorted[lower] as number) + (position - lower) * ((sorted[upper] as number) - (sorted[lower] as number));
}

const eligibleOf = (result: Solved) => result.players.filter((player) => player.eligible);

describe('balanceLobby() invariants (seeded fast-check, schema-valid models, lobbies of 1-64 players and rules)', () => {
  it('property (400 runs): every scale lies within floor and cap; the ratio limit and the budget hold', () => {
    fc.assert(
      fc.property(caseArbitrary(false), ({ spec, rules: input, latencies, teams, difficulty }) => {
        const solved = solve(spec, input, lobbyOf(latencies, teams, difficulty));
        if (solved === null) return;
        const { result, rules } = solved;
        const scales = eligibleOf(result).map((player) => player.scale);
        for (const scale of scales) {
          expect(scale).toBeGreaterThanOrEqual(rules.scale_floor);
          expect(scale).toBeLessThanOrEqual(rules.scale_cap);
        }
        if (rules.max_scale_ratio !== null) expect(Math.max(...scales) / Math.min(...scales)).toBeLessThanOrEqual(rules.max_scale_ratio * (1 + 1e-12));
        const used = scales.reduce((sum, scale) => sum + Math.max(0, scale - 1), 0);
        if (rules.assistance_budget !== null) expect(used).toBeLessThanOrEqual(rules.assistance_budget + 1e-12);
        if (rules.quantisation_step !== null) {
          for (const scale of scales) expect(Math.abs(scale / rules.quantisation_step - Math.round(scale / rules.quantisation_step))).toBeLessThan(1e-6);
        }
      }),
      { seed: 4201, numRuns: 400 },
    );
  });

  it('property (400 runs): a player no constraint binds has E(scale) equal to the target within 1e-9', () => {
    fc.assert(
      fc.property(caseArbitrary(false), ({ spec, rules: input, latencies, teams, difficulty }) => {
        const solved = solve(spec, input, lobbyOf(latencies, teams, difficulty));
        if (solved === null) return;
        for (const player of solved.result.players) if (player.binding === 'none') expect(Math.abs(player.expected_after - solved.result.target)).toBeLessThanOrEqual(1e-9);
      }),
      { seed: 4202, numRuns: 400 },
    );
  });

  it('property (300 runs): with no rule but the floor and a cap of 1e300, every eligible player reaches the target within 1e-9', () => {
    fc.assert(
      fc.property(modelSpecArbitrary, lobbyLatenciesArbitrary(false), fc.constantFrom<'all_samples' | 'median'>('all_samples', 'median'), (spec, latencies, estimator) => {
        const rules = rulesOf({ scale_cap: 1e300, latency_estimator: estimator });
        const result = balanceLobby(lobbyOf(latencies), compiled(spec), rules);
        if (result.status === 'rejected') {
          // Refused only when the best-connected player's prediction is exactly 1 in floating point (written out independently).
          const best = Math.max(...latencies.map((latency) => referenceCurve(spec, 1, estimateSamples(latency, rules))(1)));
          expect([result.issues.map((issue) => issue.code), best]).toEqual([['target_out_of_range'], 1]);
          return;
        }
        for (const player of result.players) {
          expect(player.binding).toBe('none');
          expect(Math.abs(player.expected_after - result.target)).toBeLessThanOrEqual(1e-9);
        }
      }),
      { seed: 4203, numRuns: 300 },
    );
  });

  it('property (400 runs): with point latencies a higher-latency player never gets a smaller scale', () => {
    fc.assert(
      fc.property(caseArbitrary(true), ({ spec, rules: input, latencies, teams, difficulty }) => {
        const solved = solve(spec, input, lobbyOf(latencies, teams, difficulty));
        if (solved === null) return;
        const players = [...eligibleOf(solved.result)].sort((left, right) => left.latency_estimate_ms - right.latency_estimate_ms);
        for (let index = 1; index < players.length; index += 1) expect((players[index] as (typeof players)[number]).scale).toBeGreaterThanOrEqual((players[index - 1] as (typeof players)[number]).scale);
      }),
      { seed: 4204, numRuns: 400 },
    );
  });

  it('property (400 runs): with point latencies and no soft cap, a worse-connected player ends above a better-connected one by at most the one-step bound', () => {
    fc.assert(
      fc.property(caseArbitrary(true), ({ spec, rules: input, latencies, teams, difficulty }) => {
        const solved = solve(spec, { ...input, soft_cap: null }, lobbyOf(latencies, teams, difficulty));
        if (solved === null) return;
        const ordering = solved.result.views?.ordering;
        if (ordering === undefined) throw new Error('ordering view missing');
        // Without a step the bound is 0: only rounding in the inverse separates two players.
        expect(ordering.largest_overtake).toBeLessThanOrEqual(ordering.step_gain + 1e-9);
      }),
      { seed: 4205, numRuns: 400 },
    );
  });

  it('property (300 runs): largest_overtake is the largest amount by which a player ends above one with a higher expected performance before', () => {
    fc.assert(
      fc.property(caseArbitrary(false), ({ spec, rules: input, latencies, teams, difficulty }) => {
        const solved = solve(spec, input, lobbyOf(latencies, teams, difficulty));
        if (solved === null) return;
        const players = eligibleOf(solved.result);
        let largest = 0;
        for (const worse of players) for (const better of players) if (better.expected_before > worse.expected_before) largest = Math.max(largest, worse.expected_after - better.expected_after);
        expect(solved.result.views?.ordering?.largest_overtake).toBe(largest); // the pairwise definition, written out
      }),
      { seed: 4206, numRuns: 300 },
    );
  });

  it('property (300 runs): permuting the players changes nothing but their order', () => {
    fc.assert(
      fc.property(
        caseArbitrary(false).chain((generated) => fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: generated.latencies.length, maxLength: generated.latencies.length }).map((keys) => ({ ...generated, keys }))),
        ({ spec, rules: input, latencies, teams, difficulty, keys }) => {
          const lobby = lobbyOf(latencies, teams, difficulty);
          const permutation = keys.map((key, index) => ({ key, index })).sort((left, right) => left.key - right.key || left.index - right.index).map((entry) => entry.index);
          const shuffled: LobbyFile = { ...lobby, players: permutation.map((index) => lobby.players[index] as LobbyFile['players'][number]) };
          const rules = rulesOf(input);
          const first = balanceLobby(lobby, compiled(spec), rules);
          const second = balanceLobby(shuffled, compiled(spec), rules);
          expect(second.status).toBe(first.status);
          if (first.status === 'rejected' || second.status === 'rejected') return;
          const byId = (result: Solved) => Object.fromEntries(result.players.map((player) => [player.id, player]));
          expect(byId(second)).toEqual(byId(first));
          expect(second.summary).toEqual(first.summary);
          expect([second.target, second.level]).toEqual([first.target, first.level]);
          expect(balanceLobby(lobby, compiled(spec), rules)).toEqual(first); // deterministic
        },
      ),
      { seed: 4207, numRuns: 300 },
    );
  });

  it('property (400 runs): no NaN or Infinity anywhere in the result', () => {
    const walk = (value: unknown, path: string): void => {
      if (typeof value === 'number') {
        if (!Number.isFinite(value)) throw new Error(`${path} is ${value}`);
      } else if (Array.isArray(value)) value.forEach((item, index) => walk(item, `${path}[${index}]`));
      else if (value !== null && typeof value === 'object') for (const [key, item] of Object.entries(value)) walk(item, `${path}.${key}`);
    };
    fc.assert(
      fc.property(caseArbitrary(false), ({ spec, rules: input, latencies, teams, difficulty }) => {
        walk(balanceLobby(lobbyOf(latencies, teams, difficulty), compiled(spec), rulesOf(input)), 'result');
      }),
      { seed: 4208, numRuns: 400 },
    );
  });
});

describe('balanceLobby() summary', () => {
  const spec: ModelSpec = { link: 'logit', form: 'log', intercept: 0.5, latency: -0.01, scale: 1.5, difficulty: 0, interaction: 0 };

  it("reports Jain's index and the team gap as the definition gives them, before and after", () => {
    const lobby = lobbyOf([10, 60, 20, 110], ['red', 'red', 'blue', 'blue']);
    const result = balanceLobby(lobby, compiled(spec), rulesOf({ scale_cap: 1.2 }));
    if (result.status === 'rejected') throw new Error('rejected');
    // By hand from the logistic: before = 1 / (1 + exp(-(0.5 - 0.01 latency))).
    const before = [10, 60, 20, 110].map((latency) => 1 / (1 + Math.exp(-(0.5 - 0.01 * latency))));
    const after = result.players.map((player) => player.expected_after);
    // Jain, Chiu and Hawe (1984): J = (sum x)^2 / (n sum x^2).
    const jain = (values: number[]) => values.reduce((sum, value) => sum + value, 0) ** 2 / (values.length * values.reduce((sum, value) => sum + value * value, 0));
    expect(result.summary.jain_before).toBeCloseTo(jain(before), 14); // Jain et al. (1984) definition
    expect(result.summary.jain_after).toBeCloseTo(jain(after), 14); // Jain et al. (1984) definition
    const mean = (values: number[]) => values.reduce((sum, value) => sum + value, 0) / values.length;
    const redBefore = mean([before[0] as number, before[1] as number]);
    const blueBefore = mean([before[2] as number, before[3] as number]);
    expect(result.summary.teams.map((team) => team.team)).toEqual(['blue', 'red']);
    expect(result.summary.team_gap_before).toBeCloseTo(Math.abs(redBefore - blueBefore), 14); // difference of team means, by hand
    expect(result.summary.team_gap_after).toBeCloseTo(Math.abs(mean([after[0] as number, after[1] as number]) - mean([after[2] as number, after[3] as number])), 14); // by hand
    expect(result.summary.largest_gap_before).toBeCloseTo((before[0] as number) - (before[3] as number), 14); // by hand
  });

  it("gives Jain's index 1 for equal shares and a team gap of null without two teams", () => {
    const result = balanceLobby(lobbyOf([40, 40, 40]), compiled(spec), rulesOf({}));
    if (result.status === 'rejected') throw new Error('rejected');
    expect(result.summary.jain_before).toBe(1); // Jain et al. (1984): equal shares give 1
    expect(result.summary.team_gap_before).toBeNull();
  });
});

describe('balanceLobby() on the bundled demo', () => {
  const model = compileModel(readJson(join(MATCHES, 'model.json')));
  const rules = rulesOf(readJson(join(MATCHES, 'league-rules.json')) as Parameters<typeof rulesOf>[0]);
  it('solves every demo lobby, reports the far player as ineligible or capped, and keeps the views off by default', () => {
    if (!model.ok) throw new Error('model');
    for (const path of demoLobbyPaths()) {
      const result = balanceLobby(readJson(path) as LobbyFile, model.value, rules);
      expect(result.status).not.toBe('rejected');
      if (result.status === 'rejected') continue;
      expect(result.views).toBeUndefined();
      for (const player of result.players) if (!player.eligible) expect([player.scale, player.binding]).toEqual([1, 'ineligible']);
    }
  });

  it('adds exactly the views asked for', () => {
    if (!model.ok) throw new Error('model');
    const lobby = readJson(demoLobbyPaths()[0] as string) as LobbyFile;
    const result = balanceLobby(lobby, model.value, rules, { views: { duel: true, uncertainty: { draws: 20 } } });
    if (result.status === 'rejected') throw new Error('rejected');
    expect(Object.keys(result.views ?? {}).sort()).toEqual(['duel', 'uncertainty']);
    expect(result.views?.uncertainty?.draws).toBe(20);
  });
});
