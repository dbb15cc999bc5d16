import { describe, expect, it } from 'vitest';
import { parseTrialsCsv } from '../../src/formats/trials-csv.js';
import { assumeEnteredEffects } from '../../src/plan/assumed-model.js';
import { conditionOrders } from '../../src/plan/build-schedule.js';
import { crossConditions } from '../../src/plan/conditions.js';
import { playerSpreadFromTrials } from '../../src/plan/player-spread.js';
import { conditionPredictors, simulateTrials } from '../../src/plan/simulate-study.js';
import { createRandomSource } from '../../src/random.js';

const levels = { latency_ms: [0, 80, 160], scale: [1, 1.5], difficulty: ['standard', 'elite'] };

function simulatedPilot(sd: number, players: number, seed: number) {
  const truth = assumeEnteredEffects({ hit_rate: [0.65, 0.5], change_per_100ms: -0.15, scale_hit_rate: { scale: 1.5, hit_rate: 0.78 }, latency_x_log_scale: 0 }, levels, (field) => field);
  if (!truth.ok) throw new Error('effects');
  const conditions = crossConditions(levels);
  const shape = { difficulty: levels.difficulty, conditions, orders: conditionOrders(conditions.length, players, 3, seed).orders, attempts: 20 };
  return { trials: simulateTrials(shape, truth.value, conditionPredictors(shape, truth.value), sd, createRandomSource(seed)), truth: truth.value };
}

describe('playerSpreadFromTrials()', () => {
  it('recovers the players\' spread of a simulated pilot (sd 0.6, 80 players) within its sampling error', () => {
    const { trials, truth } = simulatedPilot(0.6, 80, 3);
    const spread = playerSpreadFromTrials(trials, truth.terms, 'logit');
    if (!spread.ok) throw new Error(JSON.stringify(spread.issues));
    expect(spread.value.players).toBe(80);
    // The SD of a normal sample SD is about sd / sqrt(2 (k - 1)) = 0.048 for 80 players; 3 of those, plus the intercepts' own noise.
    expect(Math.abs(spread.value.sd - 0.6)).toBeLessThan(0.15);
  });

  it('finds almost no spread where there is none', () => {
    const { trials, truth } = simulatedPilot(0, 40, 4);
    const spread = playerSpreadFromTrials(trials, truth.terms, 'logit');
    expect(spread.ok && spread.value.sd).toBeLessThan(0.12);
  });

  it('refuses a pilot with a player who hit every attempt, naming them', () => {
    const rows = ['player,latency_ms,scale,difficulty,hits,attempts'];
    for (const player of ['ash', 'bram', 'cove', 'dune']) {
      for (const latency of [0, 100]) for (const scale of [1, 1.5]) rows.push(`${player},${latency},${scale},standard,${player === 'cove' ? 10 : 4 + (latency === 0 ? 2 : 0) + (scale > 1 ? 1 : 0)},10`);
    }
    const trials = parseTrialsCsv(rows.join('\n'), 'pilot.csv');
    if (!trials.ok) throw new Error('trials');
    const spread = playerSpreadFromTrials(trials.value, ['intercept', 'latency', 'log_scale'], 'logit');
    expect(spread.ok).toBe(false);
    if (spread.ok) return;
    expect(spread.issues[0]).toMatchObject({ code: 'separation', location: 'pilot.csv:player' });
    expect(spread.issues[0]?.message).toContain('"cove"');
  });

  it('refuses trials without a player column', () => {
    const trials = parseTrialsCsv('latency_ms,scale,difficulty,hits,attempts\n0,1,a,5,10\n100,1.5,a,4,10\n', 'pilot.csv');
    if (!trials.ok) throw new Error('trials');
    expect(playerSpreadFromTrials(trials.value, ['intercept', 'latency'], 'logit')).toMatchObject({ ok: false, issues: [{ code: 'missing_column', location: 'pilot.csv:player' }] });
  });
});
