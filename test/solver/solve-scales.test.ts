import { describe, expect, it } from 'vitest';
import { balanceLobby } from '../../src/solver/balance-lobby.js';
import { searchLimit, softCapped } from '../../src/solver/solve-scales.js';
import { gridValue, indexAtOrBelow, liftIndex, scaleGrid } from '../../src/solver/scale-grid.js';
import { referenceAnswer } from './reference-answer.js';
import { type ModelSpec, compiled, lobbyOf, rulesOf } from './arbitraries.js';

// A log-scale logit model with no interaction: the scale reaching level L at latency l is, by hand,
// s = exp((logit(L) - (0.5 - 0.01 l)) / 1.5).
const spec: ModelSpec = { link: 'logit', form: 'log', intercept: 0.5, latency: -0.01, scale: 1.5, difficulty: 0, interaction: 0 };
const logit = (p: number) => Math.log(p / (1 - p));
const logistic = (x: number) => 1 / (1 + Math.exp(-x));
const needed = (level: number, latency: number) => Math.exp((logit(level) - (0.5 - 0.01 * latency)) / 1.5);
const target = logistic(0.5 - 0.01 * 10);

function solved(latencies: number[], rules: Parameters<typeof rulesOf>[0]) {
  const result = balanceLobby(lobbyOf(latencies), compiled(spec), rulesOf(rules));
  if (result.status === 'rejected') throw new Error(JSON.stringify(result.issues));
  return result;
}

describe('softCapped(), searchLimit() and the scale grid', () => {
  const rules = rulesOf({ scale_cap: 2, soft_cap: { above: 1.2, fraction: 0.5 } });
  it('grant a fraction of the scale above the threshold, then the hard cap', () => {
    expect(softCapped(1.1, rules)).toBe(1.1);
    expect(softCapped(1.6, rules)).toBeCloseTo(1.4, 15); // 1.2 + 0.5 (1.6 - 1.2), by hand
    expect(softCapped(5, rules)).toBe(2);
    expect(searchLimit(rules)).toBeCloseTo(2.8, 15); // 1.2 + (2 - 1.2) / 0.5, by hand
  });
  it('rounds down to the grid, never above the value, and names multiples by their decimals', () => {
    const grid = scaleGrid(0.05, 1, 2);
    expect(gridValue(grid, indexAtOrBelow(grid, 1.37))).toBe(1.35);
    expect(gridValue(grid, indexAtOrBelow(grid, 1.35))).toBe(1.35); // 1.35 / 0.05 = 26.999999999999996 counts as on the grid
    expect(gridValue(grid, 23)).toBe(1.15); // not 1.1500000000000001
    expect(gridValue(scaleGrid(0.3, 0.9, 2), 3)).toBe(0.9);
    expect(scaleGrid(0.3, 0.9, 2).oneIndex).toBe(3); // 0.9 is the last multiple at or below 1
  });
  it('lifts to the smallest multiple at or above largest / ratio', () => {
    const grid = scaleGrid(0.1, 1, 3);
    expect(gridValue(grid, liftIndex(grid, 16, 1.25))).toBe(1.3); // 1.6 / 1.25 = 1.28, up to 1.3
    expect(gridValue(grid, liftIndex(grid, 15, 1.5))).toBe(1); // 1.5 / 1.5 = 1 exactly: no lift
  });
});

