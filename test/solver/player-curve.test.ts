import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { linkFor, type LinkName } from '../../src/model/links.js';
import { normalCdf } from '../../src/stats/distributions.js';
import { PROBABILITY_TOLERANCE, curveSet, expectedAtTerm, inverseTerm } from '../../src/solver/player-curve.js';

/**
 * Independent inverse links, written from their published definitions
 * (McCullagh and Nelder 1989, section 4.3.1), not from src/model/links.ts:
 * logistic 1 / (1 + e^-x), probit the standard normal CDF (stdlib's
 * implementation, checked against R's pnorm in test/stats), cloglog 1 - exp(-e^x).
 */
const independentInverse: Record<LinkName, (x: number) => number> = {
  logit: (x) => 1 / (1 + Math.exp(-x)),
  probit: (x) => normalCdf(x),
  cloglog: (x) => 1 - Math.exp(-Math.exp(x)),
};

const line = (base: number, basePerMs: number, scaleSlope: number, scaleSlopePerMs: number) => ({ base, basePerMs, scaleSlope, scaleSlopePerMs });

describe('inverseTerm() with one latency (closed form)', () => {
  it.each<LinkName>(['logit', 'probit', 'cloglog'])('property (300 seeded runs): the independent %s inverse at the returned term gives back the target to 1e-12', (name) => {
    const link = linkFor(name);
    fc.assert(
      fc.property(
        fc.double({ min: -2, max: 2, noNaN: true }),
        fc.double({ min: -0.02, max: 0, noNaN: true }),
        fc.double({ min: 0.2, max: 3, noNaN: true }),
        fc.double({ min: 0, max: 250, noNaN: true }),
        fc.double({ min: 0.02, max: 0.98, noNaN: true }),
        (base, perMs, slope, latency, target) => {
          const curves = curveSet(line(base, perMs, slope, 0.001), [[latency]]);
          const term = inverseTerm(curves, 0, link, target, link.link(target), -50, 50);
          const alpha = base + perMs * latency;
          const beta = slope + 0.001 * latency;
          expect(Math.abs(independentInverse[name](alpha + beta * term) - target)).toBeLessThanOrEqual(1e-12); // published link definition
        },
      ),
      { seed: 4101, numRuns: 300 },
    );
  });

  it('returns the bracket ends when the target lies outside the reachable range', () => {
    const link = linkFor('logit');
    const curves = curveSet(line(0, 0, 1, 0), [[0]]);
    // logistic(-1) = 0.2689 and logistic(1) = 0.7311: 0.1 is below, 0.9 above (definition of the logistic).
    expect(inverseTerm(curves, 0, link, 0.1, link.link(0.1), -1, 1)).toBe(-1);
    expect(inverseTerm(curves, 0, link, 0.9, link.link(0.9), -1, 1)).toBe(1);
  });
});

describe('inverseTerm() with samples (safeguarded Newton)', () => {
  it.each<LinkName>(['logit', 'probit', 'cloglog'])('property (300 seeded runs): the %s average of independent inverses at the returned term is the target to 1e-12', (name) => {
    const link = linkFor(name);
    fc.assert(
      fc.property(
        fc.array(fc.double({ min: 0, max: 300, noNaN: true }), { minLength: 2, maxLength: 40 }),
        fc.double({ min: 0.05, max: 0.95, noNaN: true }),
        (samples, fraction) => {
          const predictor = line(1, -0.01, 1.5, 0.002);
          const curves = curveSet(predictor, [samples]);
          const low = -3;
          const high = 3;
          const average = (term: number) => samples.reduce((sum, latency) => sum + independentInverse[name](predictor.base + predictor.basePerMs * latency + (predictor.scaleSlope + predictor.scaleSlopePerMs * latency) * term), 0) / samples.length;
          // A reachable target: a fraction of the way between E(low) and E(high).
          const target = average(low) + fraction * (average(high) - average(low));
          const term = inverseTerm(curves, 0, link, target, link.link(target), low, high);
          expect(Math.abs(average(term) - target)).toBeLessThanOrEqual(PROBABILITY_TOLERANCE + 1e-15); // published link definition, averaged
        },
      ),
      { seed: 4102, numRuns: 300 },
    );
  });
});

describe('curveSet() and expectedAtTerm()', () => {
  it('average the prediction over each player\'s own samples', () => {
    const predictor = line(0.5, -0.01, 2, -0.004);
    const curves = curveSet(predictor, [[10], [20, 40, 60]]);
    expect(Array.from(curves.offsets)).toEqual([0, 1, 4]);
    const term = Math.log(1.2);
    const expected = [20, 40, 60].reduce((sum, latency) => sum + independentInverse.logit(0.5 - 0.01 * latency + (2 - 0.004 * latency) * term), 0) / 3;
    expect(expectedAtTerm(curves, 1, linkFor('logit'), term)).toBeCloseTo(expected, 15); // logistic definition
    expect(curves.betas[3]).toBeCloseTo(2 - 0.004 * 60, 15); // b0 + b1 x latency, by hand
  });
});
