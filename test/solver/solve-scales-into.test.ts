import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { balanceLobby } from '../../src/solver/balance-lobby.js';
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
    const model = compiled({ link: 'logit', form: 'log', intercept: 0.5, latency: -0.01, scale: 1.5, difficulty: 0, interaction: 0 });
    expect(() => solveScalesInto(model, 1, new Float64Array(3), rulesOf({}), new Float64Array(2))).toThrow(RangeError);
  });
});

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
});
