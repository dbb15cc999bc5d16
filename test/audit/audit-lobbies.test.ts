import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { auditLobbies, auditLobby } from '../../src/audit/audit-lobbies.js';
import { auditReportSchema } from '../../src/audit/audit-schema.js';
import { compileModel } from '../../src/model/compile.js';
import { defaultRules } from '../../src/solver/rules.js';
import { parseLobby } from '../../src/formats/lobby.js';
import { duelWinProbability } from '../../src/stats/duel.js';
import { MATCHES, readJson } from '../helpers/demo.js';

const compiled = compileModel(readJson(join(MATCHES, 'ground-truth.model.json')));
if (!compiled.ok) throw new Error('the ground-truth model must compile');
const model = compiled.value;

function lobby(players: { id: string; team?: string; latency_ms: number | number[] }[]) {
  return parseLobby({ format: 'lagparity/lobby@1', match_id: 'test', attribute: 'hit_area', difficulty: 'veteran', players });
}

describe('auditLobby()', () => {
  it('passes a lobby every player of which reaches the target', () => {
    const audit = auditLobby(lobby([{ id: 'a', team: 'x', latency_ms: 20 }, { id: 'b', team: 'y', latency_ms: 40 }]), model, defaultRules());
    expect(audit.verdict).toBe('within_rules');
    expect(audit.reasons).toEqual([]);
  });

  it('fails a player held by the cap, naming the gap, the limit and the cap', () => {
    const audit = auditLobby(lobby([{ id: 'a', team: 'x', latency_ms: 20 }, { id: 'far', team: 'y', latency_ms: 200 }]), model, defaultRules({ scale_cap: 1.3 }));
    const gap = audit.reasons.find((entry) => entry.rule === 'accepted_gap');
    expect(gap).toMatchObject({ player: 'far', binding: 'cap', limit: 0.02 });
    expect(gap?.message).toMatch(/^residual gap 0\.\d{3} above the accepted 0\.020 for player "far", held by the cap 1\.30$/);
    const player = audit.players.find((entry) => entry.id === 'far');
    expect(gap?.value).toBe(player?.gap_to_target);
  });

  it('judges the equal-skill duel from the duel probabilities of the two players', () => {
    const audit = auditLobby(lobby([{ id: 'a', team: 'x', latency_ms: 20 }, { id: 'far', team: 'y', latency_ms: 200 }]), model, defaultRules({ scale_cap: 1.3 }));
    const [a, far] = audit.players;
    const expected = Math.abs(duelWinProbability(a?.expected_after ?? 0, far?.expected_after ?? 0, 3, 'simultaneous') - 0.5); // the duel race, src/stats/duel.ts (tested against a direct sum and Monte Carlo)
    expect(audit.figures?.worst_duel_deviation_after).toBeCloseTo(expected, 12);
    expect(audit.reasons.some((entry) => entry.rule === 'accepted_duel_deviation')).toBe(expected > 0.05);
  });

  it('fails a player above the eligibility limit and leaves them unscaled', () => {
    const audit = auditLobby(lobby([{ id: 'a', latency_ms: 20 }, { id: 'b', latency_ms: 300 }]), model, defaultRules({ latency_limit_ms: 220 }));
    expect(audit.reasons[0]).toMatchObject({ rule: 'latency_limit_ms', player: 'b', value: 300, limit: 220 });
    expect(audit.players[1]).toMatchObject({ binding: 'ineligible', scale: 1 });
  });

  it('fails the spike exploit under all_samples but not under a low percentile', () => {
    const spiky = Array.from({ length: 32 }, (_, index) => 30 + (index % 5));
    const players = [{ id: 'a', team: 'x', latency_ms: 20 }, { id: 'b', team: 'y', latency_ms: spiky }];
    const mean = auditLobby(lobby(players), model, defaultRules({ latency_limit_ms: 200, latency_estimator: 'all_samples' }));
    const low = auditLobby(lobby(players), model, defaultRules({ latency_limit_ms: 200, latency_estimator: { percentile: 10 } }));
    expect(mean.reasons.some((entry) => entry.rule === 'accepted_exploit_gain' && entry.player === 'b')).toBe(true);
    expect(low.reasons.some((entry) => entry.rule === 'accepted_exploit_gain')).toBe(false);
    expect(low.players[1]?.spike_gain).toBeLessThan(0.01);
    expect(mean.players[0]?.spike_gain).toBeNull(); // a single latency value has no samples to spike
  });

  it('explains rounding: a step that costs more than the accepted gap is a reason naming the step and the gap without it', () => {
    // A step of 0.25 leaves players needing up to about 1.24 at 1.0; without the step everyone reaches the target.
    const players = [{ id: 'a', team: 'x', latency_ms: 20 }, { id: 'b', team: 'y', latency_ms: 55 }, { id: 'c', team: 'y', latency_ms: 70 }];
    const audit = auditLobby(lobby(players), model, defaultRules({ scale_cap: 2, quantisation_step: 0.25 }));
    const rounding = audit.reasons.find((entry) => entry.rule === 'quantisation_step');
    const unrounded = auditLobby(lobby(players), model, defaultRules({ scale_cap: 2 }));
    const worstWith = Math.max(...audit.players.map((player) => player.gap_to_target));
    const worstWithout = Math.max(0, ...unrounded.players.map((player) => player.gap_to_target));
    expect(audit.figures?.worst_gap_without_step).toBeCloseTo(worstWithout, 15); // the same lobby solved without the step
    expect(rounding).toMatchObject({ binding: 'quantisation', limit: 0.02 });
    expect(rounding?.value).toBeCloseTo(worstWith - worstWithout, 15);
    expect(rounding?.message).toMatch(/^the quantisation step 0\.25 costs this lobby 0\.\d{3} of hit probability: the worst residual gap is 0\.\d{3} with it and 0\.000 without it/);
    const gap = audit.reasons.find((entry) => entry.rule === 'accepted_gap' && entry.binding === 'quantisation');
    expect(gap?.message).toMatch(/held by the quantisation step 0\.25 \(without the step 0\.25: 0\.000\)$/);
  });

  it('judges one step\'s effect against accepted_step_gain only when there is a step', () => {
    const players = [{ id: 'a', team: 'x', latency_ms: 20 }, { id: 'b', team: 'y', latency_ms: 60 }];
    const coarse = auditLobby(lobby(players), model, defaultRules({ scale_cap: 2, quantisation_step: 0.25, accepted_step_gain: 0.01 }));
    const stepGain = coarse.reasons.find((entry) => entry.rule === 'accepted_step_gain');
    expect(stepGain?.value).toBe(coarse.figures?.step_gain);
    expect(stepGain?.value).toBeGreaterThan(0.01);
    const continuous = auditLobby(lobby(players), model, defaultRules({ scale_cap: 2, accepted_step_gain: 0.01 }));
    expect(continuous.figures).toMatchObject({ step_gain: 0, worst_gap_without_step: null });
    expect(continuous.reasons.some((entry) => entry.rule === 'accepted_step_gain')).toBe(false);
  });

  it('reports a lobby the model cannot solve as a failure with the reason', () => {
    const audit = auditLobby(parseLobby({ format: 'lagparity/lobby@1', match_id: 'm', attribute: 'hit_area', difficulty: 'nightmare', players: [{ id: 'a', latency_ms: 20 }] }), model, defaultRules());
    expect(audit).toMatchObject({ verdict: 'outside_rules', figures: null, reasons: [{ rule: 'solvable' }] });
  });
});

describe('auditLobbies()', () => {
  it('counts passes, ranks the worst lobby first and finds the constraint that binds most', () => {
    const entries = [
      { lobby: lobby([{ id: 'a', latency_ms: 20 }, { id: 'b', latency_ms: 40 }]), source: 'ok.lobby.json' },
      { lobby: { ...lobby([{ id: 'a', latency_ms: 20 }, { id: 'c', latency_ms: 160 }, { id: 'd', latency_ms: 190 }]), match_id: 'capped' }, source: 'capped.lobby.json' },
    ];
    const report = auditLobbies(entries, model, defaultRules({ scale_cap: 1.3 }));
    expect(auditReportSchema.safeParse(report).success).toBe(true);
    expect(report.summary).toMatchObject({ lobbies: 2, within_rules: 1, outside_rules: 1, most_binding: 'cap' });
    expect(report.summary.worst_first[0]?.match_id).toBe('capped');
    expect(report.summary.binding_counts.cap).toBe(2);
    expect(report.summary.failing_rules.accepted_gap).toBe(1);
    expect(report.caution).toMatch(/disclose it to the players/);
  });
});
