import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { balanceLobby } from '../../src/solver/balance-lobby.js';
import { rankLobbies } from '../../src/solver/rank-lobbies.js';
import { jainIndex } from '../../src/stats/jain-index.js';
import type { LobbyFile } from '../../src/formats/lobby-types.js';
import { type ModelSpec, compiled, lobbyOf, modelSpecArbitrary, rulesArbitrary, rulesOf } from './arbitraries.js';

const spec: ModelSpec = { link: 'logit', form: 'log', intercept: 0.5, latency: -0.01, scale: 1.5, difficulty: 0, interaction: 0 };

/** The figures the ranking must give a candidate, from balanceLobby's per-player results (the reference). */
function expectedFigures(lobby: LobbyFile, spec: ModelSpec, rules: ReturnType<typeof rulesOf>) {
  const result = balanceLobby(lobby, compiled(spec), rules);
  if (result.status === 'rejected') return null;
  const gaps = result.players.map((player) => Math.max(0, result.target - player.expected_after)).sort((a, b) => b - a);
  return { gaps, jain: jainIndex(result.players.map((player) => player.expected_after)), mean: result.players.reduce((sum, player) => sum + player.latency_estimate_ms, 0) / result.players.length };
}

describe('rankLobbies()', () => {
  const pool = lobbyOf([10, 20, 30, 40, 190, 200]);
  const ids = pool.players.map((player) => player.id);

  it('puts the candidate whose worst residual gap is smallest first (leximin of the gaps)', () => {
    const rules = rulesOf({ scale_cap: 1.3 });
    const candidates = [[ids[0], ids[4]], [ids[0], ids[1]], [ids[2], ids[5]]] as string[][];
    const ranking = rankLobbies(pool, candidates, compiled(spec), rules);
    if (ranking.status !== 'ranked') throw new Error('rejected');
    // Each lobby's target is its own best-connected player: 10 + 20 ms balance fully; 30 + 200 ms leaves a smaller gap
    // than 10 + 190 ms, since the 30 ms player sets a lower target.
    expect(ranking.ranked.map((entry) => entry.candidate)).toEqual([1, 2, 0]);
    const best = ranking.best;
    expect(best.status === 'rejected' ? [] : best.players.map((player) => player.id)).toEqual(candidates[1]);
    for (const entry of ranking.ranked) {
      const reference = expectedFigures({ ...pool, players: (candidates[entry.candidate] as string[]).map((id) => pool.players.find((player) => player.id === id) as LobbyFile['players'][number]) }, spec, rules);
      entry.gaps.forEach((gap, index) => expect(gap).toBeCloseTo(reference?.gaps[index] as number, 14)); // balanceLobby's gaps
      expect(entry.jain).toBeCloseTo(reference?.jain as number, 14); // Jain et al. (1984) via jainIndex
    }
  });

  it('breaks a tie in the gaps by Jain\'s index, then by the lower mean latency', () => {
    // Everyone reaches the target in both: equal gaps (all 0) and equal Jain's index (1); the nearer pair wins.
    const ranking = rankLobbies(pool, [[ids[2], ids[3]], [ids[0], ids[1]]] as string[][], compiled(spec), rulesOf({ scale_cap: 3 }));
    if (ranking.status !== 'ranked') throw new Error('rejected');
    expect(ranking.ranked.map((entry) => [entry.candidate, entry.worst_gap, entry.jain])).toEqual([[1, 0, 1], [0, 0, 1]]);
  });

  it('counts an ineligible player at scale 1 with their gap, and names them', () => {
    const ranking = rankLobbies(pool, [[ids[0], ids[5]], [ids[0], ids[3]]] as string[][], compiled(spec), rulesOf({ scale_cap: 3, latency_limit_ms: 195 }));
    if (ranking.status !== 'ranked') throw new Error('rejected');
    const withFar = ranking.ranked.find((entry) => entry.candidate === 0);
    expect(withFar?.ineligible).toEqual([ids[5]]);
    expect(ranking.ranked[0]?.candidate).toBe(1);
  });

  it('gives sampled players the figures balanceLobby gives them, under a robust estimator and under all_samples', () => {
    const sampled = lobbyOf([[10, 12, 60], [40, 41, 45, 90], [120, 130], [150, 151, 152, 190]]);
    const sampledIds = sampled.players.map((player) => player.id);
    for (const estimator of [{ percentile: 10 }, 'median', 'all_samples'] as const) {
      const rules = rulesOf({ scale_cap: 1.4, latency_estimator: estimator });
      const candidates = [sampledIds.slice(0, 3), sampledIds.slice(1)];
      const ranking = rankLobbies(sampled, candidates, compiled(spec), rules);
      if (ranking.status !== 'ranked') throw new Error('rejected');
      for (const entry of ranking.ranked) {
        const reference = expectedFigures({ ...sampled, players: sampled.players.filter((player) => (candidates[entry.candidate] as string[]).includes(player.id)) }, spec, rules);
        entry.gaps.forEach((gap, index) => expect(gap).toBeCloseTo(reference?.gaps[index] as number, 14)); // balanceLobby's gaps
        expect(entry.mean_latency_ms).toBeCloseTo(reference?.mean as number, 12);
      }
    }
  });

  it('refuses unknown, repeated or missing ids with their place', () => {
    const ranking = rankLobbies(pool, [['nobody'], [ids[0] as string, ids[0] as string], []], compiled(spec), rulesOf({}));
    expect(ranking.status).toBe('rejected');
    if (ranking.status === 'rejected') expect(ranking.issues.map((issue) => [issue.code, issue.location])).toEqual([['unknown_player', 'candidates[0][0]'], ['duplicate_player', 'candidates[1][1]'], ['empty_candidate', 'candidates[2]']]);
    const none = rankLobbies(pool, [], compiled(spec), rulesOf({}));
    expect(none.status === 'rejected' ? none.issues[0]?.code : null).toBe('no_candidates');
  });

  it('property (150 seeded runs): every candidate\'s figures are those of balanceLobby on it, and the order follows them', () => {
    fc.assert(
      fc.property(modelSpecArbitrary, rulesArbitrary, fc.array(fc.integer({ min: 0, max: 300_000 }).map((value) => value / 1000), { minLength: 4, maxLength: 16 }), fc.integer({ min: 1, max: 2 ** 30 }), (model, input, latencies, seed) => {
        const lobby = lobbyOf(latencies);
        const rules = rulesOf(input);
        let state = seed;
        const next = () => (state = (state * 1103515245 + 12345) % 2147483648) / 2147483648;
        const candidates = Array.from({ length: 4 }, () => lobby.players.filter(() => next() < 0.6).map((player) => player.id)).filter((candidate) => candidate.length > 0);
        if (candidates.length === 0) return;
        const ranking = rankLobbies(lobby, candidates, compiled(model), rules);
        if (ranking.status !== 'ranked') throw new Error('rejected');
        for (const entry of ranking.ranked) {
          const reference = expectedFigures({ ...lobby, players: (candidates[entry.candidate] as string[]).map((id) => lobby.players.find((player) => player.id === id) as LobbyFile['players'][number]) }, model, rules);
          if (reference === null) {
            expect(entry.status).toBe('rejected');
            continue;
          }
          expect(entry.gaps.length).toBe(reference.gaps.length);
          entry.gaps.forEach((gap, index) => expect(Math.abs(gap - (reference.gaps[index] as number))).toBeLessThanOrEqual(1e-12));
          expect(Math.abs((entry.jain as number) - reference.jain)).toBeLessThanOrEqual(1e-12);
        }
        for (let index = 1; index < ranking.ranked.length; index += 1) {
          const [before, after] = [ranking.ranked[index - 1], ranking.ranked[index]];
          if (before?.status === 'solved' && after?.status === 'solved') expect((before.worst_gap as number) <= (after.worst_gap as number)).toBe(true);
        }
      }),
      { seed: 1601, numRuns: 150 },
    );
  });
});