describe('solveScales() through balanceLobby(): bindings', () => {
  it('brings everyone to the target with no constraint binding (closed form by hand)', () => {
    const result = solved([10, 40, 80], { scale_cap: 3 });
    expect(result.players.map((player) => player.binding)).toEqual(['none', 'none', 'none']);
    result.players.forEach((player, index) => expect(player.scale).toBeCloseTo(needed(target, [10, 40, 80][index] as number), 12)); // by hand
  });

  it('holds a player at the hard cap and labels them cap', () => {
    const result = solved([10, 200], { scale_cap: 1.5 });
    expect(needed(target, 200)).toBeGreaterThan(1.5);
    expect([result.players[1]?.scale, result.players[1]?.binding]).toEqual([1.5, 'cap']);
  });

  it('grants a fraction above the soft cap and labels them soft_cap', () => {
    const result = solved([10, 80], { scale_cap: 3, soft_cap: { above: 1.2, fraction: 0.5 } });
    const desired = needed(target, 80);
    expect(result.players[1]?.scale).toBeCloseTo(1.2 + 0.5 * (desired - 1.2), 12); // soft-cap rule, by hand
    expect(result.players[1]?.binding).toBe('soft_cap');
  });

  it('keeps the ratio by lifting the smallest scales (leximin), labelled ratio', () => {
    const result = solved([10, 40, 100], { scale_cap: 3, max_scale_ratio: 1.2 });
    const largest = needed(target, 100);
    expect(result.players[2]?.scale).toBeCloseTo(largest, 12); // the worst-off still reaches the target
    expect(result.players[0]?.scale).toBeCloseTo(largest / 1.2, 12); // lifted to largest / ratio, by hand
    expect(result.players[0]?.binding).toBe('ratio');
    expect(result.players[2]?.binding).toBe('none');
  });

  it('water-fills a budget: a common level below the target that spends exactly the budget', () => {
    const result = solved([10, 60, 110], { scale_cap: 3, assistance_budget: 0.6 });
    expect(result.level).toBeLessThan(result.target);
    expect(result.summary.assistance).toBeCloseTo(0.6, 12);
    // Everyone who needs help sits at the same level (common practice: water-filling equalises the level).
    expect(result.players[1]?.expected_after).toBeCloseTo(result.level, 12);
    expect(result.players[2]?.expected_after).toBeCloseTo(result.level, 12);
    expect(result.players.slice(1).map((player) => player.binding)).toEqual(['budget', 'budget']);
    // By hand: the level L solving needed(L, 60) + needed(L, 110) - 2 = 0.6 (both need help at that level).
    let low = 0.3;
    let high = target;
    for (let iteration = 0; iteration < 200; iteration += 1) {
      const middle = (low + high) / 2;
      if (needed(middle, 60) + needed(middle, 110) - 2 > 0.6) high = middle;
      else low = middle;
    }
    expect(result.level).toBeCloseTo(low, 12);
  });

  it('rounds down to the grid without a walk: a worse-connected player may end above a better-connected one by one step at most', () => {
    const result = solved([10, 33, 36, 90], { scale_cap: 3, quantisation_step: 0.1 });
    result.players.forEach((player, index) => {
      const need = needed(target, [10, 33, 36, 90][index] as number);
      expect(player.scale).toBeCloseTo(Math.floor(need * 10 + 1e-9) / 10, 12); // largest multiple of 0.1 at or below the need, by hand
    });
    expect(result.players[3]?.binding).toBe('quantisation');
    const ordering = balanceLobby(lobbyOf([10, 33, 36, 90]), compiled(spec), rulesOf({ scale_cap: 3, quantisation_step: 0.1 }), { views: { ordering: true } });
    if (ordering.status === 'rejected') throw new Error('rejected');
    expect(ordering.views?.ordering?.largest_overtake).toBeLessThanOrEqual(ordering.views?.ordering?.step_gain ?? -1);
  });

  it('pays a cheaper step across 1 after a full step is out of reach (floor 0.9, step 0.3: 0.9 -> 1.2 costs 0.2)', () => {
    // Far (140 ms) is worst off: its crossing step (0.2) and next step (0.3) come first; 0.45 pays the crossing and
    // leaves 0.25, short of far's next step but enough for near's crossing step.
    const latencies = [10, 60, 140];
    const rules = rulesOf({ scale_floor: 0.9, scale_cap: 3, quantisation_step: 0.3, assistance_budget: 0.45 });
    const result = solved(latencies, { scale_floor: 0.9, scale_cap: 3, quantisation_step: 0.3, assistance_budget: 0.45 });
    const reference = referenceAnswer(spec, 0, latencies.map((latency, index) => ({ id: `p00${index}`, latencies: [latency] })), rules, result.target);
    result.players.forEach((player, index) => expect(player.scale).toBeCloseTo(reference.scales[index] as number, 12)); // enumeration
    expect(result.players.map((player) => player.scale)).toEqual([0.9, 1.2, 1.2]);
  });

  it('refuses a budget smaller than the floor costs, with a code', () => {
    const result = balanceLobby(lobbyOf([10, 20]), compiled(spec), rulesOf({ scale_floor: 1.5, scale_cap: 2, assistance_budget: 0.5 }));
    expect(result.status).toBe('rejected');
    if (result.status === 'rejected') expect(result.issues[0]?.code).toBe('budget_below_floor');
  });

  it('labels a player held above the target by the floor as floor', () => {
    const result = solved([10, 20], { scale_floor: 1.2, scale_cap: 2 });
    expect(result.players.map((player) => player.binding)).toEqual(['floor', 'floor']);
  });
});

describe('solveScales() regression cases found by the property sweeps', () => {
  it('does not refuse a zero budget when the best-connected player needs nothing (rounding at the floor)', () => {
    const raw: ModelSpec = { link: 'logit', form: 'raw', intercept: 0, latency: -0.002, scale: 0.3, difficulty: 0, interaction: 0 };
    const result = balanceLobby(lobbyOf([[0]], ['red'], 0), compiled(raw), rulesOf({ scale_cap: 1.0000000000000002, assistance_budget: 0, latency_estimator: { percentile: 0 } }));
    expect(result.status).toBe('balanced');
  });

  it('does not refuse a zero budget near probability 1 under cloglog (rounding of the round trip)', () => {
    const nearOne: ModelSpec = { link: 'cloglog', form: 'raw', intercept: 0, latency: -0.002, scale: 2.8750053313738495, difficulty: 0, interaction: 0 };
    const result = balanceLobby(lobbyOf([[0]], ['red'], 0), compiled(nearOne), rulesOf({ scale_cap: 1.0000000000001048, assistance_budget: 0, soft_cap: { above: 1.0000000000000053, fraction: 0.1 }, target: { kind: 'reference_latency', latency_ms: 0 } }));
    expect(result.status).toBe('balanced');
  });

  it('solves a sampled player one ulp below the target without running off to an enormous cap', () => {
    const raw: ModelSpec = { link: 'logit', form: 'raw', intercept: 0, latency: -0.002, scale: 0.877854374366149, difficulty: 0, interaction: 0 };
    const result = balanceLobby(lobbyOf([0, [0, 0, 0, 0, 0, 0, 0]]), compiled(raw), rulesOf({ scale_cap: 1e300 }));
    if (result.status === 'rejected') throw new Error('rejected');
    for (const player of result.players) expect(Math.abs(player.expected_after - result.target)).toBeLessThanOrEqual(1e-9);
  });
});
