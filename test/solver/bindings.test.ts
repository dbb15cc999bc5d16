/**
 * The binding labels' precedence (docs/method.md, section 3, "Labels"), one
 * case for each step of it, on the log-scale logit model with no
 * interaction whose inverse is closed form: the scale reaching level p at
 * latency l is exp((logit(p) - (0.5 - 0.01 l)) / 1.5).
 */
import { describe, expect, it } from 'vitest';
import { balanceLobby } from '../../src/solver/balance-lobby.js';
import { type ModelSpec, compiled, lobbyOf, rulesOf } from './arbitraries.js';

const spec: ModelSpec = { link: 'logit', form: 'log', intercept: 0.5, latency: -0.01, scale: 1.5, difficulty: 0, interaction: 0 };
/** The latency at which a player needs exactly `scale` to reach the target set by a player at 10 ms. */
const needing = (scale: number) => 10 + 150 * Math.log(scale);

function labels(latencies: (number | number[])[], rules: Parameters<typeof rulesOf>[0]): string[] {
  const result = balanceLobby(lobbyOf(latencies), compiled(spec), rulesOf(rules));
  if (result.status === 'rejected') throw new Error(JSON.stringify(result.issues));
  return result.players.map((player) => player.binding);
}

describe('labelPlayers() precedence', () => {
  it('1. ineligible before anything else', () => {
    expect(labels([10, 400], { latency_limit_ms: 200, scale_cap: 1.01 })).toEqual(['none', 'ineligible']);
  });

  it('2. at the target: none; above it: ratio when lifted above the ceiling, floor when unscaled already beats it', () => {
    // The player at 10 ms sets the target (none); with ratio 1.2 and the far player at 1.5, the near one is lifted to 1.25.
    expect(labels([10, needing(1.5)], { scale_cap: 2, max_scale_ratio: 1.2 })).toEqual(['ratio', 'none']);
    // A fixed target below everyone's unscaled performance: everyone stays at the floor, above the target.
    expect(labels([10, 40], { target: { kind: 'fixed', probability: 0.3 } })).toEqual(['floor', 'floor']);
  });

  it('3. below the target and below the ceiling: ratio at the ratio\'s largest scale, else budget', () => {
    // The soft cap grants the player needing 1.02 only 1.019, so nobody may go above 1.2 x 1.019: the player needing
    // 1.6 (granted 1.541) is held there by the ratio, and the player at 10 ms is lifted to 1.019.
    const held = balanceLobby(lobbyOf([10, needing(1.02), needing(1.6)]), compiled(spec), rulesOf({ scale_cap: 2, max_scale_ratio: 1.2, soft_cap: { above: 1.01, fraction: 0.9 } }));
    if (held.status === 'rejected') throw new Error('rejected');
    expect(held.players.map((player) => player.binding)).toEqual(['ratio', 'soft_cap', 'ratio']);
    expect(held.players[2]?.scale).toBeCloseTo(1.2 * (1.01 + 0.9 * (1.02 - 1.01)), 9); // ratio x the smallest grant, by hand
    expect(labels([10, needing(1.3), needing(1.4)], { scale_cap: 2, assistance_budget: 0.2 })).toEqual(['none', 'budget', 'budget']);
  });

  it('4. below the target at the ceiling: soft_cap, then cap, then quantisation', () => {
    expect(labels([10, needing(1.6)], { scale_cap: 2, soft_cap: { above: 1.2, fraction: 0.5 } })).toEqual(['none', 'soft_cap']);
    expect(labels([10, needing(1.6)], { scale_cap: 1.5 })).toEqual(['none', 'cap']);
    // The cap 1.37 is not a multiple of 0.05: a player needing 1.36 gets 1.35 because of the step, one needing 1.5 because of the cap.
    expect(labels([10, needing(1.36), needing(1.5)], { scale_cap: 1.37, quantisation_step: 0.05 })).toEqual(['none', 'quantisation', 'cap']);
    expect(labels([10, needing(1.36)], { scale_cap: 1.37 })).toEqual(['none', 'none']); // without a step, never quantisation
  });
});
