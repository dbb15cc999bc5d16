import { describe, expect, it } from 'vitest';
import { createRandomSource } from '../../../src/random.js';
import { balanceLobby } from '../../../src/solver/balance-lobby.js';
import { duelView } from '../../../src/solver/views/duel-view.js';
import { duelOutcome } from '../../../src/stats/duel.js';
import { compiled, lobbyOf, rulesOf } from '../arbitraries.js';

const model = compiled({ link: 'logit', form: 'log', intercept: 0.5, latency: -0.01, scale: 1.5, difficulty: 0, interaction: 0.002 });

function solvedLobby(latencies: number[], teams: (string | undefined)[] | undefined, rules = rulesOf({ scale_cap: 2, duel: { hits_to_win: 3, volleys: 'simultaneous' } })) {
  const result = balanceLobby(lobbyOf(latencies, teams), model, rules, { views: { duel: true } });
  if (result.status === 'rejected' || result.views?.duel === undefined) throw new Error('no duel view');
  return { result, duel: result.views.duel, rules };
}

describe('duelView()', () => {
  it('pairs only opposing players, and every pair in a free-for-all', () => {
    expect(solvedLobby([10, 40, 70, 100], ['red', 'red', 'blue', 'blue']).duel.pairs).toHaveLength(4);
    expect(solvedLobby([10, 40, 70, 100], undefined).duel.pairs).toHaveLength(6); // C(4, 2)
  });

  it('leaves out a player above the eligibility limit (never scaled, outside every fairness figure)', () => {
    const rules = rulesOf({ scale_cap: 2, latency_limit_ms: 120, duel: { hits_to_win: 3, volleys: 'simultaneous' } });
    const { result, duel } = solvedLobby([10, 40, 70, 300], undefined, rules);
    const ineligible = result.players.find((player) => !player.eligible);
    expect(ineligible).toBeDefined();
    expect(duel.pairs).toHaveLength(3); // C(3, 2): the three eligible players
    expect(duel.pairs.some((pair) => pair.a === ineligible?.id || pair.b === ineligible?.id)).toBe(false);
  });

  it('gives for each pair what duelOutcome gives for the players\' hit probabilities, a tie counted as half', () => {
    const { result, duel } = solvedLobby([10, 40, 70, 150], ['red', 'blue', 'red', 'blue']);
    const byId = new Map(result.players.map((player) => [player.id, player]));
    for (const pair of duel.pairs) {
      const a = byId.get(pair.a);
      const b = byId.get(pair.b);
      if (a === undefined || b === undefined) throw new Error('unknown player');
      const before = duelOutcome(a.expected_before, b.expected_before, 3, 'simultaneous');
      const after = duelOutcome(a.expected_after, b.expected_after, 3, 'simultaneous');
      expect(pair.a_wins_before).toBeCloseTo(before.aWins + before.tie / 2, 15); // duelOutcome (negative-binomial sums, tested in test/stats)
      expect(pair.a_wins_after).toBeCloseTo(after.aWins + after.tie / 2, 15); // duelOutcome
    }
    const worst = Math.max(...duel.pairs.map((pair) => Math.abs(pair.a_wins_before - 0.5)));
    expect(duel.worst_deviation_before).toBe(worst);
    expect(duel.worst_deviation_after).toBeLessThan(duel.worst_deviation_before); // compensation brings the odds closer to even
  });

  it('matches a seeded Monte Carlo race between the best- and worst-connected players within 4 standard errors', () => {
    const { result, duel } = solvedLobby([10, 180], ['red', 'blue'], rulesOf({ scale_cap: 1.3, duel: { hits_to_win: 4, volleys: 'alternating' } }));
    const [a, b] = result.players;
    if (a === undefined || b === undefined) throw new Error('players');
    const random = createRandomSource(77);
    const duels = 40_000;
    const simulate = (pA: number, pB: number) => {
      let wins = 0;
      for (let duelIndex = 0; duelIndex < duels; duelIndex += 1) {
        let hitsA = 0;
        let hitsB = 0;
        for (;;) {
          if (random() < pA && ++hitsA === 4) {
            wins += 1;
            break;
          }
          if (random() < pB && ++hitsB === 4) break;
        }
      }
      return wins / duels;
    };
    for (const [side, pA, pB] of [
      ['before', a.expected_before, b.expected_before],
      ['after', a.expected_after, b.expected_after],
    ] as const) {
      const exact = side === 'before' ? duel.pairs[0]?.a_wins_before : duel.pairs[0]?.a_wins_after;
      if (exact === undefined) throw new Error('pair');
      const standardError = Math.sqrt((exact * (1 - exact)) / duels);
      expect(Math.abs(simulate(pA, pB) - exact)).toBeLessThan(4 * standardError); // seeded Monte Carlo of the race
    }
  });

  it('reports zero deviation with nobody to duel', () => {
    const view = duelView([{ id: 'solo', team: 'red', expected_before: 0.4, expected_after: 0.5 }], rulesOf({}));
    expect([view.pairs.length, view.worst_deviation_before, view.worst_deviation_after]).toEqual([0, 0, 0]);
  });
});
