import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { balanceLobby } from '../../src/solver/balance-lobby.js';
import { defaultRules } from '../../src/solver/rules.js';
import { solveSampledScalesInto, solveScalesInto } from '../../src/solver/solve-scales-into.js';
import { compiled, lobbyLatenciesArbitrary, lobbyOf, modelSpecArbitrary, rulesArbitrary, rulesOf } from './arbitraries.js';

// The reference here is balanceLobby, whose invariants test/solver/balance-lobby.test.ts checks against
// independent definitions; the bulk paths must give the same scales.
describe('solveScalesInto()', () => {
  it('property (300 seeded runs): writes the scales balanceLobby gives the same point-latency lobby, to 1e-12', () => {
    fc.assert(
      fc.property(modelSpecArbitrary, rulesArbitrary, lobbyLatenciesArbitrary(true), fc.double({ min: 0, max: 2, noNaN: true }), (spec, input, latencies, difficulty) => {
        const model = compiled(spec);
        const rules = rulesOf(input);
        const reference = balanceLobby(lobbyOf(latencies, undefined, difficulty), model, rules);
        const out = new Float64Array(latencies.length);
        const bulk = solveScalesInto(model, difficulty, Float64Array.from(latencies as number[]), rules, out);
        expect(bulk.status === 'rejected').toBe(reference.status === 'rejected');
        if (reference.status === 'rejected' || bulk.status === 'rejected') return;
        expect(bulk.target).toBeCloseTo(reference.target, 14);
        reference.players.forEach((player, index) => expect(Math.abs((out[index] as number) - player.scale)).toBeLessThanOrEqual(1e-12 * player.scale));
      }),
      { seed: 4301, numRuns: 300 },
    );
  });

  it('refuses an output array of the wrong length', () => {
    expect(() => solveScalesInto(model, 1, new Float64Array(3), rulesOf({}), new Float64Array(2))).toThrow(RangeError);
  });

  // Before: NaN read as an ineligible player (scale 1, status solved), -50 as a better latency than 0, Infinity as a NaN target.
  it.each([Number.NaN, Infinity, -Infinity, -50, 60_000.5])('rejects a latency of %s, naming its index, and leaves 1 in every entry of out', (bad) => {
    const out = new Float64Array([7, 7, 7]);
    const result = solveScalesInto(model, 1, new Float64Array([20, bad, 40]), rulesOf({}), out);
    expect(result).toEqual({ status: 'rejected', issues: [expect.objectContaining({ code: 'out_of_range', location: 'latencies[1]' })] });
    expect(Array.from(out)).toEqual([1, 1, 1]);
  });

  it('rejects a model or rules that were not compiled, and a numeric difficulty that is not finite, instead of failing inside', () => {
    const out = new Float64Array(2);
    const latencies = new Float64Array([20, 40]);
    expect(solveScalesInto({} as typeof model, 1, latencies, rulesOf({}), out)).toMatchObject({ status: 'rejected', issues: [{ code: 'uncompiled_model' }] });
    expect(solveScalesInto(model, 1, latencies, { ...defaultRules() }, out)).toMatchObject({ status: 'rejected', issues: [{ code: 'uncompiled_rules' }] });
    expect(solveScalesInto(model, Number.NaN, latencies, rulesOf({}), out)).toMatchObject({ status: 'rejected', issues: [{ code: 'wrong_difficulty' }] });
  });

  it('throws a TypeError naming the argument for arrays that are not Float64Arrays', () => {
    expect(() => solveScalesInto(model, 1, [20, 40] as unknown as Float64Array, rulesOf({}), new Float64Array(2))).toThrow(/`latencies` requires a Float64Array/);
    expect(() => solveScalesInto(model, 1, new Float64Array(2), rulesOf({}), null as unknown as Float64Array)).toThrow(/`out` requires a Float64Array, got null/);
  });
});

const model = compiled({ link: 'logit', form: 'log', intercept: 0.5, latency: -0.01, scale: 1.5, difficulty: 0, interaction: 0 });

describe('solveSampledScalesInto()', () => {
  it('property (200 seeded runs): writes the scales balanceLobby gives players with 8 samples each, for every estimator, to 1e-9', () => {
    fc.assert(
      fc.property(
        modelSpecArbitrary,
        rulesArbitrary,
        fc.array(fc.array(fc.double({ min: 0, max: 300, noNaN: true }), { minLength: 8, maxLength: 8 }), { minLength: 1, maxLength: 24 }),
        (spec, input, samples) => {
          const model = compiled(spec);
          const rules = rulesOf(input);
          const reference = balanceLobby(lobbyOf(samples, undefined, 1), model, rules);
          const out = new Float64Array(samples.length);
          const bulk = solveSampledScalesInto(model, 1, Float64Array.from(samples.flat()), 8, rules, out);
          expect(bulk.status === 'rejected').toBe(reference.status === 'rejected');
          if (reference.status === 'rejected' || bulk.status === 'rejected') return;
          // Pooled samples: both solve by the same Newton iteration to 1e-12 in probability, so scales agree closely.
          reference.players.forEach((player, index) => expect(Math.abs((out[index] as number) - player.scale)).toBeLessThanOrEqual(1e-9 * player.scale));
        },
      ),
      { seed: 4302, numRuns: 200 },
    );
  });

  // Before: the pooled path marked ineligible players with NaN in out and left it there when the solve was rejected.
  it.each(['all_samples', 'median'] as const)('rejects a NaN sample under %s, naming it, with 1 in every entry of out', (estimator) => {
    const out = new Float64Array(2);
    const result = solveSampledScalesInto(model, 1, new Float64Array([20, 22, Number.NaN, 41]), 2, rulesOf({ latency_estimator: estimator }), out);
    expect(result).toMatchObject({ status: 'rejected', issues: [{ code: 'out_of_range', location: 'samples[2]' }] });
    expect(Array.from(out)).toEqual([1, 1]);
  });

  it('leaves 1, not NaN, in out when the pooled solve is rejected after marking ineligible players', () => {
    const out = new Float64Array(2);
    const decreasing = compiled({ link: 'logit', form: 'log', intercept: 0.5, latency: -0.01, scale: 1.5, difficulty: 0, interaction: -0.01 });
    const result = solveSampledScalesInto(decreasing, 1, new Float64Array([200, 210, 400, 410]), 2, rulesOf({ latency_limit_ms: 300 }), out);
    expect(result).toMatchObject({ status: 'rejected', issues: [{ code: 'scale_not_increasing' }] });
    expect(Array.from(out)).toEqual([1, 1]);
  });
});
